/**
 * Buildups on a section: save with optimistic locking, role checks, bad
 * geometry, the section's velocity model, and measurements computed by the
 * server equal to the shared engine's on the same data.
 */
import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { Section, SectionCalibration } from '../../server/models/section';
import { measure } from '../../shared/measure/index';
import fixture from '../fixtures/synthetic/tb-11-kestrel-knoll.json';

let t: TestApp;
let demoProjectId: number;
let sectionId: number;
let privateSectionId: number;

const px = fixture.pixelGeometry.buildups[0];
const geometry = {
  base: px.base,
  cycles: px.cycles,
  terminations: px.terminations,
  topIsDrowningSurface: px.topIsDrowningSurface,
};

async function makeSection(projectId: number, calibrated = true) {
  const s = await Section.create({
    projectId,
    title: 'TB-11 test copy',
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
  if (calibrated) await SectionCalibration.create({ sectionId: s.id, version: 1, ties: fixture.ties as never, fit: {}, createdBy: null });
  return s.id;
}

beforeAll(async () => {
  t = await createTestApp();
  const list = await request(t.app).get('/api/projects').set(bearer(await t.token('admin')));
  demoProjectId = list.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  sectionId = await makeSection(demoProjectId);
  const priv = await request(t.app).post('/api/projects').set(bearer(await t.token('admin'))).send({ name: 'Admin only' });
  privateSectionId = await makeSection(priv.body.id);
});
afterAll(async () => t?.close());

describe('buildups', () => {
  it('create: anonymous 401, reviewer 403, non-member 404, interpreter 201', async () => {
    const url = `/api/sections/${sectionId}/buildups`;
    expect((await request(t.app).post(url).send({ name: 'Kestrel Knoll' })).status).toBe(401);
    expect((await request(t.app).post(url).set(bearer(await t.token('reviewer'))).send({ name: 'Kestrel Knoll' })).status).toBe(403);
    expect((await request(t.app).post(`/api/sections/${privateSectionId}/buildups`).set(bearer(await t.token('interpreter'))).send({ name: 'X' })).status).toBe(404);
    const bad = await request(t.app).post(url).set(bearer(await t.token('interpreter'))).send({ name: '' });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^name: /);
    const ok = await request(t.app).post(url).set(bearer(await t.token('interpreter'))).send({ name: 'Kestrel Knoll' });
    expect(ok.status).toBe(201);
    expect(ok.body).toEqual({ id: expect.any(Number), version: 0 });
  });

  it('saves with optimistic locking: a stale version gets 409 with the current record', async () => {
    const interp = await t.token('interpreter');
    const { body: created } = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Lock test' });
    const first = await request(t.app).put(`/api/buildups/${created.id}`).set(bearer(interp)).send({ version: 0, geometry });
    expect(first.status).toBe(200);
    expect(first.body.version).toBe(1);
    const stale = await request(t.app)
      .put(`/api/buildups/${created.id}`)
      .set(bearer(await t.token('admin')))
      .send({ version: 0, geometry: { ...geometry, topIsDrowningSurface: false } });
    expect(stale.status).toBe(409);
    expect(stale.body.code).toBe('version_conflict');
    expect(stale.body.details.current.version).toBe(1);
    const got = await request(t.app).get(`/api/buildups/${created.id}`).set(bearer(await t.token('reviewer')));
    expect(got.status).toBe(200);
    expect(got.body.geometry.topIsDrowningSurface).toBe(true); // nothing was overwritten
    expect(got.body.geometry.cycles).toHaveLength(4);
    // reviewers and curators see, but do not edit
    const rev = await request(t.app).put(`/api/buildups/${created.id}`).set(bearer(await t.token('reviewer'))).send({ version: 1, geometry });
    expect(rev.status).toBe(403);
    const list = await request(t.app).get(`/api/sections/${sectionId}/buildups`).set(bearer(await t.token('curator')));
    expect(list.status).toBe(200);
    expect(list.body.map((b: { name: string }) => b.name)).toContain('Lock test');
  });

  it('refuses bad geometry naming the field', async () => {
    const interp = await t.token('interpreter');
    const { body: created } = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Bad' });
    const cases: [unknown, RegExp][] = [
      [{ ...geometry, base: [[1, 'a']] }, /geometry\.base\[0\]\[1\]: /],
      [{ ...geometry, terminations: [{ type: 'sideways', at: [1, 2] }] }, /geometry\.terminations\[0\]\.type: /],
      [{ ...geometry, cycles: [{ ...geometry.cycles[0], index: 2 }] }, /geometry\.cycles\[0\]\.index: must be 1/],
      [{ ...geometry, topIsDrowningSurface: 'yes' }, /geometry\.topIsDrowningSurface: /],
    ];
    for (const [g, re] of cases) {
      const r = await request(t.app).put(`/api/buildups/${created.id}`).set(bearer(interp)).send({ version: 0, geometry: g });
      expect(r.status).toBe(400);
      expect(r.body.message).toMatch(re);
    }
    const missingVersion = await request(t.app).put(`/api/buildups/${created.id}`).set(bearer(interp)).send({ geometry });
    expect(missingVersion.body.message).toMatch(/^version: /);
    const still = await request(t.app).get(`/api/buildups/${created.id}`).set(bearer(interp));
    expect(still.body.version).toBe(0);
  });

  it('measures a stored buildup with the shared engine, the same as the engine on the same input', async () => {
    const interp = await t.token('interpreter');
    const { body: created } = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Kestrel Knoll' });
    await request(t.app).put(`/api/buildups/${created.id}`).set(bearer(interp)).send({ version: 0, geometry });
    // Until the section has a velocity model of its own, the default (with ranges) applies.
    const v0 = await request(t.app).get(`/api/sections/${sectionId}/velocity`).set(bearer(interp));
    expect(v0.body.isDefault).toBe(true);
    expect(v0.body.sources.join(' ')).toMatch(/Anselmetti & Eberli/);
    const put = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: fixture.interpretation.velocity });
    expect(put.status).toBe(200);
    expect(put.body.isDefault).toBe(false);

    const r = await request(t.app).get(`/api/buildups/${created.id}/measurements`).set(bearer(await t.token('reviewer')));
    expect(r.status).toBe(200);
    const engine = measure({ ...fixture.pixelGeometry, buildups: [{ ...fixture.pixelGeometry.buildups[0], name: 'Kestrel Knoll' }] });
    expect(r.body).toEqual(JSON.parse(JSON.stringify(engine)));
    // The synthetic section was built from a known depth geometry: the server's depth-domain
    // height must match the measurement of that true geometry (generator, tests/fixtures/synthetic).
    const truth = measure(fixture.depthGeometry);
    expect(r.body.buildups[0].heightM).toBeCloseTo(truth.buildups[0].heightM, 0);
    expect(r.body.buildups[0].classification).toBe('drowned');

    const opts = await request(t.app).get(`/api/buildups/${created.id}/measurements?aggradingToleranceDeg=30`).set(bearer(interp));
    expect(opts.body.options.aggradingToleranceDeg).toBe(30);
  });

  it('answers 409 before calibration and 422 while the buildup is incomplete', async () => {
    const interp = await t.token('interpreter');
    const uncal = await makeSection(demoProjectId, false);
    const { body: b1 } = await request(t.app).post(`/api/sections/${uncal}/buildups`).set(bearer(interp)).send({ name: 'Uncalibrated' });
    const r1 = await request(t.app).get(`/api/buildups/${b1.id}/measurements`).set(bearer(interp));
    expect(r1.status).toBe(409);
    expect(r1.body.code).toBe('not_calibrated');
    const { body: b2 } = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Empty' });
    const r2 = await request(t.app).get(`/api/buildups/${b2.id}/measurements`).set(bearer(interp));
    expect(r2.status).toBe(422);
    expect(r2.body.message).toMatch(/base: needs at least 2 points/);
  });

  it('velocity: refuses a bad model naming the field; reviewer 403', async () => {
    const interp = await t.token('interpreter');
    const bad = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: -3 } });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^velocity\.v: /);
    const range = await request(t.app)
      .put(`/api/sections/${sectionId}/velocity`)
      .set(bearer(interp))
      .send({ velocity: { kind: 'constant', v: { min: 5000, mode: 4000, max: 6000 } } });
    expect(range.status).toBe(400);
    expect(range.body.message).toMatch(/velocity\.v/);
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(await t.token('reviewer'))).send({ velocity: { kind: 'constant', v: 3000 } })).status).toBe(403);
    expect((await request(t.app).get(`/api/sections/${sectionId}/velocity`)).status).toBe(401);
  });

  it('delete: reviewer 403, interpreter 204, then 404', async () => {
    const interp = await t.token('interpreter');
    const { body } = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Gone' });
    expect((await request(t.app).delete(`/api/buildups/${body.id}`).set(bearer(await t.token('reviewer')))).status).toBe(403);
    expect((await request(t.app).delete(`/api/buildups/${body.id}`).set(bearer(interp))).status).toBe(204);
    expect((await request(t.app).get(`/api/buildups/${body.id}`).set(bearer(interp))).status).toBe(404);
  });
});

describe('POST /api/measure', () => {
  it('measures a posted interpretation; anonymous 401; bad input 400 with the path', async () => {
    const interp = await t.token('reviewer');
    expect((await request(t.app).post('/api/measure').send({ interpretation: fixture.depthGeometry })).status).toBe(401);
    const ok = await request(t.app).post('/api/measure').set(bearer(interp)).send({ interpretation: fixture.depthGeometry, options: { aggradingToleranceDeg: 12 } });
    expect(ok.status).toBe(200);
    expect(ok.body.format).toBe('cayline.measurements/1');
    expect(ok.body.options.aggradingToleranceDeg).toBe(12);
    expect(ok.body).toEqual(JSON.parse(JSON.stringify(measure(fixture.depthGeometry, { aggradingToleranceDeg: 12 }))));
    const broken = structuredClone(fixture.depthGeometry) as typeof fixture.depthGeometry;
    broken.buildups[0].cycles[1].marginLeft = [-99999, 100];
    const bad = await request(t.app).post('/api/measure').set(bearer(interp)).send({ interpretation: broken });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^buildups\[0\]\.cycles\[1\]\.marginLeft: /);
    const none = await request(t.app).post('/api/measure').set(bearer(interp)).send({});
    expect(none.status).toBe(400);
    expect(none.body.message).toMatch(/^interpretation: /);
  });
});
