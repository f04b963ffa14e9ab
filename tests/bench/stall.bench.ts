/**
 * Stall benchmark: does a heavy measurement hold up other requests?
 *
 *   npx tsx tests/bench/stall.bench.ts [--samples=200]     (or `npm run bench -- stall`)
 *
 * Setup (all real): a throwaway PostgreSQL cluster in a temp folder, the
 * Cayline server booted on it and listening (server/index.ts, demo accounts
 * seeded), a generated 6,000 × 2,000 px section uploaded through the API and
 * tiled by the server's own pyramid job.
 *
 * Measured over HTTP with one client at a time: the latency of
 * `GET /api/health` and of one full-resolution tile GET, first on an idle
 * server, then while ten heavy measurements run (`POST /api/measure`, twenty
 * Kestrel Knoll copies at the largest draws the work budget allows, each
 * about 2 s of one core). Printed: p50 and p97.5 of each, the ratio loaded ÷
 * idle of the p97.5, and the loaded p97.5 against the 100 ms goal; then the
 * same with the pool held to one thread (MEASURE_THREADS=1), which leaves a
 * core to the event loop on this 2-core machine. Never fails on time.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { ROOT_DIR } from '../../server/config';
import { DEMO_PASSWORD, seedDemoUsers } from '../../server/db/seeders/demo';
import { boot } from '../../server/index';
import { closeMeasurePool, measureThreads } from '../../server/measure/pool';
import { MEASURE_WORK_BUDGET, measureWorkOf } from '../../shared/schemas/measure-limits';
import { benchDatabase, benchTmp } from './bench-db';
import { ms, percentile } from './stats';

const args = new Map(
  process.argv.slice(2).map((a) => {
    const [k, v] = a.replace(/^--/, '').split('=');
    return [k, v ?? '1'] as const;
  }),
);
const SAMPLES = Number(args.get('samples') ?? 200);
const HEAVY = 10;
const GOAL_MS = 100;
const log = (m: string) => console.log(`[stall.bench] ${m}`);

async function api<T>(base: string, token: string | null, method: string, p: string, body?: unknown): Promise<T> {
  const r = await fetch(`${base}/api${p}`, {
    method,
    headers: { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...(body !== undefined ? { 'Content-Type': 'application/json' } : {}) },
    body: body !== undefined ? JSON.stringify(body) : undefined,
  });
  const text = await r.text();
  if (!r.ok) throw new Error(`${method} ${p} → ${r.status} ${text.slice(0, 300)}`);
  return (text ? JSON.parse(text) : null) as T;
}

/** A 6,000 × 2,000 greyscale section with dipping reflectors over a mound. */
async function makeSectionPng(w = 6000, h = 2000): Promise<Buffer> {
  const px = Buffer.alloc(w * h);
  for (let u = 0; u < w; u++) {
    const mound = 300 * Math.exp(-(((u - w / 2) / 1000) ** 2));
    for (let v = 0; v < h; v++) {
      const d = v + (v > 600 ? mound * Math.min(1, (v - 600) / 500) : 0);
      const g = 128 + 80 * Math.sin((2 * Math.PI * d) / 30) * (0.6 + 0.4 * Math.sin(d / 200));
      px[v * w + u] = g < 0 ? 0 : g > 255 ? 255 : g;
    }
  }
  return sharp(px, { raw: { width: w, height: h, channels: 1 } }).png({ compressionLevel: 6 }).toBuffer();
}

async function timeGet(url: string, token: string): Promise<number> {
  const t0 = performance.now();
  const r = await fetch(url, { headers: { Authorization: `Bearer ${token}` } });
  await r.arrayBuffer();
  if (!r.ok) throw new Error(`GET ${url} → ${r.status}`);
  return performance.now() - t0;
}

interface Sample {
  health: number[];
  tile: number[];
}

/** Alternate health and tile GETs, one at a time, `n` of each or until `until()` says stop (at least 20 each). */
async function sample(base: string, tileUrl: string, token: string, n: number, until?: () => boolean): Promise<Sample> {
  const out: Sample = { health: [], tile: [] };
  while (out.health.length < n) {
    out.health.push(await timeGet(`${base}/api/health`, token));
    out.tile.push(await timeGet(tileUrl, token));
    if (until && until() && out.health.length >= 20) break;
    await new Promise((r) => setTimeout(r, 10));
  }
  return out;
}

async function phase(label: string, base: string, tileUrl: string, token: string, heavyBody: unknown) {
  await closeMeasurePool(); // the next measurement starts a pool with the current MEASURE_THREADS
  // warm the pool (worker start-up is not what we measure)
  await api(base, token, 'POST', '/measure', { interpretation: (heavyBody as { interpretation: { buildups: unknown[] } }).interpretation, options: { draws: 10 } });
  const idle = await sample(base, tileUrl, token, SAMPLES);
  let done = 0;
  const t0 = performance.now();
  const heavy = Array.from({ length: HEAVY }, () =>
    api(base, token, 'POST', '/measure', heavyBody).then(() => {
      done++;
    }),
  );
  const loaded = await sample(base, tileUrl, token, Number.POSITIVE_INFINITY, () => done === HEAVY);
  await Promise.all(heavy);
  const heavyS = (performance.now() - t0) / 1000;
  console.log(`\n${label}: ${HEAVY} heavy measurements took ${heavyS.toFixed(1)} s; ${loaded.health.length} samples of each while they ran, ${idle.health.length} idle`);
  for (const [name, a, b] of [
    ['GET /api/health', idle.health, loaded.health],
    ['GET one tile   ', idle.tile, loaded.tile],
  ] as const) {
    const i975 = percentile(a, 97.5);
    const l975 = percentile(b, 97.5);
    console.log(
      `  ${name}  idle p50 ${ms(percentile(a, 50))}, p97.5 ${ms(i975)} | loaded p50 ${ms(percentile(b, 50))}, p97.5 ${ms(l975)} | ratio p97.5 loaded ÷ idle ${(l975 / i975).toFixed(2)} | loaded p97.5 ${l975 <= GOAL_MS ? 'within' : 'OVER'} the ${GOAL_MS} ms goal`,
    );
  }
}

async function main() {
  const tmp = benchTmp('stall');
  const cleanups: (() => Promise<void> | void)[] = [];
  try {
    const { databaseUrl, config } = await benchDatabase(tmp, cleanups);
    let projectId: number | null = null;
    const running = await boot({
      databaseUrl,
      listen: true,
      config,
      afterMigrate: async ({ sequelize }) => {
        projectId = (await seedDemoUsers(sequelize)).projectId;
      },
    });
    cleanups.push(() => running.close());
    const base = running.url.replace('localhost', '127.0.0.1');
    log(`server at ${base}; ${os.availableParallelism?.() ?? os.cpus().length} cores, measurement pool of ${measureThreads()} thread(s) by default`);

    const { token } = await api<{ token: string }>(base, null, 'POST', '/auth/login', { email: 'interpreter@tessel.example', password: DEMO_PASSWORD });
    if (!projectId) throw new Error('the demo project was not seeded');
    const png = await makeSectionPng();
    const form = new FormData();
    for (const [k, v] of Object.entries({ title: 'TB-11 stall bench', lineName: 'TB-11', survey: 'TB-2024', verticalDomain: 'twt_ms' })) form.append(k, v);
    form.append('image', new Blob([new Uint8Array(png)], { type: 'image/png' }), 'tb11-stall.png');
    const up = await fetch(`${base}/api/projects/${projectId}/sections`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
    if (up.status !== 202 && up.status !== 201) throw new Error(`upload → ${up.status} ${await up.text()}`);
    const sectionId = ((await up.json()) as { id: number }).id;
    const t0 = Date.now();
    let tiles: { maxLevel: number; levels: { z: number; columns: number; rows: number }[] } | null = null;
    for (;;) {
      const s = await api<{ status: string; failureReason: string | null; tiles: typeof tiles }>(base, token, 'GET', `/sections/${sectionId}`);
      if (s.status === 'ready') {
        tiles = s.tiles;
        break;
      }
      if (s.status === 'failed') throw new Error(`tiling failed: ${s.failureReason}`);
      if (Date.now() - t0 > 5 * 60_000) throw new Error('tiling took more than 5 minutes');
      await new Promise((r) => setTimeout(r, 500));
    }
    const top = tiles!.levels.find((l) => l.z === tiles!.maxLevel)!;
    const tileUrl = `${base}/api/sections/${sectionId}/tiles/${top.z}/${Math.floor(top.columns / 2)}_${Math.floor(top.rows / 2)}.jpg`;
    log(`section ${sectionId} tiled in ${((Date.now() - t0) / 1000).toFixed(1)} s; sampling ${tileUrl.replace(base, '')}`);

    // the heavy request: twenty Kestrel Knoll copies at the largest draws the budget allows
    const knoll = JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'tests/fixtures/measure/in/kestrel-knoll-twt-buildup-ranges.json'), 'utf8'));
    delete knoll.options;
    const interpretation = { ...knoll, buildups: Array.from({ length: 20 }, (_, i) => ({ ...knoll.buildups[0], name: `Knoll copy ${i + 1}` })) };
    const work = measureWorkOf(interpretation);
    const draws = Math.floor(MEASURE_WORK_BUDGET / work.perDraw);
    log(`heavy request: 20 buildups, ${work.vertices} vertices + ${work.flanks} flanks, ${draws} draws (${((work.perDraw * draws) / 1e6).toFixed(0)} M of the ${MEASURE_WORK_BUDGET / 1e6} M work budget); ${HEAVY} at once`);
    const heavyBody = { interpretation, options: { draws } };

    const saved = process.env.MEASURE_THREADS;
    await phase(`pool of ${measureThreads()} thread(s) (default)`, base, tileUrl, token, heavyBody);
    process.env.MEASURE_THREADS = '1';
    await phase('pool of 1 thread (MEASURE_THREADS=1)', base, tileUrl, token, heavyBody);
    if (saved === undefined) delete process.env.MEASURE_THREADS;
    else process.env.MEASURE_THREADS = saved;
  } finally {
    for (const c of cleanups.reverse()) {
      try {
        await c();
      } catch (e) {
        console.error('cleanup:', e);
      }
    }
    fs.rmSync(tmp, { recursive: true, force: true });
  }
}

main().catch((e: unknown) => {
  console.error(e);
  process.exit(1);
});
