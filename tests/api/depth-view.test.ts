/**
 * The depth view of a TWT section: asking for it queues the `section-depth`
 * job, which builds a depth pyramid served like the TWT tiles; changing the
 * velocity model or the Ties queues a rebuild, the last good build staying on
 * view meanwhile.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup, SMALL_TIES } from '../helpers/api-fixtures';
import { makeImage, upload, waitForStatus } from '../helpers/sections';
import type { DepthViewState } from '../../shared/schemas/depth-view';
import { buildupsChangedForDepth } from '../../server/services/depth-view.service';

let t: TestApp;
let interp: string;
let reviewer: string;
let projectId: number;
let sectionId: number;

beforeAll(async () => {
  t = await createTestApp();
  interp = await t.token('interpreter');
  reviewer = await t.token('reviewer');
  const p = await request(t.app).get('/api/projects').set(bearer(interp));
  projectId = p.body.items.find((x: { name: string }) => x.name === 'Tessel Basin screening').id;
  expect(projectId).toBeTruthy();
  sectionId = await readyCalibratedSection(t, interp, projectId);
}, 90_000);
afterAll(async () => t?.close());

async function state(id = sectionId): Promise<DepthViewState> {
  const r = await request(t.app).get(`/api/sections/${id}/depth`).set(bearer(reviewer));
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
}

/** Poll until the build numbered `build` is on view (or the row failed). */
async function readyBuild(build: number, timeoutMs = 40_000): Promise<DepthViewState> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const s = await state();
    if (s.status === 'failed') throw new Error(`depth build failed: ${s.failureReason}`);
    if (s.status === 'ready' && s.ready?.build === build) return s;
    if (Date.now() > until) throw new Error(`depth build ${build} not ready: ${JSON.stringify(s).slice(0, 300)}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

const tile = (build: number, z: number) => request(t.app).get(`/api/sections/${sectionId}/depth/${build}/tiles/${z}/0_0.jpg`).set(bearer(reviewer));

describe('depth view', () => {
  it('needs Ties: an uncalibrated section answers 409 not_calibrated naming the calibration', async () => {
    const up = await upload(t, interp, projectId, await makeImage('png', 64, 48));
    expect((await waitForStatus(t, interp, up.body.id)).status).toBe('ready');
    const r = await request(t.app).post(`/api/sections/${up.body.id}/depth`).set(bearer(reviewer));
    expect(r.status).toBe(409);
    expect(r.body.code).toBe('not_calibrated');
    expect(r.body.message).toMatch(/^calibration: /);
    const s = await state(up.body.id);
    expect(s).toMatchObject({ available: false, status: 'none', ready: null });
  }, 60_000);

  it('is built on request (any member), served like the TWT tiles, and its axis follows the engine', async () => {
    // constant velocity 2000 m/s: z = v·t/2000, the Ties give TWT = 1000 + 10·v ms (SMALL_TIES)
    const put = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2000 } });
    expect(put.status, JSON.stringify(put.body)).toBe(200);
    expect(await state()).toMatchObject({ available: true, status: 'none', ready: null });
    const r = await request(t.app).post(`/api/sections/${sectionId}/depth`).set(bearer(reviewer));
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    expect(['queued', 'running', 'ready']).toContain(r.body.status);
    const s = await readyBuild(1);
    expect(s.stale).toBe(false);
    expect(s.progress).toBe(100);
    const axis = s.ready!.axis;
    expect(axis.width).toBe(200);
    expect(axis.height).toBe(100);
    expect(axis.z0).toBeCloseTo(1000, 6); // 2000 · 1000 / 2000
    expect(axis.dz).toBeCloseTo(10, 6); // (2000 · 2000 / 2000 − 1000) / 100 rows
    expect(s.ready!.basis.velocity).toEqual({ kind: 'constant', v: 2000 });
    expect(s.ready!.tiles.urlTemplate).toBe(`/api/sections/${sectionId}/depth/1/tiles/{z}/{x}_{y}.jpg`);

    const maxLevel = s.ready!.tiles.maxLevel;
    const depthTile = await tile(1, maxLevel);
    expect(depthTile.status).toBe(200);
    expect(depthTile.headers['content-type']).toBe('image/jpeg');
    const twtTile = await request(t.app).get(`/api/sections/${sectionId}/tiles/${maxLevel}/0_0.jpg`).set(bearer(reviewer));
    expect(depthTile.headers['cache-control']).toBe(twtTile.headers['cache-control']);
    expect(depthTile.headers['cache-control']).toMatch(/immutable/);
    const preview = await request(t.app).get(`/api/sections/${sectionId}/depth/1/preview`).set(bearer(reviewer));
    expect(preview.status).toBe(200);

    // asking again while it is current queues nothing
    const again = await request(t.app).post(`/api/sections/${sectionId}/depth`).set(bearer(interp));
    expect(again.status).toBe(200);
    expect(again.body.ready.build).toBe(1);
  }, 60_000);

  it('is rebuilt when the velocity model changes, and again when the Ties change', async () => {
    const linear = { kind: 'linear', v0: 1800, k: 0.5 };
    const put = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: linear });
    expect(put.status, JSON.stringify(put.body)).toBe(200);
    const during = await state();
    // the old build stays on view, marked stale, while build 2 is made
    if (during.status !== 'ready') {
      expect(during.stale).toBe(true);
      expect(during.ready?.build).toBe(1);
    }
    const s = await readyBuild(2);
    expect(s.stale).toBe(false);
    expect(s.ready!.basis.velocity).toEqual(linear);
    // linear law: z = (v0/k)(exp(k·t/2000) − 1) at t = 1000 ms (Geldart & Sheriff 2004, eq. 4.17a)
    expect(s.ready!.axis.z0).toBeCloseTo((1800 / 0.5) * Math.expm1((0.5 * 1000) / 2000), 6);
    expect((await tile(2, s.ready!.tiles.maxLevel)).status).toBe(200);
    expect((await tile(1, s.ready!.tiles.maxLevel)).status).toBe(404); // the older build's files are gone

    const ties = SMALL_TIES.map((x) => ({ px: x.px, world: [x.world[0], x.world[1] + 100] }));
    const cal = await request(t.app).put(`/api/sections/${sectionId}/calibration`).set(bearer(interp)).send({ ties });
    expect(cal.status, JSON.stringify(cal.body)).toBe(201);
    const s3 = await readyBuild(3);
    expect(s3.ready!.calibrationVersion).toBe(2);
    expect(s3.ready!.axis.z0).toBeCloseTo((1800 / 0.5) * Math.expm1((0.5 * 1100) / 2000), 6);
  }, 90_000);

  it('with the buildup velocity model, saving or deleting a buildup rebuilds it by itself (the carbonate envelope moved)', async () => {
    const model = { kind: 'buildup', water: { v: 1500, seafloorMs: 1200 }, overburden: { v: 2200 }, carbonate: { v: 4700 } };
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: model })).status).toBe(200);
    const s4 = await readyBuild(4);
    expect(s4.ready!.basis.buildups).toBeUndefined(); // nothing traced yet
    expect((await request(t.app).post(`/api/sections/${sectionId}/depth`).set(bearer(reviewer))).status).toBe(200);
    // nobody asks again: the save queues build 5 (after BUILDUP_REBUILD_DELAY_SECONDS) and the view moves on
    const b = await savedBuildup(t, interp, sectionId);
    const s5 = await readyBuild(5);
    expect(s5.ready!.basis.buildups).toHaveLength(1);
    // the stored build is current now: asking again queues nothing, and a save that does not move the envelope neither
    expect((await request(t.app).post(`/api/sections/${sectionId}/depth`).set(bearer(reviewer))).status).toBe(200);
    expect(await buildupsChangedForDepth(sectionId)).toBe(false);
    // deleting the buildup moves the envelope back: build 6 has no buildups
    expect((await request(t.app).delete(`/api/buildups/${b.id}`).set(bearer(interp))).status).toBe(204);
    const s6 = await readyBuild(6);
    expect(s6.ready!.basis.buildups).toBeUndefined();
  }, 90_000);

  it('with any other velocity model a buildup change leaves the depth view alone', async () => {
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2500 } })).status).toBe(200);
    await readyBuild(7);
    await savedBuildup(t, interp, sectionId, 'Tern Shoal');
    expect(await buildupsChangedForDepth(sectionId)).toBe(false);
    expect((await state()).status).toBe('ready');
  }, 60_000);

  it('refuses a build number that is not a whole number, naming it', async () => {
    const r = await request(t.app).get(`/api/sections/${sectionId}/depth/x1/tiles/0/0_0.jpg`).set(bearer(reviewer));
    expect(r.status).toBe(400);
    expect(r.body.code).toBe('validation_failed');
    expect(JSON.stringify(r.body.details)).toContain('build');
  });
});
