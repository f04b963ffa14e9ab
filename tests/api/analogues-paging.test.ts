/**
 * Library pages served by seeking from the end of an earlier page
 * (analogue-search.service.ts `listPage`) hold exactly the rows that
 * `LIMIT … OFFSET …` over the same order gives, for every sort, with ties in
 * the sort key, NULL keys (sorted last) and pages asked for out of order.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { QueryTypes } from 'sequelize';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { ctx } from '../../server/context';
import { generateAnalogues } from '../../server/db/seeders/analogues';
import { handColumns, insertMany } from '../../server/services/analogue.service';
import { forgetGeneration, pageEnds } from '../../server/services/analogue-rows';
import { listPageStats, searchBody } from '../../server/services/analogue-search.service';
import { analogueSearchSchema, searchQueryFromUrl } from '../../shared/schemas/analogues';

let t: TestApp;
let token: string;
const N = 143;
const SIZE = 10;
const PAGES = Math.ceil(N / SIZE);

beforeAll(async () => {
  t = await createTestApp();
  token = await t.token('interpreter');
  const sequelize = ctx().sequelize;
  await sequelize.query('DELETE FROM analogues');
  const rows = generateAnalogues(N, 'paging-ties').map((v, i) => {
    const m = { ...v.metrics } as Record<string, number | undefined>;
    m.heightM = i % 9 === 0 ? undefined : 50 * (i % 6); // ties, and some without a height
    return handColumns(
      {
        ...v,
        name: `${i % 2 ? 'TIE' : 'tie'} Reef ${i % 7}-${i % 3 === 0 ? 'a' : i}`, // equal lower(name) for several rows
        metrics: m as typeof v.metrics,
        profile: i % 9 === 0 ? undefined : v.profile, // the height would otherwise come from the profile
        ageMa: i % 5 === 0 ? undefined : Math.round(v.ageMa ?? 0), // ties and NULLs
        icsUnit: i % 5 === 0 ? undefined : v.icsUnit, // (the age would otherwise come from the stage)
      },
      'import',
      null,
    );
  });
  await sequelize.transaction((transaction) => insertMany(rows, transaction, sequelize));
  forgetGeneration();
});
afterAll(async () => t?.close());

const SORTS: { query: string; order: string }[] = [
  { query: 'sort=name', order: 'lower(name) ASC, id' },
  { query: 'sort=name&dir=desc', order: 'lower(name) DESC, id' },
  { query: 'sort=heightM', order: 'height_m ASC NULLS LAST, id' },
  { query: 'sort=heightM&dir=desc', order: 'height_m DESC NULLS LAST, id' },
  { query: 'sort=ageMa', order: 'age_ma ASC NULLS LAST, id' },
  { query: 'sort=ageMa&dir=desc', order: 'age_ma DESC NULLS LAST, id' },
  { query: 'sort=updatedAt&dir=desc', order: 'updated_at DESC, id' },
  { query: 'sort=relevance', order: 'lower(name), id' },
];

async function expected(order: string): Promise<number[]> {
  const rows = await ctx().sequelize.query<{ id: number }>(`SELECT id FROM analogues WHERE status = 'accepted' ORDER BY ${order}`, { type: QueryTypes.SELECT });
  return rows.map((r) => r.id);
}

async function page(query: string, n: number): Promise<number[]> {
  const r = await request(t.app).get(`/api/analogues?${query}&pageSize=${SIZE}&page=${n}&facets=0`).set(bearer(token));
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body.items.map((x: { id: number }) => x.id);
}

describe('paging by seeking from known page ends', () => {
  it('has ties and NULLs to get right', async () => {
    const [s] = await ctx().sequelize.query<{ names: number; heights: number; noHeight: number; noAge: number }>(
      `SELECT count(DISTINCT lower(name))::int AS names, count(DISTINCT height_m)::int AS heights,
              count(*) FILTER (WHERE height_m IS NULL)::int AS "noHeight", count(*) FILTER (WHERE age_ma IS NULL)::int AS "noAge" FROM analogues`,
      { type: QueryTypes.SELECT },
    );
    expect(s.names).toBeLessThan(N);
    expect(s.heights).toBeLessThan(10);
    expect(s.noHeight).toBeGreaterThan(SIZE); // the NULL tail spans more than one page
    expect(s.noAge).toBeGreaterThan(SIZE);
  });

  for (const { query, order } of SORTS) {
    it(`${query}: pages forward, out of order and backward equal LIMIT/OFFSET`, async () => {
      const all = await expected(order);
      expect(all).toHaveLength(N);
      const walks = [
        Array.from({ length: PAGES }, (_, i) => i + 1),
        [1, 4, 2, 3, 8, 5, 15, 6, 7, 9, 12, 10, 11, 13, 14],
        Array.from({ length: PAGES }, (_, i) => PAGES - i),
      ];
      for (const walk of walks) {
        forgetGeneration(); // no cached answers, no known page ends
        const seeks = listPageStats.seeks;
        for (const n of walk) expect(await page(query, n), `page ${n}`).toEqual(all.slice((n - 1) * SIZE, n * SIZE));
        if (walk === walks[0]) expect(listPageStats.seeks - seeks).toBeGreaterThan(PAGES / 2);
      }
    });
  }

  it('pages asked for all at once wait for the page before and seek from its end', async () => {
    const all = await expected('height_m DESC NULLS LAST, id');
    const actor = { id: 1, role: 'interpreter' as const };
    const q = (n: number) => analogueSearchSchema.parse(searchQueryFromUrl(new URLSearchParams(`sort=heightM&dir=desc&pageSize=${SIZE}&page=${n}&facets=0`)));
    const ids = (json: Buffer) => (JSON.parse(json.toString('utf8')) as { items: { id: number }[] }).items.map((x) => x.id);
    forgetGeneration();
    expect(ids((await searchBody(actor, q(1))).json)).toEqual(all.slice(0, SIZE)); // (reads the generation once)
    const adjacent = listPageStats.adjacent;
    // pages 2…15 asked for in one go, before any of them has an answer
    const bodies = await Promise.all(Array.from({ length: PAGES - 1 }, (_, i) => searchBody(actor, q(i + 2))));
    bodies.forEach((body, i) => expect(ids(body.json), `page ${i + 2}`).toEqual(all.slice((i + 1) * SIZE, (i + 2) * SIZE)));
    // each waited for the page before it and sought from its end; only the page across the NULL boundary
    // (heights run out within it) is read with OFFSET; without the wait, all but page 2 skip from page 1's end
    expect(listPageStats.adjacent - adjacent).toBe(PAGES - 2);
  });

  it('ranks by relevance with OFFSET only (no sort key to seek on)', async () => {
    forgetGeneration();
    const seeks = listPageStats.seeks;
    const first = await page('sort=relevance&q=reef', 1);
    const second = await page('sort=relevance&q=reef', 2);
    expect(first).toHaveLength(SIZE);
    expect(second.filter((id) => first.includes(id))).toEqual([]);
    expect(listPageStats.seeks).toBe(seeks);
  });

  it('forgets page ends when the library changes', async () => {
    await page('sort=name', 1);
    expect(pageEnds.size).toBeGreaterThan(0);
    const curator = await t.token('curator');
    const [one] = (await request(t.app).get('/api/analogues?pageSize=1&facets=0').set(bearer(token))).body.items;
    const r = await request(t.app).delete(`/api/analogues/${one.id}`).set(bearer(curator));
    expect(r.status).toBe(204);
    expect(pageEnds.size).toBe(0);
    const all = (await expected('lower(name) ASC, id')).filter((id) => id !== one.id);
    for (let n = 1; n <= PAGES; n++) expect(await page('sort=name', n)).toEqual(all.slice((n - 1) * SIZE, n * SIZE));
  });
});
