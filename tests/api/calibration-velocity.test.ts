/**
 * Calibration and velocity as their own resources (calibration.service.ts,
 * velocity.service.ts) and the one rule for row ids in paths
 * (shared/schemas/ids.ts through middlewares/params.ts).
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { makeImage, upload } from '../helpers/sections';
import { SMALL_TIES } from '../helpers/api-fixtures';
import { SectionCalibration } from '../../server/models/section';
import { AuditEvent } from '../../server/models/index';
import { createCalibrationVersion } from '../../server/services/calibration.service';
import { AppError } from '../../server/errors';
import { ctx } from '../../server/context';
import { fitCalibration } from '../../shared/measure/calibration';

let t: TestApp;
let interp: string;
let sectionId: number;
let interpId: number;

beforeAll(async () => {
  t = await createTestApp();
  interp = await t.token('interpreter');
  const list = await request(t.app).get('/api/projects').set(bearer(interp));
  const demoId = list.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  const up = await upload(t, interp, demoId, await makeImage('png', 200, 100));
  expect(up.status, JSON.stringify(up.body)).toBe(202);
  sectionId = up.body.id;
  interpId = (await request(t.app).get('/api/auth/me').set(bearer(interp))).body.user.id;
});
afterAll(async () => t?.close());

describe('row ids in paths: one rule', () => {
  // Before: `Number(raw)` or z.coerce accepted these, and ids past PostgreSQL's integer reached the database (500).
  const bad = ['abc', '0', '-3', '1e3', '0x10', '1.5', '2147483648', '99999999999'];
  for (const raw of bad) {
    it(`"${raw}" answers 400 naming the parameter on sections, buildups, velocity and calibrations`, async () => {
      const admin = await t.token('admin');
      for (const url of [`/api/sections/${raw}`, `/api/buildups/${raw}`, `/api/sections/${raw}/velocity`, `/api/sections/${raw}/calibrations`]) {
        const r = await request(t.app).get(url).set(bearer(admin));
        expect(r.status, `${url} ${JSON.stringify(r.body)}`).toBe(400);
        expect(r.body.code).toBe('validation_failed');
        expect(r.body.details?.[0]?.path, url).toBe('id');
      }
    });
  }
  it('names other id parameters too (:sectionId, :projectId) and kept versions (:version)', async () => {
    const admin = await t.token('admin');
    const a = await request(t.app).get('/api/sections/1e2/buildups').set(bearer(admin));
    expect([a.status, a.body.details?.[0]?.path]).toEqual([400, 'sectionId']);
    const b = await request(t.app).get('/api/projects/3000000000/sections').set(bearer(admin));
    expect([b.status, b.body.details?.[0]?.path]).toEqual([400, 'projectId']);
    const c = await request(t.app).get('/api/buildups/1/versions/-1').set(bearer(admin));
    expect([c.status, c.body.details?.[0]?.path]).toEqual([400, 'version']);
  });
  it('the largest integer id is a valid id (404, not 400 or 500)', async () => {
    const r = await request(t.app).get('/api/sections/2147483647').set(bearer(await t.token('admin')));
    expect(r.status).toBe(404);
  });
});

describe('createCalibrationVersion (the one way a calibration version is stored)', () => {
  it('numbers versions, audits in the caller transaction and accepts a fit made elsewhere with no Ties', async () => {
    const { sequelize } = ctx();
    const first = await sequelize.transaction((transaction) => createCalibrationVersion(sectionId, interpId, { ties: SMALL_TIES as never }, { transaction }));
    expect(first.version).toBe(1);
    // a fit made elsewhere (here: the engine on the same Ties), stored as is with zero Ties
    const fit = fitCalibration(SMALL_TIES as never);
    const second = await sequelize.transaction((transaction) =>
      createCalibrationVersion(sectionId, interpId, { ties: [], fit }, { transaction, auditDetails: { from: 'test' } }),
    );
    expect(second.version).toBe(2);
    expect(second.ties).toEqual([]);
    expect((second.fit as typeof fit).affine).toEqual(fit.affine);
    const audits = await AuditEvent.findAll({ where: { action: 'section.calibrate', targetId: String(sectionId) }, order: [['id', 'ASC']] });
    expect(audits.map((a) => (a.details as { version: number }).version)).toEqual([1, 2]);
    expect((audits[1].details as { from?: string }).from).toBe('test');
    // the HTTP list shows both, newest first
    const list = await request(t.app).get(`/api/sections/${sectionId}/calibrations`).set(bearer(interp));
    expect(list.body.map((c: { version: number }) => c.version)).toEqual([2, 1]);
  });

  it('a failure later in the caller transaction leaves no version and no audit row', async () => {
    const { sequelize } = ctx();
    const before = await SectionCalibration.count({ where: { sectionId } });
    const auditsBefore = await AuditEvent.count({ where: { action: 'section.calibrate' } });
    await expect(
      sequelize.transaction(async (transaction) => {
        await createCalibrationVersion(sectionId, interpId, { ties: SMALL_TIES as never }, { transaction });
        throw new Error('later step failed');
      }),
    ).rejects.toThrow('later step failed');
    expect(await SectionCalibration.count({ where: { sectionId } })).toBe(before);
    expect(await AuditEvent.count({ where: { action: 'section.calibrate' } })).toBe(auditsBefore);
  });

  it('refuses a stale baseVersion (409) and bad Ties (400 naming ties)', async () => {
    const { sequelize } = ctx();
    const stale = sequelize.transaction((transaction) => createCalibrationVersion(sectionId, interpId, { ties: SMALL_TIES as never }, { transaction, baseVersion: 0 }));
    await expect(stale).rejects.toMatchObject({ status: 409, code: 'version_conflict' });
    const collinear = [
      { px: [0, 0], world: [0, 0] },
      { px: [1, 1], world: [1, 1] },
      { px: [2, 2], world: [2, 2] },
    ];
    const err = await sequelize.transaction((transaction) => createCalibrationVersion(sectionId, interpId, { ties: collinear as never }, { transaction })).catch((e) => e);
    expect(err).toBeInstanceOf(AppError);
    expect(err.status).toBe(400);
    expect(err.details[0].path).toMatch(/^ties/);
  });
});

describe('velocity routes (velocity.service.ts)', () => {
  it('default model until one is put; the put is audited', async () => {
    const g = await request(t.app).get(`/api/sections/${sectionId}/velocity`).set(bearer(interp));
    expect(g.status).toBe(200);
    expect(g.body.isDefault).toBe(true);
    const p = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2400 } });
    expect(p.status, JSON.stringify(p.body)).toBe(200);
    expect(p.body).toMatchObject({ isDefault: false, velocity: { kind: 'constant', v: 2400 } });
    expect(await AuditEvent.count({ where: { action: 'section.velocity', targetId: String(sectionId) } })).toBe(1);
    const bad = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: -1 } });
    expect(bad.status).toBe(400);
    expect(bad.body.details[0].path).toMatch(/^velocity/);
  });

  it('a save names the model it started from: a stale one answers 409 with the stored model and changes nothing', async () => {
    const list = await request(t.app).get('/api/projects').set(bearer(interp));
    const demoId = list.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
    const up = await upload(t, interp, demoId, await makeImage('png', 120, 60));
    expect(up.status, JSON.stringify(up.body)).toBe(202);
    const sid: number = up.body.id;
    const url = `/api/sections/${sid}/velocity`;
    const admin = bearer(await t.token('admin'));
    const audits = () => AuditEvent.count({ where: { action: 'section.velocity', targetId: String(sid) } });

    // Two people open the default (null) and save at once: one is stored, the other meets it.
    const [a, b] = await Promise.all([
      request(t.app).put(url).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2100 }, baseUpdatedAt: null }),
      request(t.app).put(url).set(admin).send({ velocity: { kind: 'constant', v: 2200 }, baseUpdatedAt: null }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const won = a.status === 200 ? a : b;
    const lost = a.status === 200 ? b : a;
    expect(lost.body.code).toBe('version_conflict');
    expect(lost.body.details.current).toEqual(won.body);
    const adminId = (await request(t.app).get('/api/auth/me').set(admin)).body.user.id;
    expect(won.body.updatedBy.id).toBe(a.status === 200 ? interpId : adminId);
    expect(await audits()).toBe(1);

    // Started from the stored model: saved. Started from the one before it: refused, nothing written, no audit row.
    const first = won.body.updatedAt as string;
    const next = await request(t.app).put(url).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2300 }, baseUpdatedAt: first });
    expect(next.status, JSON.stringify(next.body)).toBe(200);
    const stale = await request(t.app).put(url).set(admin).send({ velocity: { kind: 'constant', v: 2450 }, baseUpdatedAt: first });
    expect(stale.status).toBe(409);
    expect(stale.body).toMatchObject({ code: 'version_conflict', details: { current: { velocity: { kind: 'constant', v: 2300 }, updatedAt: next.body.updatedAt } } });
    expect(stale.body.message).toMatch(/after you opened it/);
    expect((await request(t.app).get(url).set(bearer(interp))).body.velocity).toEqual({ kind: 'constant', v: 2300 });
    expect(await audits()).toBe(2);
    // Saying "the default" when a model is stored is stale too; leaving the base out writes whatever is stored.
    expect((await request(t.app).put(url).set(admin).send({ velocity: { kind: 'constant', v: 2500 }, baseUpdatedAt: null })).status).toBe(409);
    expect((await request(t.app).put(url).set(admin).send({ velocity: { kind: 'constant', v: 2500 } })).status).toBe(200);
    const badBase = await request(t.app).put(url).set(admin).send({ velocity: { kind: 'constant', v: 2500 }, baseUpdatedAt: 'yesterday' });
    expect(badBase.status).toBe(400);
    expect(badBase.body.details[0].path).toBe('baseUpdatedAt');
  });
});
