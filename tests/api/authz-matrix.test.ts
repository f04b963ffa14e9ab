/**
 * Authorization matrix: every foundation route tried anonymous, with a role
 * (or non-member) that must be refused, and with one that must succeed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp, type DemoRole } from '../helpers/app';

let t: TestApp;
let projectId: number; // the demo project: all four demo users are members
let privateId: number; // a project only the interpreter belongs to
let curatorId: number;
let spareUserId: number;

beforeAll(async () => {
  t = await createTestApp();
  const admin = await t.token('admin');
  const list = await request(t.app).get('/api/projects').set(bearer(admin));
  projectId = list.body.items[0].id;
  const priv = await request(t.app).post('/api/projects').set(bearer(await t.token('interpreter'))).send({ name: 'Private look' });
  privateId = priv.body.id;
  const users = await request(t.app).get('/api/users').set(bearer(admin));
  curatorId = users.body.items.find((u: { role: string }) => u.role === 'curator').id;
  const spare = await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'spare@tessel.example', name: 'Spare', role: 'reviewer', password: 'long-enough-pw' });
  spareUserId = spare.body.id;
});
afterAll(async () => t?.close());

type Case = {
  name: string;
  method: 'get' | 'post' | 'patch' | 'delete';
  path: () => string;
  body?: () => object;
  refused: { role: DemoRole; status: number };
  allowed: { role: DemoRole; status: number };
};

const cases: Case[] = [
  { name: 'me', method: 'get', path: () => '/api/auth/me', refused: { role: 'reviewer', status: 200 }, allowed: { role: 'reviewer', status: 200 } },
  { name: 'list users', method: 'get', path: () => '/api/users', refused: { role: 'interpreter', status: 403 }, allowed: { role: 'admin', status: 200 } },
  { name: 'create user', method: 'post', path: () => '/api/users', body: () => ({ email: `u${Date.now()}@tessel.example`, name: 'U', role: 'reviewer', password: 'long-enough-pw' }), refused: { role: 'curator', status: 403 }, allowed: { role: 'admin', status: 201 } },
  { name: 'update user', method: 'patch', path: () => `/api/users/${spareUserId}`, body: () => ({ role: 'curator' }), refused: { role: 'reviewer', status: 403 }, allowed: { role: 'admin', status: 200 } },
  { name: 'directory', method: 'get', path: () => '/api/users/directory', refused: { role: 'reviewer', status: 200 }, allowed: { role: 'reviewer', status: 200 } },
  { name: 'list projects', method: 'get', path: () => '/api/projects', refused: { role: 'curator', status: 200 }, allowed: { role: 'curator', status: 200 } },
  { name: 'create project', method: 'post', path: () => '/api/projects', body: () => ({ name: 'Matrix project' }), refused: { role: 'reviewer', status: 403 }, allowed: { role: 'interpreter', status: 201 } },
  { name: 'get project (non-member)', method: 'get', path: () => `/api/projects/${privateId}`, refused: { role: 'curator', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'admin sees any project', method: 'get', path: () => `/api/projects/${privateId}`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'admin', status: 200 } },
  { name: 'update project', method: 'patch', path: () => `/api/projects/${projectId}`, body: () => ({ description: 'changed' }), refused: { role: 'reviewer', status: 403 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'list members', method: 'get', path: () => `/api/projects/${privateId}/members`, refused: { role: 'reviewer', status: 404 }, allowed: { role: 'interpreter', status: 200 } },
  { name: 'add member', method: 'post', path: () => `/api/projects/${privateId}/members`, body: () => ({ userId: curatorId }), refused: { role: 'reviewer', status: 404 }, allowed: { role: 'interpreter', status: 201 } },
  { name: 'add member (member, wrong role)', method: 'post', path: () => `/api/projects/${projectId}/members`, body: () => ({ userId: spareUserId }), refused: { role: 'curator', status: 403 }, allowed: { role: 'admin', status: 201 } },
  { name: 'remove member', method: 'delete', path: () => `/api/projects/${projectId}/members/${spareUserId}`, refused: { role: 'reviewer', status: 403 }, allowed: { role: 'interpreter', status: 204 } },
];

describe('authorization matrix', () => {
  for (const c of cases) {
    it(`${c.method.toUpperCase()} ${c.name}: anonymous 401, ${c.refused.role} ${c.refused.status}, ${c.allowed.role} ${c.allowed.status}`, async () => {
      const anon = await request(t.app)[c.method](c.path()).send(c.body?.() ?? {});
      expect(anon.status).toBe(401);
      const refused = await request(t.app)[c.method](c.path()).set(bearer(await t.token(c.refused.role))).send(c.body?.() ?? {});
      expect(refused.status).toBe(c.refused.status);
      const ok = await request(t.app)[c.method](c.path()).set(bearer(await t.token(c.allowed.role))).send(c.body?.() ?? {});
      expect(ok.status).toBe(c.allowed.status);
    });
  }

  it('DELETE project: anonymous 401, member who is not the creator 403, creator 204, gone afterwards', async () => {
    const interp = await t.token('interpreter');
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'To delete' });
    await request(t.app).post(`/api/projects/${p.body.id}/members`).set(bearer(interp)).send({ userId: curatorId });
    expect((await request(t.app).delete(`/api/projects/${p.body.id}`)).status).toBe(401);
    expect((await request(t.app).delete(`/api/projects/${p.body.id}`).set(bearer(await t.token('curator')))).status).toBe(403);
    expect((await request(t.app).delete(`/api/projects/${p.body.id}`).set(bearer(interp))).status).toBe(204);
    expect((await request(t.app).get(`/api/projects/${p.body.id}`).set(bearer(interp))).status).toBe(404);
  });

  it('POST logout: anonymous 401, any signed-in user 204', async () => {
    expect((await request(t.app).post('/api/auth/logout')).status).toBe(401);
    const login = await request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: 'cayline-demo' });
    expect((await request(t.app).post('/api/auth/logout').set(bearer(login.body.token))).status).toBe(204);
  });

  it('health needs no sign-in', async () => {
    expect((await request(t.app).get('/api/health')).status).toBe(200);
  });
});
