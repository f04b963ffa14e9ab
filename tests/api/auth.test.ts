import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import jwt from 'jsonwebtoken';
import { createTestApp, bearer, ROLE_EMAIL, type TestApp } from '../helpers/app';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { loadConfig } from '../../server/config';
import { readSink } from '../../server/mail/sink';
import path from 'node:path';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ config: { loginRateLimit: { windowMs: 60_000, max: 14 } } });
});
afterAll(async () => t?.close());

describe('health', () => {
  it('reports the database from a real query', async () => {
    const r = await request(t.app).get('/api/health');
    expect(r.status).toBe(200);
    expect(r.body).toEqual({ status: 'ok', db: 'ok' });
    expect(r.headers['x-content-type-options']).toBe('nosniff'); // helmet is on
  });
});

describe('sign-in', () => {
  it('returns a token and the user', async () => {
    const r = await request(t.app).post('/api/auth/login').send({ email: ROLE_EMAIL.interpreter, password: DEMO_PASSWORD });
    expect(r.status).toBe(200);
    expect(r.body.user).toMatchObject({ email: ROLE_EMAIL.interpreter, role: 'interpreter' });
    expect(r.body.user.passwordHash).toBeUndefined();
    const header = jwt.decode(r.body.token, { complete: true })!.header;
    expect(header.alg).toBe('HS256');
    const me = await request(t.app).get('/api/auth/me').set(bearer(r.body.token));
    expect(me.status).toBe(200);
    expect(me.body.user.email).toBe(ROLE_EMAIL.interpreter);
  });

  it('answers a wrong password and an unknown e-mail with the same 401', async () => {
    const a = await request(t.app).post('/api/auth/login').send({ email: ROLE_EMAIL.interpreter, password: 'wrong-password' });
    const b = await request(t.app).post('/api/auth/login').send({ email: 'nobody@tessel.example', password: DEMO_PASSWORD });
    expect(a.status).toBe(401);
    expect(b.status).toBe(401);
    expect(a.body).toEqual(b.body);
    expect(a.body.code).toBe('invalid_credentials');
  });

  it('names the bad field on validation errors', async () => {
    const r = await request(t.app).post('/api/auth/login').send({ email: 'not-an-email', password: '' });
    expect(r.status).toBe(400);
    expect(r.body.code).toBe('validation_failed');
    expect(r.body.message).toMatch(/email: /);
    expect(r.body.message).toMatch(/password: /);
    expect(r.body.details.map((d: { path: string }) => d.path).sort()).toEqual(['email', 'password']);
  });

  it('refuses a malformed JSON body clearly', async () => {
    const r = await request(t.app).post('/api/auth/login').set('Content-Type', 'application/json').send('{"email":');
    expect(r.status).toBe(400);
    expect(r.body.code).toBe('bad_json');
  });

  it('stops a logged-out token', async () => {
    const token = (await request(t.app).post('/api/auth/login').send({ email: ROLE_EMAIL.reviewer, password: DEMO_PASSWORD })).body.token;
    expect((await request(t.app).get('/api/auth/me').set(bearer(token))).status).toBe(200);
    expect((await request(t.app).post('/api/auth/logout').set(bearer(token))).status).toBe(204);
    const after = await request(t.app).get('/api/auth/me').set(bearer(token));
    expect(after.status).toBe(401);
    expect(after.body.code).toBe('unauthorized');
  });

  it('refuses an expired token, a token with another algorithm and a forged one', async () => {
    const secret = t.running.config.jwtSecret;
    const good = jwt.decode(await t.token('curator')) as { sid: string; sub: string; role: string };
    const expired = jwt.sign({ sid: good.sid, role: good.role }, secret, { subject: good.sub, expiresIn: -10, algorithm: 'HS256' });
    expect((await request(t.app).get('/api/auth/me').set(bearer(expired))).status).toBe(401);
    const hs512 = jwt.sign({ sid: good.sid, role: good.role }, secret, { subject: good.sub, algorithm: 'HS512' });
    expect((await request(t.app).get('/api/auth/me').set(bearer(hs512))).status).toBe(401);
    const forged = jwt.sign({ sid: good.sid, role: 'admin' }, 'another-secret', { subject: good.sub, algorithm: 'HS256' });
    expect((await request(t.app).get('/api/auth/me').set(bearer(forged))).status).toBe(401);
  });

  it("refuses a token whose session is another person's, or whose session id is not a UUID (401, not 500)", async () => {
    const secret = t.running.config.jwtSecret;
    const curator = jwt.decode(await t.token('curator')) as { sid: string; sub: string; role: string };
    const reviewer = jwt.decode(await t.token('reviewer')) as { sid: string; sub: string; role: string };
    const swapped = jwt.sign({ sid: reviewer.sid, role: curator.role }, secret, { subject: curator.sub, algorithm: 'HS256' });
    expect((await request(t.app).get('/api/auth/me').set(bearer(swapped))).status).toBe(401);
    const odd = jwt.sign({ sid: "x'; SELECT 1", role: curator.role }, secret, { subject: curator.sub, algorithm: 'HS256' });
    const r = await request(t.app).get('/api/auth/me').set(bearer(odd));
    expect(r.status).toBe(401);
    expect(r.body.code).toBe('unauthorized');
    const own = jwt.sign({ sid: curator.sid, role: curator.role }, secret, { subject: curator.sub, algorithm: 'HS256' });
    expect((await request(t.app).get('/api/auth/me').set(bearer(own))).status).toBe(200);
  });

  it('keeps a deactivated user out, and revokes their tokens', async () => {
    const admin = await t.token('admin');
    const created = await request(t.app)
      .post('/api/users')
      .set(bearer(admin))
      .send({ email: 'temp.hand@tessel.example', name: 'Temp Hand', role: 'reviewer', password: 'long-enough-pw' });
    expect(created.status).toBe(201);
    const login = await request(t.app).post('/api/auth/login').send({ email: 'temp.hand@tessel.example', password: 'long-enough-pw' });
    expect(login.status).toBe(200);
    const off = await request(t.app).patch(`/api/users/${created.body.id}`).set(bearer(admin)).send({ active: false });
    expect(off.status).toBe(200);
    expect(off.body.active).toBe(false);
    expect((await request(t.app).get('/api/auth/me').set(bearer(login.body.token))).status).toBe(401);
    const again = await request(t.app).post('/api/auth/login').send({ email: 'temp.hand@tessel.example', password: 'long-enough-pw' });
    expect(again.status).toBe(401);
  });

  it('sends an invitation through the local mail sink when no password is given', async () => {
    const admin = await t.token('admin');
    const r = await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'new.hand@tessel.example', name: 'New Hand', role: 'interpreter' });
    expect(r.status).toBe(201);
    const mails = readSink(path.join(t.storageDir, 'mail'));
    const mail = mails.find((m) => m.to.includes('new.hand@tessel.example'));
    expect(mail?.subject).toMatch(/invited/i);
    expect(mail?.text).not.toMatch(/password is/i); // a link to choose one's own password instead (tests/api/mail.test.ts)
    const token = mail!.text.match(/\/set-password\?token=([A-Za-z0-9_-]+)/)?.[1];
    expect(token).toBeTruthy();
    expect((await request(t.app).post('/api/auth/set-password').send({ token, password: 'chosen-by-me-1' })).status).toBe(200);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'new.hand@tessel.example', password: 'chosen-by-me-1' })).status).toBe(200);
    const list = await request(t.app).get('/api/admin/mail').set(bearer(admin));
    expect(list.status).toBe(200);
    expect(list.body.items.some((m: { recipients: string[] }) => m.recipients.includes('new.hand@tessel.example'))).toBe(true);
  });

  it('refuses a duplicate e-mail with 409 naming the field', async () => {
    const admin = await t.token('admin');
    const r = await request(t.app).post('/api/users').set(bearer(admin)).send({ email: ROLE_EMAIL.curator, name: 'Dup', role: 'curator', password: 'long-enough-pw' });
    expect(r.status).toBe(409);
    expect(r.body.message).toMatch(/^email: /);
  });

  it('rate-limits sign-in attempts from one address', async () => {
    let last = 0;
    // A different e-mail each time, so the per-account delay (tests/api/accounts.test.ts) never applies.
    for (let i = 0; i < 20; i++) {
      last = (await request(t.app).post('/api/auth/login').send({ email: `someone${i}@tessel.example`, password: 'nope-nope' })).status;
      if (last === 429) break;
    }
    expect(last).toBe(429);
  });
});

describe('configuration', () => {
  it('hashes passwords with bcrypt cost of at least 12 by default', () => {
    // Security baseline of the handbook: bcrypt cost >= 12 (the tests lower it only for speed).
    delete process.env.BCRYPT_COST;
    expect(loadConfig({ storageDir: t.storageDir }).bcryptCost).toBeGreaterThanOrEqual(12);
  });
});
