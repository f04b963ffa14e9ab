/**
 * The invented demo library: about 200 analogues seeded once, the same on
 * every start, in open ocean, searchable and comparable.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { ctx } from '../../server/context';
import { DEMO_ANALOGUE_COUNT, generateAnalogues, seedDemoAnalogues } from '../../server/db/seeders/analogues';
import { shapeDistance, shapePaa } from '../../shared/analogue-shape';

let t: TestApp;
let token: string;

beforeAll(async () => {
  t = await createTestApp();
  token = await t.token('reviewer');
}, 60_000);
afterAll(async () => t?.close());

describe('demo analogues', () => {
  it('are seeded once', async () => {
    expect(await seedDemoAnalogues(ctx().sequelize)).toBe(DEMO_ANALOGUE_COUNT);
    expect(await seedDemoAnalogues(ctx().sequelize)).toBe(0);
    const r = await request(t.app).get('/api/analogues?pageSize=500&facets=1').set(bearer(token));
    expect(r.body.total).toBe(DEMO_ANALOGUE_COUNT);
    expect(r.body.facets.setting.length).toBe(5);
    const names = r.body.items.map((i: { name: string }) => i.name);
    expect(new Set(names).size).toBe(names.length);
    // invented coordinates: open South Pacific, 38–46° S, 120–140° W
    for (const i of r.body.items) {
      expect(i.latitude).toBeGreaterThanOrEqual(-46);
      expect(i.latitude).toBeLessThanOrEqual(-38);
      expect(i.longitude).toBeGreaterThanOrEqual(-140);
      expect(i.longitude).toBeLessThanOrEqual(-120);
      expect(i.period).toBeTruthy();
      expect(i.metrics.heightM).toBeGreaterThan(0);
    }
  });

  it('are the same on every start (seeded random numbers)', () => {
    expect(generateAnalogues(20)).toEqual(generateAnalogues(20));
    expect(generateAnalogues(5, 'other')).not.toEqual(generateAnalogues(5));
  });

  it('answer Look-alikes by metrics and by shape', async () => {
    const first = (await request(t.app).get('/api/analogues?pageSize=1').set(bearer(token))).body.items[0];
    for (const mode of ['metrics', 'shape']) {
      const r = await request(t.app).post('/api/analogues/look-alikes').set(bearer(token)).send({ from: { analogueId: first.id }, mode, k: 5 });
      expect(r.status, JSON.stringify(r.body)).toBe(200);
      expect(r.body.matches).toHaveLength(5);
      const d = r.body.matches.map((m: { distance: number }) => m.distance);
      expect([...d].sort((a, b) => a - b)).toEqual(d);
      expect(r.body.compared + r.body.skipped).toBe(DEMO_ANALOGUE_COUNT - 1);
    }
  });

  it('shape Look-alikes through the lower-bound index equal a brute-force scan', async () => {
    const [rows] = (await ctx().sequelize.query("SELECT id, shape FROM analogues WHERE status = 'accepted' AND shape IS NOT NULL ORDER BY id")) as [{ id: number; shape: number[] }[], unknown];
    for (const q of [rows[0], rows[77], rows[150]]) {
      // the bound really is a lower bound
      for (const r of rows.slice(0, 40)) {
        const lb = Math.hypot(...shapePaa(q.shape).map((v, i) => v - shapePaa(r.shape)[i])) / 8;
        expect(lb).toBeLessThanOrEqual(shapeDistance(q.shape, r.shape) + 1e-12);
      }
      const brute = rows
        .filter((r) => r.id !== q.id)
        .map((r) => ({ id: r.id, d: shapeDistance(q.shape, r.shape) }))
        .sort((a, b) => a.d - b.d || a.id - b.id);
      for (const k of [3, 12, 60]) {
        const res = await request(t.app).post('/api/analogues/look-alikes').set(bearer(token)).send({ from: { analogueId: q.id }, mode: 'shape', k });
        expect(res.status).toBe(200);
        expect(res.body.matches.map((m: { analogue: { id: number } }) => m.analogue.id)).toEqual(brute.slice(0, k).map((b) => b.id));
        res.body.matches.forEach((m: { distance: number }, i: number) => expect(m.distance).toBeCloseTo(brute[i].d, 12));
      }
    }
  });
});
