/**
 * Signed-in requests answered from the process's session cache
 * (server/services/session-cache.ts) must still see every sign-out,
 * deactivation and role change at once: through the model hooks for changes
 * made in this process, through NOTIFY for changes made anywhere else, and by
 * not using the cache at all while the NOTIFY listener is down.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import pg from 'pg';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { createDatabase, createTestApp, bearer, ROLE_EMAIL, type TestApp } from '../helpers/app';
import { boot } from '../../server/index';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { ctx } from '../../server/context';
import type { SessionCache } from '../../server/services/session-cache';

let t: TestApp;
let db: pg.Client; // a connection of the test's own, as another process or an operator would have
let cache: SessionCache;

beforeAll(async () => {
  t = await createTestApp({ config: { loginRateLimit: { windowMs: 60_000, max: 100 } } });
  db = new pg.Client({ connectionString: t.databaseUrl });
  await db.connect();
  cache = ctx().sessions!;
});
afterAll(async () => {
  await db?.end();
  await t?.close();
});
beforeEach(() => {
  cache.trustMs = 10 * 60_000; // so that nothing below is explained by an entry simply running out
});

async function until(what: string, ok: () => boolean | Promise<boolean>, ms = 15_000) {
  const end = Date.now() + ms;
  while (!(await ok())) {
    if (Date.now() > end) throw new Error(`waited ${ms} ms for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

async function signIn(email: string): Promise<string> {
  const r = await request(t.app).post('/api/auth/login').send({ email, password: DEMO_PASSWORD });
  expect(r.status).toBe(200);
  return r.body.token;
}
const me = (token: string) => request(t.app).get('/api/auth/me').set(bearer(token));
const setTriggers = async (how: 'ENABLE' | 'DISABLE') => {
  for (const table of ['auth_sessions', 'users']) await db.query(`ALTER TABLE ${table} ${how} TRIGGER ${table}_auth_changed`);
};
const sidOf = (token: string) => JSON.parse(Buffer.from(token.split('.')[1], 'base64url').toString()).sid as string;

describe('session cache', () => {
  it('answers a repeated request from the cache once the listener listens', async () => {
    await until('the listener', () => cache.active);
    const token = await signIn(ROLE_EMAIL.reviewer);
    expect((await me(token)).status).toBe(200);
    const hits = cache.hits;
    expect((await me(token)).status).toBe(200);
    expect((await me(token)).status).toBe(200);
    expect(cache.hits).toBe(hits + 2);
  });

  it('sees a session revoked by SQL from another connection (NOTIFY), not only after the trust window', async () => {
    const token = await signIn(ROLE_EMAIL.interpreter);
    expect((await me(token)).status).toBe(200);
    expect((await me(token)).status).toBe(200); // now kept
    await db.query('UPDATE auth_sessions SET revoked_at = now() WHERE id = $1', [sidOf(token)]);
    await until('the revoked session to be refused', async () => (await me(token)).status === 401);
  });

  it('sees an account deactivated by SQL from another connection', async () => {
    const token = await signIn(ROLE_EMAIL.curator);
    expect((await me(token)).status).toBe(200);
    expect((await me(token)).status).toBe(200);
    await db.query('UPDATE users SET active = false WHERE email = $1', [ROLE_EMAIL.curator]);
    try {
      await until('the deactivated account to be refused', async () => (await me(token)).status === 401);
    } finally {
      await db.query('UPDATE users SET active = true WHERE email = $1', [ROLE_EMAIL.curator]);
    }
  });

  it('refuses on the very next request after a sign-out or a role change made through this process', async () => {
    const token = await signIn(ROLE_EMAIL.interpreter);
    expect((await me(token)).status).toBe(200);
    expect((await me(token)).status).toBe(200);
    // with the triggers off no NOTIFY comes: only the write's own model hook can empty the cache
    await setTriggers('DISABLE');
    try {
      expect((await request(t.app).post('/api/auth/logout').set(bearer(token))).status).toBe(204);
      expect((await me(token)).status).toBe(401);

      const admin = await signIn(ROLE_EMAIL.admin);
      const reviewer = await signIn(ROLE_EMAIL.reviewer);
      expect((await me(reviewer)).body.user.role).toBe('reviewer');
      expect((await me(reviewer)).body.user.role).toBe('reviewer');
      const id = (await me(reviewer)).body.user.id;
      expect((await request(t.app).patch(`/api/users/${id}`).set(bearer(admin)).send({ role: 'curator' })).status).toBe(200);
      expect((await me(reviewer)).body.user.role).toBe('curator');
      expect((await request(t.app).patch(`/api/users/${id}`).set(bearer(admin)).send({ role: 'reviewer' })).status).toBe(200);
    } finally {
      await setTriggers('ENABLE');
    }
  });

  it('checks every request in PostgreSQL while the listener is down, and uses the cache again once it is back', async () => {
    const token = await signIn(ROLE_EMAIL.reviewer);
    expect((await me(token)).status).toBe(200);
    expect((await me(token)).status).toBe(200);
    await until('the listener', () => cache.active);
    await db.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE application_name = 'cayline-session-watch' AND datname = current_database()`);
    await until('the listener to be seen gone', () => !cache.active);
    // revoke by a path that sends no notification at all: with the trigger off, only a fresh check can see it
    await setTriggers('DISABLE');
    try {
      await db.query('UPDATE auth_sessions SET revoked_at = now() WHERE id = $1', [sidOf(token)]);
    } finally {
      await setTriggers('ENABLE');
    }
    expect((await me(token)).status).toBe(401);

    await until('the listener to reconnect', () => cache.active);
    const again = await signIn(ROLE_EMAIL.reviewer);
    expect((await me(again)).status).toBe(200);
    const hits = cache.hits;
    expect((await me(again)).status).toBe(200);
    expect(cache.hits).toBe(hits + 1);
  });

  it('a token with the same claims but a forged signature never borrows a kept answer', async () => {
    const token = await signIn(ROLE_EMAIL.interpreter);
    expect((await me(token)).status).toBe(200);
    const [h, p] = token.split('.');
    expect((await me(`${h}.${p}.${'A'.repeat(43)}`)).status).toBe(401); // same header and claims, wrong signature
  });

  it('a start that fails part-way leaves no session listener connected', async () => {
    const databaseUrl = await createDatabase();
    const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-failed-start-'));
    try {
      let error: unknown = null;
      const config = { storageDir, port: 0, bcryptCost: 4, jwtSecret: crypto.randomBytes(24).toString('hex'), jobs: { runWorkers: false, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600 } };
      const afterMigrate = async () => {
        throw new Error('demo seeding failed');
      };
      await boot({ databaseUrl, listen: true, config, afterMigrate }).then(
        (running) => running.close(), // (it should not start: close it if it did)
        (e) => void (error = e),
      );
      expect(String(error)).toMatch(/demo seeding failed/);
      const name = databaseUrl.slice(databaseUrl.lastIndexOf('/') + 1);
      const { rows } = await db.query(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = $1 AND application_name = 'cayline-session-watch'`, [name]);
      expect(rows[0].n).toBe(0);
    } finally {
      fs.rmSync(storageDir, { recursive: true, force: true });
    }
  });
});
