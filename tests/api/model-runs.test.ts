/**
 * Saved forward-model runs per buildup: create / list / get / delete, who may
 * do what (members read, interpreter members and admins write, non-members
 * learn nothing), bad parameters answer 422 naming `params.<field>`, a bad
 * envelope 400 naming the field, and a save whose audit line fails leaves no
 * row.
 */
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup, signIn } from '../helpers/api-fixtures';
import { forwardModelParamsSchema } from '../../shared/schemas/forward-model';

let t: TestApp;
let db: pg.Client;
let buildupId: number;
let outsider: string;

const PARAMS = {
  name: 'Kestrel Knoll reef',
  profile: [[0, 60], [2000, 20], [4000, 60]],
  columns: 41,
  growth: { GmMmPerYr: 12, I0: 2000, Ik: 250, kPerM: 0.1 },
  subsidence: { kind: 'constant', rateMPerMyr: 300 },
  stepYr: 1000,
  durationYr: 300_000,
  cycles: { boundaries: [100_000, 200_000], productionFactors: [1, 0.6, 0.3] },
};
const SUMMARY = {
  crestWaterDepthM: 12.5,
  drowningDepthM: 70.1,
  drowned: false,
  steps: 300,
  classification: 'backstepping',
  heightM: 48,
  baseWidthM: 4000,
  netBackstepM: 600,
  netAggradationM: 40,
  cycles: [{ index: 1, topWidthM: 1800, thicknessM: 20, meanBackstepM: null, meanAggradationM: null, factor: 1 }],
};
const body = (over: Record<string, unknown> = {}) => ({ name: 'Reef preset, falling factors', params: PARAMS, profileSource: 'traced', depthOffsetM: 1480, summary: SUMMARY, ...over });

beforeAll(async () => {
  t = await createTestApp();
  db = new pg.Client({ connectionString: t.databaseUrl });
  await db.connect();
  const interp = await t.token('interpreter');
  const projects = await request(t.app).get('/api/projects').set(bearer(interp));
  const demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  buildupId = (await savedBuildup(t, interp, await readyCalibratedSection(t, interp, demoId))).id;
  await request(t.app).post('/api/users').set(bearer(await t.token('admin'))).send({ email: 'far-modeller@tessel.example', name: 'Far Modeller', role: 'interpreter', password: 'long-enough-pw' });
  outsider = await signIn(t, 'far-modeller@tessel.example', 'long-enough-pw');
}, 120_000);
afterAll(async () => {
  await db?.end();
  await t?.close();
});

describe('saved model runs', () => {
  it('an interpreter saves a run; members read it back with the parsed parameters; it is audited', async () => {
    const c = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(await t.token('interpreter'))).send(body());
    expect(c.status, JSON.stringify(c.body)).toBe(201);
    expect(c.body).toMatchObject({ buildupId, name: 'Reef preset, falling factors', profileSource: 'traced', depthOffsetM: 1480, summary: { classification: 'backstepping', threshold: null, fit: null } });
    // stored parameters are the parsed ones, defaults filled in (so a replay is exact)
    expect(c.body.params).toEqual(forwardModelParamsSchema.parse(PARAMS));
    expect(c.body.params.slopeLimitDeg).toBe(35);
    expect(c.body.createdBy.name).toBeTruthy();

    const list = await request(t.app).get(`/api/buildups/${buildupId}/model-runs`).set(bearer(await t.token('reviewer')));
    expect(list.status).toBe(200);
    expect(list.body.items.map((i: { id: number }) => i.id)).toContain(c.body.id);
    expect(list.body.items[0]).not.toHaveProperty('params');

    const one = await request(t.app).get(`/api/model-runs/${c.body.id}`).set(bearer(await t.token('curator')));
    expect(one.status).toBe(200);
    expect(one.body.params).toEqual(c.body.params);

    const audit = await db.query(`SELECT action FROM audit_events WHERE target_type = 'model_run' AND target_id = $1`, [String(c.body.id)]);
    expect(audit.rows.map((r) => r.action)).toEqual(['model_run.create']);
  });

  it('bad parameters: 422 naming each field under params., and nothing stored', async () => {
    const interp = await t.token('interpreter');
    const before = Number((await db.query('SELECT count(*)::int AS n FROM model_runs')).rows[0].n);
    const cases: [Record<string, unknown>, string][] = [
      [{ ...PARAMS, stepYr: 500_000 }, 'params.stepYr'],
      [{ ...PARAMS, cycles: { ...PARAMS.cycles, productionFactors: [1, 1.4] } }, 'params.cycles.productionFactors[1]'],
      [{ ...PARAMS, growth: { ...PARAMS.growth, GmMmPerYr: -3 } }, 'params.growth.GmMmPerYr'],
      [{ ...PARAMS, profile: [[0, 10]] }, 'params.profile'],
      [{ ...PARAMS, profile: [[0, 10], [100, 20], [0, 20], [100, 10]] }, 'params.profile[2]'],
    ];
    for (const [params, path] of cases) {
      const r = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(interp)).send(body({ params }));
      expect(r.status, JSON.stringify(r.body)).toBe(422);
      expect(r.body.code).toBe('invalid_model_params');
      expect(r.body.details.map((d: { path: string }) => d.path)).toContain(path);
      expect(r.body.message).toContain(path);
    }
    // the envelope: a missing name or a broken summary is a 400 naming the field
    const noName = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(interp)).send(body({ name: '' }));
    expect(noName.status).toBe(400);
    expect(noName.body.details[0].path).toBe('name');
    const badSummary = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(interp)).send(body({ summary: { ...SUMMARY, crestWaterDepthM: 'deep' } }));
    expect(badSummary.status).toBe(400);
    expect(badSummary.body.details[0].path).toBe('summary.crestWaterDepthM');
    expect(Number((await db.query('SELECT count(*)::int AS n FROM model_runs')).rows[0].n)).toBe(before);
  });

  it('reviewers and curators read but may not save or delete; non-members get 404', async () => {
    const c = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(await t.token('admin'))).send(body({ name: 'Admin run' }));
    expect(c.status).toBe(201);
    for (const role of ['reviewer', 'curator'] as const) {
      expect((await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(await t.token(role))).send(body())).status).toBe(403);
      expect((await request(t.app).delete(`/api/model-runs/${c.body.id}`).set(bearer(await t.token(role)))).status).toBe(403);
    }
    expect((await request(t.app).get(`/api/buildups/${buildupId}/model-runs`).set(bearer(outsider))).status).toBe(404);
    expect((await request(t.app).get(`/api/model-runs/${c.body.id}`).set(bearer(outsider))).status).toBe(404);
    expect((await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(outsider)).send(body())).status).toBe(404);
    expect((await request(t.app).delete(`/api/model-runs/${c.body.id}`).set(bearer(outsider))).status).toBe(404);
    const d = await request(t.app).delete(`/api/model-runs/${c.body.id}`).set(bearer(await t.token('interpreter')));
    expect(d.status).toBe(204);
    expect((await request(t.app).get(`/api/model-runs/${c.body.id}`).set(bearer(await t.token('interpreter')))).status).toBe(404);
    expect((await db.query(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'model_run.delete' AND target_id = $1`, [String(c.body.id)])).rows[0].n).toBe(1);
  });

  it('a save whose audit line fails stores no row', async () => {
    await db.query(`CREATE FUNCTION model_run_audit_fail() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN IF NEW.action = 'model_run.create' THEN RAISE EXCEPTION 'audit refused (test trigger)'; END IF; RETURN NEW; END $$`);
    await db.query('CREATE TRIGGER model_run_audit_fail BEFORE INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION model_run_audit_fail()');
    try {
      const before = Number((await db.query('SELECT count(*)::int AS n FROM model_runs')).rows[0].n);
      const r = await request(t.app).post(`/api/buildups/${buildupId}/model-runs`).set(bearer(await t.token('interpreter'))).send(body({ name: 'Never kept' }));
      expect(r.status).toBe(500);
      expect(Number((await db.query('SELECT count(*)::int AS n FROM model_runs')).rows[0].n)).toBe(before);
    } finally {
      await db.query('DROP TRIGGER model_run_audit_fail ON audit_events');
    }
  });

  it('runs go with their buildup', async () => {
    const interp = await t.token('interpreter');
    const list = await request(t.app).get(`/api/buildups/${buildupId}/model-runs`).set(bearer(interp));
    expect(list.body.items.length).toBeGreaterThan(0);
    await db.query('DELETE FROM buildups WHERE id = $1', [buildupId]);
    expect(Number((await db.query('SELECT count(*)::int AS n FROM model_runs WHERE buildup_id = $1', [buildupId])).rows[0].n)).toBe(0);
  });
});
