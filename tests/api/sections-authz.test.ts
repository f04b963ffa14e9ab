/**
 * Authorization matrix of every section route: anonymous 401, a role (or a
 * non-member) that must be refused, and one that must succeed.
 * Demo project: all four demo users are members. Private project: only the interpreter.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp, type DemoRole } from '../helpers/app';
import { makeImage, upload, waitForStatus, FIELDS } from '../helpers/sections';

let t: TestApp;
let demoId: number;
let privateId: number;
let demoSection: number; // ready, in the demo project
let privateSection: number; // ready, in the private project
let failedSection: number; // failed, in the demo project
let png: Buffer;
const ties = [
  { px: [0, 0], world: [0, 0] },
  { px: [200, 0], world: [2000, 0] },
  { px: [0, 100], world: [0, 400] },
];

beforeAll(async () => {
  t = await createTestApp();
  const interp = await t.token('interpreter');
  demoId = (await request(t.app).get('/api/projects').set(bearer(interp))).body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  privateId = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Private matrix' })).body.id;
  png = await makeImage('png', 200, 100);
  demoSection = (await upload(t, interp, demoId, png)).body.id;
  privateSection = (await upload(t, interp, privateId, png)).body.id;
  const broken = Buffer.from(await makeImage('tiff', 300, 200));
  for (let i = 200; i < broken.length - 400; i++) broken[i] = (i * 37) & 0xff;
  failedSection = (await upload(t, interp, demoId, broken, 'b.tif')).body.id;
  for (const id of [demoSection, privateSection, failedSection]) await waitForStatus(t, interp, id);
});
afterAll(async () => t?.close());

type Case = {
  name: string;
  method: 'get' | 'post' | 'patch' | 'put' | 'delete';
  path: () => string;
  body?: () => Promise<object> | object;
  multipart?: boolean;
  refused: { role: DemoRole; status: number };
  allowed: { role: DemoRole; status: number };
};

const versionOf = async (id: number) => (await request(t.app).get(`/api/sections/${id}`).set(bearer(await t.token('admin')))).body.version;

const cases: Case[] = [
  { name: 'list sections (non-member)', method: 'get', path: () => `/api/projects/${privateId}/sections`, refused: { role: 'curator', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'list sections (member)', method: 'get', path: () => `/api/projects/${demoId}/sections`, refused: { role: 'curator', status: 200 }, allowed: { role: 'reviewer', status: 200 } },
  { name: 'upload (member, wrong role)', method: 'post', multipart: true, path: () => `/api/projects/${demoId}/sections`, refused: { role: 'curator', status: 403 }, allowed: { role: 'interpreter', status: 202 } },
  { name: 'upload (non-member)', method: 'post', multipart: true, path: () => `/api/projects/${privateId}/sections`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'admin', status: 202 } },
  { name: 'get section', method: 'get', path: () => `/api/sections/${privateSection}`, refused: { role: 'curator', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'admin sees any section', method: 'get', path: () => `/api/sections/${privateSection}`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'admin', status: 200 } },
  { name: 'patch section', method: 'patch', path: () => `/api/sections/${demoSection}`, body: async () => ({ version: await versionOf(demoSection), notes: 'edited' }), refused: { role: 'reviewer', status: 403 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'retry', method: 'post', path: () => `/api/sections/${failedSection}/retry`, refused: { role: 'curator', status: 403 }, allowed: { role: 'interpreter', status: 202 } },
  { name: 'tile', method: 'get', path: () => `/api/sections/${privateSection}/tiles/0/0_0.jpg`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'tile (member reviewer)', method: 'get', path: () => `/api/sections/${demoSection}/tiles/8/0_0.jpg`, refused: { role: 'curator', status: 200 }, allowed: { role: 'reviewer', status: 200 } },
  { name: 'thumbnail', method: 'get', path: () => `/api/sections/${privateSection}/thumbnail`, refused: { role: 'curator', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'preview image', method: 'get', path: () => `/api/sections/${privateSection}/preview`, refused: { role: 'curator', status: 404 }, allowed: { role: 'admin', status: 200 } },
  { name: 'list calibrations', method: 'get', path: () => `/api/sections/${privateSection}/calibrations`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'save calibration', method: 'put', path: () => `/api/sections/${demoSection}/calibration`, body: () => ({ ties }), refused: { role: 'reviewer', status: 403 }, allowed: { role: 'interpreter', status: 201 } },
  { name: 'preview calibration', method: 'post', path: () => `/api/sections/${demoSection}/calibration/preview`, body: () => ({ ties }), refused: { role: 'curator', status: 403 }, allowed: { role: 'admin', status: 200 } },
  { name: 'save calibration (non-member)', method: 'put', path: () => `/api/sections/${privateSection}/calibration`, body: () => ({ ties }), refused: { role: 'curator', status: 404 }, allowed: { role: 'interpreter', status: 201 } },
];

async function send(c: Case, role: DemoRole | null) {
  let r = request(t.app)[c.method](c.path());
  if (role) r = r.set(bearer(await t.token(role)));
  if (c.multipart) {
    for (const [k, v] of Object.entries(FIELDS)) r = r.field(k, v);
    return r.attach('image', png, 'm.png');
  }
  return r.send((await c.body?.()) ?? {});
}

describe('sections authorization matrix', () => {
  for (const c of cases) {
    it(`${c.method.toUpperCase()} ${c.name}: anonymous 401, ${c.refused.role} ${c.refused.status}, ${c.allowed.role} ${c.allowed.status}`, async () => {
      expect((await send(c, null)).status).toBe(401);
      expect((await send(c, c.refused.role)).status).toBe(c.refused.status);
      expect((await send(c, c.allowed.role)).status).toBe(c.allowed.status);
    });
  }

  it('DELETE section: anonymous 401, reviewer member 403, non-member 404, interpreter 204', async () => {
    const id = (await upload(t, await t.token('interpreter'), demoId, png)).body.id;
    const privateOne = (await upload(t, await t.token('interpreter'), privateId, png)).body.id;
    expect((await request(t.app).delete(`/api/sections/${id}`)).status).toBe(401);
    expect((await request(t.app).delete(`/api/sections/${id}`).set(bearer(await t.token('reviewer')))).status).toBe(403);
    expect((await request(t.app).delete(`/api/sections/${privateOne}`).set(bearer(await t.token('curator')))).status).toBe(404);
    expect((await request(t.app).delete(`/api/sections/${id}`).set(bearer(await t.token('interpreter')))).status).toBe(204);
    expect((await request(t.app).delete(`/api/sections/${privateOne}`).set(bearer(await t.token('admin')))).status).toBe(204);
  });

  it('refuses non-numeric ids naming the parameter', async () => {
    const r = await request(t.app).get('/api/sections/abc').set(bearer(await t.token('admin')));
    expect(r.status).toBe(400);
    expect(r.body.message).toMatch(/^id: must be a positive whole number/);
  });
});
