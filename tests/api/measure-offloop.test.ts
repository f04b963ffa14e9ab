/**
 * Measurements never stall the server: the engine runs on a worker-thread
 * pool, requests beyond the work budget are refused naming the field and the
 * largest allowed draws, stored buildups' numbers are cached per version of
 * everything they depend on, and identical concurrent requests share one
 * computation.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { Section, SectionCalibration } from '../../server/models/section';
import { measure, MeasureInputError } from '../../shared/measure/index';
import { MEASURE_MAX_BUILDUPS, MEASURE_WORK_BUDGET } from '../../shared/schemas/measure-limits';
import { closeMeasurePool, measurePoolStats, measureThreads } from '../../server/measure/pool';
import { healthWhileHeavy } from '../helpers/off-loop';
import { ROOT_DIR } from '../../server/config';
import fixture from '../fixtures/synthetic/tb-11-kestrel-knoll.json';

let t: TestApp;
let demoProjectId: number;

/** The Kestrel Knoll measurement fixture (TWT, buildup velocity model with ranges): 48 vertices, 6 flanks. */
const knollFile = JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'tests/fixtures/measure/in/kestrel-knoll-twt-buildup-ranges.json'), 'utf8'));
const { options: _fixtureOptions, ...knoll } = knollFile;
const copies = (n: number) => ({ ...knoll, buildups: Array.from({ length: n }, (_, i) => ({ ...knoll.buildups[0], name: `Knoll copy ${i + 1}` })) });

/** Geometry one Monte Carlo draw converts, counted here by hand: every vertex, plus 257 resampled points per flank (shared/measure/flank.ts). */
function perDraw(it: { buildups: { base: unknown[]; cycles: { top: unknown[]; flankLeft?: unknown[] | null; flankRight?: unknown[] | null }[] }[] }) {
  let n = 0;
  for (const b of it.buildups) {
    n += b.base.length;
    for (const c of b.cycles) {
      n += c.top.length;
      for (const f of [c.flankLeft, c.flankRight]) if (f && f.length >= 2) n += f.length + 257;
    }
  }
  return n;
}

async function makeSection(projectId: number) {
  const s = await Section.create({
    projectId,
    title: 'TB-11 measure copy',
    lineName: 'TB-11',
    survey: 'TB-2024',
    verticalDomain: 'twt_ms',
    status: 'ready',
    width: fixture.width,
    height: fixture.height,
    sourceFormat: 'png',
    sourceBytes: 1,
    storageKey: crypto.randomBytes(12).toString('hex'),
    uploadedById: null,
  });
  await SectionCalibration.create({ sectionId: s.id, version: 1, ties: fixture.ties as never, fit: {}, createdBy: null });
  return s.id;
}

const px = fixture.pixelGeometry.buildups[0];
const geometry = { base: px.base, cycles: px.cycles, terminations: px.terminations, topIsDrowningSurface: px.topIsDrowningSurface };

/** What the engine gives for the stored buildup under the given ties and velocity (the server must give the same). */
function engineFor(name: string, g: typeof geometry, ties: unknown, velocity: unknown, options?: unknown) {
  const it = { ...fixture.pixelGeometry, calibration: ties, velocity, buildups: [{ ...fixture.pixelGeometry.buildups[0], ...g, name }] };
  return JSON.parse(JSON.stringify(measure(it, options)));
}

beforeAll(async () => {
  t = await createTestApp();
  const list = await request(t.app).get('/api/projects').set(bearer(await t.token('admin')));
  demoProjectId = list.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
});
afterAll(async () => t?.close());

describe('POST /api/measure: work budget', () => {
  it('refuses 20 Kestrel Knoll copies at 100,000 draws with 422 naming options.draws and the largest allowed draws', async () => {
    const tok = await t.token('reviewer');
    const many = copies(20);
    const maxDraws = Math.floor(MEASURE_WORK_BUDGET / perDraw(many));
    const started = measurePoolStats().started;
    const r = await request(t.app).post('/api/measure').set(bearer(tok)).send({ interpretation: many, options: { draws: 100000 } });
    expect(r.status).toBe(422);
    expect(r.body.code).toBe('work_too_large');
    expect(r.body.message).toMatch(/^options\.draws: /);
    expect(r.body.message).toContain(`at most ${maxDraws.toLocaleString('en')} draws`);
    expect(r.body.details).toEqual([{ path: 'options.draws', message: expect.any(String) }]);
    // refused before any worker was asked
    expect(measurePoolStats().started).toBe(started);
    // one draw more than the largest allowed is refused as well
    const over = await request(t.app).post('/api/measure').set(bearer(tok)).send({ interpretation: many, options: { draws: maxDraws + 1 } });
    expect(over.status).toBe(422);
  });

  it('lets the demo-sized input through at the default 1,000 draws with the same numbers as measure()', async () => {
    const r = await request(t.app).post('/api/measure').set(bearer(await t.token('reviewer'))).send({ interpretation: knoll });
    expect(r.status).toBe(200);
    expect(r.body).toEqual(JSON.parse(JSON.stringify(measure(knoll))));
    expect(r.body.buildups[0].ranges).not.toBeNull();
  });

  it(`refuses more than ${MEASURE_MAX_BUILDUPS} buildups in one request: 400 naming interpretation.buildups`, async () => {
    const r = await request(t.app)
      .post('/api/measure')
      .set(bearer(await t.token('reviewer')))
      .send({ interpretation: { ...copies(MEASURE_MAX_BUILDUPS + 1), velocity: { kind: 'constant', v: 3000 } } });
    expect(r.status).toBe(400);
    expect(r.body.message).toMatch(new RegExp(`^interpretation\\.buildups: at most ${MEASURE_MAX_BUILDUPS} buildups`));
  });

  it('engine refusals come back from the worker as the same 400 with path and issues', async () => {
    const tok = await t.token('reviewer');
    const cases: [unknown, unknown][] = [
      [knoll, { draws: 3 }],
      [{ ...knoll, calibration: [{ px: [0, 0], world: [0, 0] }, { px: [1, 1], world: [1, 1] }, { px: [2, 2], world: [2, 2] }], coordinates: 'pixels' }, undefined],
      [{ ...knoll, buildups: [{ ...knoll.buildups[0], cycles: [{ ...knoll.buildups[0].cycles[0], marginLeft: [-1e6, 0] }] }] }, undefined],
    ];
    for (const [interpretation, options] of cases) {
      let direct: MeasureInputError | null = null;
      try {
        measure(interpretation, options);
      } catch (e) {
        direct = e as MeasureInputError;
      }
      expect(direct).toBeInstanceOf(MeasureInputError);
      const r = await request(t.app).post('/api/measure').set(bearer(tok)).send({ interpretation, options });
      expect(r.status).toBe(400);
      expect(r.body.code).toBe('validation_failed');
      expect(r.body.message).toBe(direct!.message);
      expect(r.body.details.map((d: { path: string; message: string }) => `${d.path}: ${d.message}`)).toEqual(direct!.issues);
    }
  });

  it('a heavy allowed measurement runs off the event loop: /api/health answers while it runs; the numbers equal measure()', async () => {
    const tok = await t.token('reviewer');
    const many = copies(20);
    const draws = Math.floor(MEASURE_WORK_BUDGET / perDraw(many)); // the largest this input may ask for
    const { order, heavy: h, health } = await healthWhileHeavy(t.app, () => request(t.app).post('/api/measure').set(bearer(tok)).send({ interpretation: many, options: { draws } }));
    expect(health.status).toBe(200);
    expect(h.status).toBe(200);
    expect(order).toEqual(['health', 'heavy']);
    expect(h.body).toEqual(JSON.parse(JSON.stringify(measure(many, { draws }))));
  });
});

describe('GET /api/buildups/:id/measurements: budget and cache', () => {
  let sectionId: number;
  let buildupId: number;
  let version: number;

  beforeAll(async () => {
    sectionId = await makeSection(demoProjectId);
    const interp = await t.token('interpreter');
    const c = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Kestrel Knoll' });
    const s = await request(t.app).put(`/api/buildups/${c.body.id}`).set(bearer(interp)).send({ version: 0, geometry });
    expect(s.status).toBe(200);
    buildupId = c.body.id;
    version = s.body.version;
  });

  it('refuses a reviewer asking 100,000 draws on the TB-11 knoll with 422 naming draws and the largest allowed value', async () => {
    const started = measurePoolStats().started;
    const r = await request(t.app).get(`/api/buildups/${buildupId}/measurements?draws=100000`).set(bearer(await t.token('reviewer')));
    expect(r.status).toBe(422);
    expect(r.body.code).toBe('work_too_large');
    expect(r.body.message).toMatch(/^draws: /);
    const maxDraws = Math.floor(MEASURE_WORK_BUDGET / perDraw({ buildups: [geometry] }));
    expect(r.body.message).toContain(`at most ${maxDraws.toLocaleString('en')} draws`);
    expect(measurePoolStats().started).toBe(started);
  });

  it('serves repeated and concurrent identical requests from one computation; a save, a new calibration and a velocity change give fresh numbers', async () => {
    const interp = await t.token('interpreter');
    const reviewer = await t.token('reviewer');
    const url = `/api/buildups/${buildupId}/measurements`;
    const velocity0 = (await request(t.app).get(`/api/sections/${sectionId}/velocity`).set(bearer(interp))).body.velocity;
    let ties: unknown = fixture.ties;
    let g = geometry;
    let velocity = velocity0;

    // two concurrent identical requests, then a third: one computation
    let s0 = measurePoolStats().started;
    const [a, b] = await Promise.all([request(t.app).get(url).set(bearer(reviewer)), request(t.app).get(url).set(bearer(interp))]);
    const again = await request(t.app).get(url).set(bearer(reviewer));
    expect(measurePoolStats().started - s0).toBe(1);
    const first = engineFor('Kestrel Knoll', g, ties, velocity);
    for (const r of [a, b, again]) {
      expect(r.status).toBe(200);
      expect(r.body).toEqual(first);
    }
    // other options are another entry
    s0 = measurePoolStats().started;
    const opt = await request(t.app).get(`${url}?aggradingToleranceDeg=30`).set(bearer(reviewer));
    expect(opt.body).toEqual(engineFor('Kestrel Knoll', g, ties, velocity, { aggradingToleranceDeg: 30 }));
    expect(measurePoolStats().started - s0).toBe(1);

    // a save (base moved 40 px deeper): fresh numbers
    g = { ...geometry, base: geometry.base.map(([u, v]) => [u, v + 40]) };
    const saved = await request(t.app).put(`/api/buildups/${buildupId}`).set(bearer(interp)).send({ version, geometry: g });
    expect(saved.status).toBe(200);
    version = saved.body.version;
    const afterSave = await request(t.app).get(url).set(bearer(reviewer));
    expect(afterSave.body).toEqual(engineFor('Kestrel Knoll', g, ties, velocity));
    expect(afterSave.body.buildups[0].heightM).toBeGreaterThan(first.buildups[0].heightM);

    // a new calibration (x stretched by 1.25): fresh numbers
    ties = fixture.ties.map((tie) => ({ px: tie.px, world: [tie.world[0] * 1.25, tie.world[1]] }));
    const cal = await request(t.app).put(`/api/sections/${sectionId}/calibration`).set(bearer(interp)).send({ ties });
    expect(cal.status, JSON.stringify(cal.body)).toBe(201);
    const afterCal = await request(t.app).get(url).set(bearer(reviewer));
    expect(afterCal.body).toEqual(engineFor('Kestrel Knoll', g, ties, velocity));
    expect(afterCal.body.buildups[0].baseWidthM).not.toBeCloseTo(afterSave.body.buildups[0].baseWidthM, 3);

    // a velocity change: fresh numbers; changing it again within the same millisecond is still seen (the model is in the key)
    for (const carbonate of [5200, 3900]) {
      velocity = { ...velocity0, carbonate: { v: carbonate } };
      const put = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity });
      expect(put.status).toBe(200);
      const afterVel = await request(t.app).get(url).set(bearer(reviewer));
      expect(afterVel.body).toEqual(engineFor('Kestrel Knoll', g, ties, velocity));
    }

    // and the earlier state is not served for the new one: going back to the first velocity gives those numbers again
    velocity = velocity0;
    await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity });
    const back = await request(t.app).get(url).set(bearer(reviewer));
    expect(back.body).toEqual(afterCal.body);
  });
});

describe('pool queue bound', () => {
  it('answers 503 measure_busy when more measurements wait than MEASURE_QUEUE allows', async () => {
    const saved = { threads: process.env.MEASURE_THREADS, queue: process.env.MEASURE_QUEUE };
    await closeMeasurePool();
    process.env.MEASURE_THREADS = '1';
    process.env.MEASURE_QUEUE = '1';
    try {
      const tok = await t.token('reviewer');
      const body = { interpretation: knoll, options: { draws: 20000, seed: 'queue' } };
      const rs = await Promise.all(Array.from({ length: 4 }, () => request(t.app).post('/api/measure').set(bearer(tok)).send(body)));
      const statuses = rs.map((r) => r.status).sort();
      expect(statuses).toContain(200);
      expect(statuses).toContain(503);
      for (const r of rs.filter((x) => x.status === 503)) expect(r.body.code).toBe('measure_busy');
    } finally {
      await closeMeasurePool();
      for (const [k, v] of [['MEASURE_THREADS', saved.threads], ['MEASURE_QUEUE', saved.queue]] as const) {
        if (v === undefined) delete process.env[k];
        else process.env[k] = v;
      }
    }
  });
});

describe('MEASURE_THREADS', () => {
  it('sets the pool size; unset means the available cores (at least 1); nonsense is refused naming the setting', () => {
    expect(measureThreads({ MEASURE_THREADS: '3' })).toBe(3);
    expect(measureThreads({})).toBeGreaterThanOrEqual(1);
    expect(() => measureThreads({ MEASURE_THREADS: '0' })).toThrow(/^MEASURE_THREADS: /);
    expect(() => measureThreads({ MEASURE_THREADS: 'many' })).toThrow(/^MEASURE_THREADS: /);
  });
});
