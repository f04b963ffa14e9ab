/**
 * Ready-made API fixtures built through the public routes: a ready and
 * calibrated section (small PNG, three Ties), a failed section, a measurable
 * buildup on a section, and sign-in of any account.
 */
import request from 'supertest';
import { expect } from 'vitest';
import { bearer, type TestApp } from './app';
import { makeImage, upload, waitForStatus } from './sections';

/** Three Ties on a 200 × 100 px section: x = 20·u m, TWT = 1000 + 10·v ms (invented TB-11 test line). */
export const SMALL_TIES = [
  { px: [0, 0], world: [0, 1000] },
  { px: [200, 0], world: [4000, 1000] },
  { px: [0, 100], world: [0, 2000] },
];

/** A measurable one-cycle buildup in those pixels: flat base at v 90, a top from u 50 to 150 with its crest at v 40. */
export const SMALL_GEOMETRY = {
  base: [[10, 90], [190, 90]],
  cycles: [{ index: 1, top: [[50, 50], [100, 40], [150, 50]], marginLeft: [50, 50], marginRight: [150, 50] }],
  terminations: [],
  topIsDrowningSurface: false,
};

/** Upload a 200 × 100 PNG to the project, wait until it is ready, save SMALL_TIES. Returns the section id. */
export async function readyCalibratedSection(t: TestApp, token: string, projectId: number): Promise<number> {
  const up = await upload(t, token, projectId, await makeImage('png', 200, 100));
  expect(up.status, JSON.stringify(up.body)).toBe(202);
  const s = await waitForStatus(t, token, up.body.id);
  expect(s.status).toBe('ready');
  const cal = await request(t.app).put(`/api/sections/${up.body.id}/calibration`).set(bearer(token)).send({ ties: SMALL_TIES });
  expect(cal.status, JSON.stringify(cal.body)).toBe(201);
  return up.body.id;
}

/** A section whose pyramid failed (a TIFF with scrambled data): the state `retry` needs. */
export async function failedSection(t: TestApp, token: string, projectId: number): Promise<number> {
  const broken = Buffer.from(await makeImage('tiff', 300, 200));
  for (let i = 200; i < broken.length - 400; i++) broken[i] = (i * 37) & 0xff;
  const up = await upload(t, token, projectId, broken, 'broken.tif');
  expect(up.status, JSON.stringify(up.body)).toBe(202);
  const s = await waitForStatus(t, token, up.body.id);
  expect(s.status).toBe('failed');
  return up.body.id;
}

/** Create a buildup on the section and save SMALL_GEOMETRY into it. Returns its id and version. */
export async function savedBuildup(t: TestApp, token: string, sectionId: number, name = 'Kestrel Knoll'): Promise<{ id: number; version: number }> {
  const c = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(token)).send({ name });
  expect(c.status, JSON.stringify(c.body)).toBe(201);
  const s = await request(t.app).put(`/api/buildups/${c.body.id}`).set(bearer(token)).send({ version: c.body.version, geometry: SMALL_GEOMETRY });
  expect(s.status, JSON.stringify(s.body)).toBe(200);
  return { id: c.body.id, version: s.body.version };
}

/** Sign in with e-mail and password; returns the token. */
export async function signIn(t: TestApp, email: string, password: string): Promise<string> {
  const r = await request(t.app).post('/api/auth/login').send({ email, password });
  if (r.status !== 200) throw new Error(`sign-in of ${email} failed: ${r.status} ${JSON.stringify(r.body)}`);
  return r.body.token;
}
