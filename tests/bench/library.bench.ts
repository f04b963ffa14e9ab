/**
 * Analogue library benchmark: faceted search and Look-alikes over 100,000 analogues.
 *
 *   npx tsx tests/bench/library.bench.ts [--rows=100000] [--seconds=10] [--rounds=3]     (or `npm run bench -- library`)
 *
 * Setup (all real): a throwaway PostgreSQL cluster in a temp folder, the
 * Cayline server booted on it and listening, 100,000 generated analogues
 * (the demo generator of server/db/seeders/analogues.ts with another seed:
 * profiles, shapes and metric vectors computed as on every write), ANALYZE.
 *
 * Measured with autocannon, 50 connections, from a child process (tests/bench/cannon.mjs):
 * - `GET /api/health/live` (no database, no sign-in): this machine's ceiling, for context;
 * - `GET /api/health` (a bare route answering `SELECT 1`, no sign-in): the baseline;
 * - the faceted search with three facets and one numeric range active
 *   (signed in, so each request also checks the token and reads the user):
 *   (a) the same query repeated — served from the search cache after the
 *   first (one read of the library generation per request);
 *   (b) paging through that search's results (page 1, 2, … on successive
 *   requests): the facet counts come from their own cache, each new page is
 *   one LIMIT query;
 *   (c) a different height range on every request — every request misses the
 *   cache and runs the list query and the one-statement facet counts.
 * The first three runs take turns for `--rounds` rounds (default 3) and the
 * round with the median p97.5 of each is reported: on a shared machine a busy
 * moment then weighs on the baseline and the search alike.
 * Printed: p50 and p97.5 of each, the ratios to the baseline's p97.5, and the
 * goals (≤ 30 ms and ≤ 3× the baseline).
 *
 * One client paging through the same search page after page, forward (each
 * page seeks from the end of the page before) and backward (no earlier page
 * end is known: LIMIT/OFFSET), median, p95 and worst.
 *
 * Look-alikes (one client, 15 requests each, first one dropped): metrics mode
 * (five metrics) and shape mode (64-point profiles), median and worst, against
 * the 200 ms goal. Method: one sequential scan in SQL over the precomputed
 * `metric_vec` / `shape` float8[] columns, ordered by distance, LIMIT k.
 * Never fails on time.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type autocannon from 'autocannon';
import { spawn } from 'node:child_process';
import { DEMO_PASSWORD, seedDemoUsers } from '../../server/db/seeders/demo';
import { generateAnalogues } from '../../server/db/seeders/analogues';
import { handColumns, insertMany } from '../../server/services/analogue.service';
import { Binds, facetCountsSql, listPageStats, whereOf } from '../../server/services/analogue-search.service';
import { forgetGeneration } from '../../server/services/analogue-rows';
import { analogueSearchSchema, searchQueryFromUrl } from '../../shared/schemas/analogues';
import { boot } from '../../server/index';
import { benchDatabase, benchTmp } from './bench-db';
import { ms } from './stats';

const args = new Map(
  process.argv.slice(2).map((a) => {
    const [k, v] = a.replace(/^--/, '').split('=');
    return [k, v ?? '1'] as const;
  }),
);
const ROWS = Number(args.get('rows') ?? 100_000);
const SECONDS = Number(args.get('seconds') ?? 10);
const CONNECTIONS = 50;
const ROUNDS = Number(args.get('rounds') ?? 3);
const log = (m: string) => console.log(`[library.bench] ${m}`);

const SEARCH = '/api/analogues?setting=bank,pinnacle,isolated-platform&factory=tropical&class=aggrading,backstepping,prograding&r.heightM=';

/** autocannon in a child process (tests/bench/cannon.mjs): the load generator gets its own event loop and core time. */
function cannon(url: string, headers: Record<string, string>, vary: { rangeSearch?: string; pages?: { path: string; count: number } } = {}): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [path.join(import.meta.dirname, 'cannon.mjs'), JSON.stringify({ url, headers, connections: CONNECTIONS, seconds: SECONDS, ...vary })], {
      stdio: ['ignore', 'pipe', 'inherit'],
    });
    let out = '';
    child.stdout.on('data', (d: Buffer) => (out += d));
    child.on('error', reject);
    child.on('close', (code) => (code === 0 ? resolve(JSON.parse(out) as autocannon.Result) : reject(new Error(`autocannon exited with ${code}`))));
  });
}

async function main() {
  const tmp = benchTmp('library');
  const cleanups: (() => Promise<void> | void)[] = [];
  try {
    const { databaseUrl, config } = await benchDatabase(tmp, cleanups);
    const running = await boot({
      databaseUrl,
      listen: true,
      config,
      afterMigrate: async ({ sequelize }) => {
        await seedDemoUsers(sequelize);
        const t0 = Date.now();
        for (let at = 0; at < ROWS; at += 10_000) {
          const rows = generateAnalogues(Math.min(10_000, ROWS - at), `library-bench-${at}`).map((v, i) => handColumns({ ...v, name: `${v.name}-${at + i}` }, 'import', null));
          await sequelize.transaction((transaction) => insertMany(rows, transaction, sequelize));
        }
        await sequelize.query('ANALYZE analogues');
        log(`${ROWS} analogues generated and inserted in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
        if (args.has('explain')) {
          // --explain: the plans of one uncached search (list page and facet counts), for index work
          const q = analogueSearchSchema.parse(searchQueryFromUrl(new URLSearchParams(`${SEARCH.split('?')[1]}60..250`)));
          const b = new Binds();
          const list = `SELECT id FROM analogues WHERE ${whereOf(q, b)} ORDER BY lower(name), id LIMIT ${q.pageSize}`;
          const deep = `${list} OFFSET ${400 * q.pageSize}`;
          const fc = facetCountsSql(q);
          for (const [name, sql, bind] of [['list page', list, b.values], ['list page 401', deep, b.values], ['facet counts', fc.sql, fc.bind]] as const) {
            await sequelize.query(sql, { bind: [...bind] }); // warm
            const [plan] = await sequelize.query(`EXPLAIN (ANALYZE, BUFFERS) ${sql}`, { bind: [...bind] });
            log(`plan of the ${name}:\n${(plan as { 'QUERY PLAN': string }[]).map((r) => r['QUERY PLAN']).join('\n')}`);
          }
        }
      },
    });
    cleanups.push(() => running.close());
    const base = running.url.replace('localhost', '127.0.0.1');
    const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: 'interpreter@tessel.example', password: DEMO_PASSWORD }) });
    const { token } = (await login.json()) as { token: string };
    const auth = { Authorization: `Bearer ${token}` };
    const probe = await fetch(`${base}${SEARCH}60..250`, { headers: auth });
    const body = (await probe.json()) as { total: number; facets: Record<string, unknown[]> };
    log(`server at ${base}; ${os.availableParallelism?.() ?? os.cpus().length} cores; search probe: ${probe.status}, ${body.total} of ${ROWS} match, ${Object.keys(body.facets).length} facets`);

    log(`autocannon, ${CONNECTIONS} connections, ${SECONDS} s each; the no-database route, the baseline and the cached search in ${ROUNDS} interleaved rounds (the median round of each is shown, so a busy moment of a shared machine weighs on all three alike)`);
    const rounds: Record<'live' | 'health' | 'cached', autocannon.Result[]> = { live: [], health: [], cached: [] };
    for (let i = 0; i < ROUNDS; i++) {
      rounds.live.push(await cannon(`${base}/api/health/live`, {}));
      rounds.health.push(await cannon(`${base}/api/health`, {}));
      rounds.cached.push(await cannon(`${base}${SEARCH}60..250`, auth));
      log(`round ${i + 1}: p97.5 no database ${ms(rounds.live[i].latency.p97_5)}, baseline ${ms(rounds.health[i].latency.p97_5)}, search (cache) ${ms(rounds.cached[i].latency.p97_5)}`);
    }
    const medianRound = (rs: autocannon.Result[]) => [...rs].sort((a, b) => a.latency.p97_5 - b.latency.p97_5)[Math.floor(rs.length / 2)];
    const live = medianRound(rounds.live);
    const health = medianRound(rounds.health);
    const cached = medianRound(rounds.cached);
    const paged = await cannon(`${base}${SEARCH}60..250`, auth, { pages: { path: `${SEARCH}60..250`, count: Math.max(1, Math.ceil(body.total / 25)) } });
    const fresh = await cannon(`${base}${SEARCH}60..250`, auth, { rangeSearch: SEARCH });
    const row = (name: string, r: autocannon.Result) =>
      log(`${name.padEnd(44)} p50 ${ms(r.latency.p50).padStart(9)}  p97.5 ${ms(r.latency.p97_5).padStart(9)}  ${String(Math.round(r.requests.average)).padStart(6)} req/s  non-2xx ${r.non2xx}  errors ${r.errors}`);
    row('GET /api/health/live (no database)', live);
    row('GET /api/health (SELECT 1, baseline)', health);
    row('search, 3 facets + range, repeated (cache)', cached);
    row('search, 3 facets + range, next page each', paged);
    row('search, 3 facets + range, new range each', fresh);
    const b = health.latency.p97_5;
    log(`ratio p97.5 search (cache) ÷ baseline:    ${(cached.latency.p97_5 / b).toFixed(2)}  (goal ≤ 3; p97.5 ${ms(cached.latency.p97_5)}, goal ≤ 30 ms)`);
    log(`ratio p97.5 search (cache) ÷ no database: ${(cached.latency.p97_5 / live.latency.p97_5).toFixed(2)}  (this machine's floor with ${CONNECTIONS} connections: ${ms(live.latency.p97_5)})`);
    log(`ratio p97.5 search (paging) ÷ baseline:   ${(paged.latency.p97_5 / b).toFixed(2)}  (facets counted once, each page one list query)`);
    log(`ratio p97.5 search (no cache) ÷ baseline: ${(fresh.latency.p97_5 / b).toFixed(2)}  (goal ≤ 3; p97.5 ${ms(fresh.latency.p97_5)}, goal ≤ 30 ms)`);

    // one person paging through the result, page after page: forward each page seeks from the end of the
    // one before (pageEnds); backward no earlier end is known, so each page is LIMIT/OFFSET from the start
    const PAGES = Math.min(400, Math.ceil(body.total / 25));
    for (const [name, order] of [
      ['forward (seek from the last page end)', Array.from({ length: PAGES }, (_, i) => i + 1)],
      ['backward (OFFSET from the start)', Array.from({ length: PAGES }, (_, i) => PAGES - i)],
    ] as const) {
      forgetGeneration();
      const seeks = listPageStats.seeks;
      const times: number[] = [];
      for (const n of order) {
        const t0 = performance.now();
        const r = await fetch(`${base}${SEARCH}60..250&page=${n}`, { headers: auth });
        await r.arrayBuffer();
        if (r.status !== 200) throw new Error(`page ${n} → ${r.status}`);
        times.push(performance.now() - t0);
      }
      times.sort((x, y) => x - y);
      log(`one client, pages 1…${PAGES} ${name.padEnd(38)} median ${ms(times[Math.floor(times.length / 2)])}, p95 ${ms(times[Math.floor(times.length * 0.95)])}, worst ${ms(times[times.length - 1])} (${listPageStats.seeks - seeks} pages seeked)`);
    }

    // Look-alikes, one client
    const [some] = ((await (await fetch(`${base}/api/analogues?pageSize=1&facets=0`, { headers: auth })).json()) as { items: { id: number }[] }).items;
    for (const mode of ['metrics', 'shape'] as const) {
      const times: number[] = [];
      let compared = 0;
      for (let i = 0; i < 15; i++) {
        const t0 = performance.now();
        const r = await fetch(`${base}/api/analogues/look-alikes`, { method: 'POST', headers: { ...auth, 'Content-Type': 'application/json' }, body: JSON.stringify({ from: { analogueId: some.id }, mode, k: 10 }) });
        const j = (await r.json()) as { compared: number };
        if (r.status !== 200) throw new Error(`look-alikes ${mode} → ${r.status} ${JSON.stringify(j)}`);
        compared = j.compared;
        if (i > 0) times.push(performance.now() - t0);
      }
      times.sort((x, y) => x - y);
      log(`Look-alikes ${mode.padEnd(7)} over ${compared} analogues: median ${ms(times[Math.floor(times.length / 2)])}, worst ${ms(times[times.length - 1])} (goal ≤ 200 ms)`);
    }
  } finally {
    for (const f of cleanups.reverse()) await f();
    fs.rmSync(tmp, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e);
    process.exit(1);
  },
);
