/**
 * Promotion of a measured buildup into the Analogue library: the snapshot is
 * the engine's own output for the buildup, the depth profile is the engine's
 * depth conversion, a crop of the section is kept, interpreters ask and
 * curators decide, and the record says when the live buildup moved on.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import sharp from 'sharp';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup, SMALL_GEOMETRY, SMALL_TIES } from '../helpers/api-fixtures';
import { binary } from '../helpers/sections';
import { measure } from '../../shared/measure/index';
import { depthProfilesOf, metricsFromMeasurement, shapeOf } from '../../shared/analogue-shape';

let t: TestApp;
let curator: string;
let interpreter: string;
let section: number;
let buildup: { id: number; version: number };

beforeAll(async () => {
  t = await createTestApp();
  curator = await t.token('curator');
  interpreter = await t.token('interpreter');
  const projects = await request(t.app).get('/api/projects').set(bearer(interpreter));
  const demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  section = await readyCalibratedSection(t, interpreter, demoId);
  buildup = await savedBuildup(t, interpreter, section, 'Kestrel Knoll');
}, 120_000);

afterAll(async () => {
  await t?.close();
});

describe('promotion', () => {
  it('keeps the engine numbers, the velocity model, P90/P50/P10, the depth profile and a crop', async () => {
    const r = await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(curator)).send({ setting: 'bank', factory: 'tropical', icsUnit: 'Burdigalian', tags: ['TB-11'] });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const a = r.body;
    expect(a).toMatchObject({ status: 'accepted', source: 'promoted', setting: 'bank', period: 'Neogene', epoch: 'Miocene', stage: 'Burdigalian', tags: ['tb-11'], liveChanged: false });
    expect(a.origin).toMatchObject({ buildupId: buildup.id, buildupVersion: buildup.version, sectionId: section });
    // the same numbers as the measurements route (the engine on the stored buildup)
    const live = await request(t.app).get(`/api/buildups/${buildup.id}/measurements`).set(bearer(curator));
    expect(live.status).toBe(200);
    expect(a.snapshot.format).toBe('cayline.measurements/1');
    expect(a.snapshot.measurement).toEqual(live.body.buildups[0]);
    expect(a.snapshot.velocityUsed).toEqual(live.body.velocityUsed);
    expect(a.engineClass).toBe(live.body.buildups[0].classification);
    expect(a.metrics.heightM).toBe(live.body.buildups[0].heightM);
    expect(a.metrics.areaM2).toBe(live.body.buildups[0].areaM2);
    // the default velocity model has ranges, so P90/P50/P10 are kept (P90 low ≤ P50 ≤ P10 high)
    expect(a.ranges.heightM.p90).toBeLessThanOrEqual(a.ranges.heightM.p50);
    expect(a.ranges.heightM.p50).toBeLessThanOrEqual(a.ranges.heightM.p10);
    expect(a.ranges.heightM).toEqual(live.body.buildups[0].ranges.heightM);
    // the velocity model stored with the snapshot is the section's
    const vel = await request(t.app).get(`/api/sections/${section}/velocity`).set(bearer(curator));
    expect(a.snapshot.velocityModel).toEqual(vel.body.velocity);
    // the depth profile: the engine's depth conversion of the same input (x = 20·u, TWT = 1000 + 10·v)
    const input = {
      coordinates: 'pixels',
      calibration: SMALL_TIES,
      verticalDomain: 'twt_ms',
      velocity: vel.body.velocity,
      buildups: [{ name: 'Kestrel Knoll', ...SMALL_GEOMETRY, cycles: SMALL_GEOMETRY.cycles }],
    };
    const direct = depthProfilesOf(input)[0];
    expect(a.profile.base).toEqual(direct.base);
    expect(a.profile.envelope).toEqual(direct.envelope);
    expect(a.profile.base.map((p: number[]) => p[0])).toEqual([200, 3800]); // u 10 and 190 → 20·u m
    expect(a.shape).toEqual(shapeOf(direct));
    // and the engine run directly gives the same height (a check that the snapshot is not stale or rounded)
    const m = measure(input);
    expect(metricsFromMeasurement(m.buildups[0]).heightM).toBe(a.metrics.heightM);
    // crop of the section
    expect(a.hasCrop).toBe(true);
    const crop = await request(t.app).get(`/api/analogues/${a.id}/crop`).set(bearer(interpreter)).buffer(true).parse(binary);
    expect(crop.status).toBe(200);
    const meta = await sharp(crop.body as Buffer).metadata();
    expect(meta.format).toBe('jpeg');
    expect(meta.width).toBeGreaterThan(50);
  });

  it('Look-alikes from a buildup: its own promoted snapshot is the nearest, at distance 0', async () => {
    for (const mode of ['shape', 'metrics']) {
      const r = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { buildupId: buildup.id }, mode, k: 3 });
      expect(r.status, JSON.stringify(r.body)).toBe(200);
      expect(r.body.query.name).toBe('Kestrel Knoll');
      expect(r.body.matches[0].analogue.name).toBe('Kestrel Knoll');
      expect(r.body.matches[0].distance).toBeCloseTo(0, 9);
    }
    // one cycle has no trajectory: the defaults leave it out, an explicit choice is refused naming it
    const chosen = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { buildupId: buildup.id }, mode: 'metrics', metrics: [{ key: 'trajectoryDeg' }] });
    expect(chosen.status).toBe(422);
    expect(chosen.body.code).toBe('query_lacks_metric');
    expect(chosen.body.message).toContain('trajectoryDeg');
    const outsider = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { buildupId: 999999 }, mode: 'shape' });
    expect(outsider.status).toBe(404);
  });

  it('interpreters ask, curators accept or decline; pending ones stay out of the default search', async () => {
    const ask = await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(interpreter)).send({ name: 'Kestrel Knoll (asked)' });
    expect(ask.status, JSON.stringify(ask.body)).toBe(201);
    expect(ask.body.status).toBe('pending');
    expect(ask.body.requestedBy.name).toBeTruthy();
    const search = await request(t.app).get('/api/analogues?q=asked').set(bearer(interpreter));
    expect(search.body.total).toBe(0);
    const pending = await request(t.app).get('/api/analogues?status=pending').set(bearer(curator));
    expect(pending.body.items.map((i: { id: number }) => i.id)).toContain(ask.body.id);
    expect((await request(t.app).post(`/api/analogues/${ask.body.id}/accept`).set(bearer(interpreter)).send({})).status).toBe(403);
    const ok = await request(t.app).post(`/api/analogues/${ask.body.id}/accept`).set(bearer(curator)).send({});
    expect(ok.status).toBe(200);
    expect(ok.body.status).toBe('accepted');
    const again = await request(t.app).post(`/api/analogues/${ask.body.id}/decline`).set(bearer(curator)).send({ reason: 'late' });
    expect(again.status).toBe(409);
    const second = await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(interpreter)).send({ name: 'Kestrel Knoll (second ask)' });
    const no = await request(t.app).post(`/api/analogues/${second.body.id}/decline`).set(bearer(curator)).send({});
    expect(no.status).toBe(400);
    expect(no.body.details[0].path).toBe('reason');
    const declined = await request(t.app).post(`/api/analogues/${second.body.id}/decline`).set(bearer(curator)).send({ reason: 'Already in the library' });
    expect(declined.body).toMatchObject({ status: 'declined', declineReason: 'Already in the library' });
    expect((await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(await t.token('reviewer'))).send({})).status).toBe(403);
    // Two curators decide the same request at once: one decision stands, the other is told it is no longer pending.
    const third = await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(interpreter)).send({ name: 'Kestrel Knoll (third ask)' });
    const [acc, dec] = await Promise.all([
      request(t.app).post(`/api/analogues/${third.body.id}/accept`).set(bearer(curator)).send({}),
      request(t.app).post(`/api/analogues/${third.body.id}/decline`).set(bearer(curator)).send({ reason: 'Same as the first' }),
    ]);
    expect([acc.status, dec.status].sort(), JSON.stringify([acc.body.status ?? acc.body.code, dec.body.status ?? dec.body.code])).toEqual([200, 409]);
    const stood = acc.status === 200 ? acc.body : dec.body;
    expect((await request(t.app).get(`/api/analogues/${third.body.id}`).set(bearer(curator))).body).toMatchObject({ status: stood.status, version: third.body.version + 1 });
  });

  it('says when the live interpretation has changed since the promotion', async () => {
    const a = (await request(t.app).post(`/api/buildups/${buildup.id}/promote`).set(bearer(curator)).send({ name: 'Kestrel Knoll (then)' })).body;
    expect(a.liveChanged).toBe(false);
    const cur = await request(t.app).get(`/api/buildups/${buildup.id}`).set(bearer(interpreter));
    const moved = { ...SMALL_GEOMETRY, cycles: [{ ...SMALL_GEOMETRY.cycles[0], top: [[50, 50], [100, 35], [150, 50]] }] };
    const save = await request(t.app).put(`/api/buildups/${buildup.id}`).set(bearer(interpreter)).send({ version: cur.body.version, geometry: moved });
    expect(save.status, JSON.stringify(save.body)).toBe(200);
    const after = await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(interpreter));
    expect(after.body.liveChanged).toBe(true);
    expect(after.body.snapshot.measurement.heightM).toBe(a.snapshot.measurement.heightM);
  });

  it('a buildup the asker cannot see answers 404, one that cannot be measured 422', async () => {
    expect((await request(t.app).post('/api/buildups/999999/promote').set(bearer(curator)).send({})).status).toBe(404);
    const c = await request(t.app).post(`/api/sections/${section}/buildups`).set(bearer(interpreter)).send({ name: 'Empty one' });
    const r = await request(t.app).post(`/api/buildups/${c.body.id}/promote`).set(bearer(curator)).send({});
    expect(r.status).toBe(422);
    expect(r.body.code).toBe('not_measurable');
  });
});
