import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => t?.close());

describe('projects', () => {
  it('lists only the projects a user belongs to, with search and pagination', async () => {
    const interp = await t.token('interpreter');
    for (let i = 1; i <= 5; i++) await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: `Shoal study ${i}` });
    const page1 = await request(t.app).get('/api/projects?q=shoal&page=1&pageSize=2').set(bearer(interp));
    expect(page1.status).toBe(200);
    expect(page1.body.total).toBe(5);
    expect(page1.body.items).toHaveLength(2);
    const page3 = await request(t.app).get('/api/projects?q=shoal&page=3&pageSize=2').set(bearer(interp));
    expect(page3.body.items).toHaveLength(1);
    const curator = await request(t.app).get('/api/projects?q=shoal').set(bearer(await t.token('curator')));
    expect(curator.body.total).toBe(0);
    const all = await request(t.app).get('/api/projects').set(bearer(interp));
    expect(all.body.items.map((p: { name: string }) => p.name)).toContain('Tessel Basin screening');
    const demo = all.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening');
    expect(demo.memberCount).toBe(4);
  });

  it('makes the creator a member and names bad fields', async () => {
    const interp = await t.token('interpreter');
    const bad = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: '   ' });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^name: /);
    const ok = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Reef margins', description: 'Margin work' });
    expect(ok.status).toBe(201);
    expect(ok.body.members.map((m: { email: string }) => m.email)).toEqual(['interpreter@tessel.example']);
    expect(ok.body.canEdit).toBe(true);
    const badPage = await request(t.app).get('/api/projects?pageSize=5000').set(bearer(interp));
    expect(badPage.status).toBe(400);
    expect(badPage.body.message).toMatch(/^pageSize: /);
    const badId = await request(t.app).get('/api/projects/abc').set(bearer(interp));
    expect(badId.status).toBe(400);
    expect(badId.body.message).toMatch(/^id: /);
  });

  it('answers unknown API routes with the JSON error shape', async () => {
    const r = await request(t.app).get('/api/nothing-here').set(bearer(await t.token('reviewer')));
    expect(r.status).toBe(404);
    expect(r.body).toMatchObject({ code: 'not_found' });
  });
});
