/**
 * Accounts are safe: who can read the people directory, project owners, the
 * per-account sign-in delay (state in PostgreSQL), and which client address
 * the per-address limit sees.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import pg from 'pg';
import { createDatabase, createTestApp, bearer, ROLE_EMAIL, type TestApp } from '../helpers/app';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { createSequelize } from '../../server/db/sequelize';
import { migrator } from '../../server/db/migrate';
import { throttleKey } from '../../server/services/login-throttle.service';

async function sql<T extends pg.QueryResultRow = pg.QueryResultRow>(url: string, text: string, values: unknown[] = []) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return (await c.query<T>(text, values)).rows;
  } finally {
    await c.end();
  }
}

type DirEntry = { id: number; name: string; email: string; role: string };
type Member = { id: number; email: string; projectRole: string };

describe('people directory and project owners', () => {
  let t: TestApp;
  let admin: string;
  let interp: string;
  let ids: Record<string, number>;
  let lonerToken: string;
  let outsiderToken: string;

  beforeAll(async () => {
    t = await createTestApp();
    admin = await t.token('admin');
    interp = await t.token('interpreter');
    const make = async (email: string, name: string, role: string) => {
      const r = await request(t.app).post('/api/users').set(bearer(admin)).send({ email, name, role, password: 'long-enough-pw' });
      expect(r.status).toBe(201);
      return r.body.id as number;
    };
    ids = {
      loner: await make('loner@tessel.example', 'Lena Tern', 'reviewer'),
      outsider: await make('outsider@tessel.example', 'Otto Brack', 'interpreter'),
    };
    const users = await request(t.app).get('/api/users?pageSize=200').set(bearer(admin));
    for (const u of users.body.items as DirEntry[]) ids[u.email.split('@')[0]] = u.id;
    lonerToken = (await request(t.app).post('/api/auth/login').send({ email: 'loner@tessel.example', password: 'long-enough-pw' })).body.token;
    outsiderToken = (await request(t.app).post('/api/auth/login').send({ email: 'outsider@tessel.example', password: 'long-enough-pw' })).body.token;
    // The outsider works on a project of their own that no demo user belongs to.
    const own = await request(t.app).post('/api/projects').set(bearer(outsiderToken)).send({ name: 'Marrow Bank flank' });
    expect(own.status).toBe(201);
  });
  afterAll(async () => t?.close());

  const emails = (body: DirEntry[]) => body.map((u) => u.email).sort();

  it('shows a user in no project nobody', async () => {
    const r = await request(t.app).get('/api/users/directory').set(bearer(lonerToken));
    expect(r.status).toBe(200);
    expect(r.body).toEqual([]);
  });

  it('shows people who share a project with the asker, and no one else', async () => {
    const r = await request(t.app).get('/api/users/directory').set(bearer(await t.token('curator')));
    expect(r.status).toBe(200);
    expect(emails(r.body)).toEqual(Object.values(ROLE_EMAIL).sort());
    const o = await request(t.app).get('/api/users/directory').set(bearer(outsiderToken));
    expect(emails(o.body)).toEqual(['outsider@tessel.example']);
  });

  it('shows admins every active account', async () => {
    const r = await request(t.app).get('/api/users/directory').set(bearer(admin));
    expect(emails(r.body)).toEqual(expect.arrayContaining(['loner@tessel.example', 'outsider@tessel.example', ...Object.values(ROLE_EMAIL)]));
  });

  it('finds one person by exact e-mail for someone who can add members, and lets them add that person', async () => {
    const r = await request(t.app).get('/api/users/directory').query({ email: 'Outsider@Tessel.example' }).set(bearer(interp));
    expect(r.status).toBe(200);
    expect(r.body).toEqual([{ id: ids.outsider, name: 'Otto Brack', email: 'outsider@tessel.example', role: 'interpreter' }]);
    const none = await request(t.app).get('/api/users/directory').query({ email: 'nobody@tessel.example' }).set(bearer(interp));
    expect(none.body).toEqual([]);
    // A part of an address is not a search.
    const part = await request(t.app).get('/api/users/directory').query({ email: 'outsider@' }).set(bearer(interp));
    expect(part.status).toBe(400);
    expect(part.body.message).toMatch(/^email: /);
    // A curator cannot add members, so an exact address outside their projects finds nothing.
    const cur = await request(t.app).get('/api/users/directory').query({ email: 'outsider@tessel.example' }).set(bearer(await t.token('curator')));
    expect(cur.status).toBe(200);
    expect(cur.body).toEqual([]);
    // An exact address of a colleague they share a project with is still found.
    const shared = await request(t.app).get('/api/users/directory').query({ email: ROLE_EMAIL.interpreter }).set(bearer(await t.token('curator')));
    expect(emails(shared.body)).toEqual([ROLE_EMAIL.interpreter]);

    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Kestrel Knoll crest' });
    const add = await request(t.app).post(`/api/projects/${p.body.id}/members`).set(bearer(interp)).send({ userId: r.body[0].id });
    expect(add.status).toBe(201);
    const after = await request(t.app).get('/api/users/directory').set(bearer(interp));
    expect(emails(after.body)).toContain('outsider@tessel.example');
  });

  it('makes the creator the owner, and shows the owner in the member list', async () => {
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'TB-14 owners' });
    expect(p.status).toBe(201);
    expect(p.body.owner).toEqual({ id: ids.interpreter, name: 'Ivo Marlstone' });
    expect(p.body.members.map((m: Member) => [m.email, m.projectRole])).toEqual([[ROLE_EMAIL.interpreter, 'owner']]);
    await request(t.app).post(`/api/projects/${p.body.id}/members`).set(bearer(interp)).send({ userId: ids.curator });
    const ms = await request(t.app).get(`/api/projects/${p.body.id}/members`).set(bearer(await t.token('curator')));
    expect(ms.status).toBe(200);
    expect(Object.fromEntries(ms.body.map((m: Member) => [m.email, m.projectRole]))).toEqual({
      [ROLE_EMAIL.interpreter]: 'owner',
      [ROLE_EMAIL.curator]: 'member',
    });
    const list = await request(t.app).get('/api/projects?q=TB-14 owners').set(bearer(interp));
    expect(list.body.items[0].owner).toEqual({ id: ids.interpreter, name: 'Ivo Marlstone' });
  });

  it('keeps the owner in the project: another member gets 403, the owner and admins 409 until ownership moves', async () => {
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Margin guard' });
    const pid = p.body.id;
    for (const u of [ids.outsider, ids.reviewer]) {
      expect((await request(t.app).post(`/api/projects/${pid}/members`).set(bearer(interp)).send({ userId: u })).status).toBe(201);
    }
    const byMember = await request(t.app).delete(`/api/projects/${pid}/members/${ids.interpreter}`).set(bearer(outsiderToken));
    expect(byMember.status).toBe(403);
    const self = await request(t.app).delete(`/api/projects/${pid}/members/${ids.interpreter}`).set(bearer(interp));
    expect(self.status).toBe(409);
    expect(self.body).toMatchObject({ code: 'owner_required' });
    expect(self.body.message).toMatch(/owner/i);
    const byAdmin = await request(t.app).delete(`/api/projects/${pid}/members/${ids.interpreter}`).set(bearer(admin));
    expect(byAdmin.status).toBe(409);
    // Other members can still be removed by an interpreter member.
    expect((await request(t.app).delete(`/api/projects/${pid}/members/${ids.reviewer}`).set(bearer(outsiderToken))).status).toBe(204);
    const still = await request(t.app).get(`/api/projects/${pid}/members`).set(bearer(interp));
    expect(still.body.find((m: Member) => m.projectRole === 'owner').id).toBe(ids.interpreter);
  });

  it('lets only the owner or an admin move ownership, to an interpreter or admin member, with an audit record', async () => {
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Handover' });
    const pid = p.body.id;
    for (const u of [ids.outsider, ids.curator]) await request(t.app).post(`/api/projects/${pid}/members`).set(bearer(interp)).send({ userId: u });
    const url = `/api/projects/${pid}/owner`;

    expect((await request(t.app).put(url).send({ userId: ids.outsider })).status).toBe(401);
    expect((await request(t.app).put(url).set(bearer(lonerToken)).send({ userId: ids.outsider })).status).toBe(404);
    expect((await request(t.app).put(url).set(bearer(outsiderToken)).send({ userId: ids.outsider })).status).toBe(403);
    expect((await request(t.app).put(url).set(bearer(await t.token('curator'))).send({ userId: ids.curator })).status).toBe(403);
    const bad = await request(t.app).put(url).set(bearer(interp)).send({ userId: 'x' });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^userId: /);
    const notMember = await request(t.app).put(url).set(bearer(interp)).send({ userId: ids.loner });
    expect(notMember.status).toBe(400);
    expect(notMember.body.message).toMatch(/^userId: .*member/);
    const curator = await request(t.app).put(url).set(bearer(interp)).send({ userId: ids.curator });
    expect(curator.status).toBe(400);
    expect(curator.body.message).toMatch(/^userId: /);

    const moved = await request(t.app).put(url).set(bearer(interp)).send({ userId: ids.outsider });
    expect(moved.status).toBe(200);
    expect(moved.body.owner).toEqual({ id: ids.outsider, name: 'Otto Brack' });
    expect(moved.body.members.filter((m: Member) => m.projectRole === 'owner').map((m: Member) => m.id)).toEqual([ids.outsider]);
    const rows = await sql(t.databaseUrl, `SELECT user_id, details FROM audit_events WHERE action = 'project.owner.transfer' AND target_id = $1`, [String(pid)]);
    expect(rows).toEqual([{ user_id: ids.interpreter, details: { from: ids.interpreter, to: ids.outsider } }]);

    // The former owner is now an ordinary member: the new owner may remove them, and they may no longer move ownership.
    expect((await request(t.app).put(url).set(bearer(interp)).send({ userId: ids.interpreter })).status).toBe(403);
    expect((await request(t.app).delete(`/api/projects/${pid}/members/${ids.interpreter}`).set(bearer(outsiderToken))).status).toBe(204);
    // An admin who is not a member may move it too.
    await request(t.app).post(`/api/projects/${pid}/members`).set(bearer(outsiderToken)).send({ userId: ids.interpreter });
    const byAdmin = await request(t.app).put(url).set(bearer(admin)).send({ userId: ids.interpreter });
    expect(byAdmin.status).toBe(200);
    expect(byAdmin.body.owner.id).toBe(ids.interpreter);
  });

  it('lets the owner or an admin delete a project, not the creator once ownership moved', async () => {
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'To be removed' });
    const pid = p.body.id;
    await request(t.app).post(`/api/projects/${pid}/members`).set(bearer(interp)).send({ userId: ids.outsider });
    expect((await request(t.app).delete(`/api/projects/${pid}`).set(bearer(outsiderToken))).status).toBe(403);
    expect((await request(t.app).put(`/api/projects/${pid}/owner`).set(bearer(interp)).send({ userId: ids.outsider })).status).toBe(200);
    expect((await request(t.app).delete(`/api/projects/${pid}`).set(bearer(interp))).status).toBe(403);
    expect((await request(t.app).delete(`/api/projects/${pid}`).set(bearer(outsiderToken))).status).toBe(204);
  });

  it('seeds the demo project with its creator as owner', async () => {
    const list = await request(t.app).get('/api/projects?q=Tessel Basin screening').set(bearer(interp));
    expect(list.body.items[0].owner).toEqual({ id: ids.interpreter, name: 'Ivo Marlstone' });
  });
});

describe('migration 0004: owners from the existing data', () => {
  it('makes the creator the owner, or the earliest interpreter/admin member when the creator left; one owner at most', async () => {
    const url = await createDatabase();
    const seq = createSequelize(url);
    try {
      const m = migrator(seq);
      await m.up({ to: '0003-buildups' });
      await seq.query(`
        INSERT INTO users (id, email, name, role, password_hash, created_at, updated_at) VALUES
          (1, 'a@tessel.example', 'A', 'interpreter', 'x', now(), now()), (2, 'b@tessel.example', 'B', 'interpreter', 'x', now(), now()),
          (3, 'c@tessel.example', 'C', 'reviewer', 'x', now(), now()), (4, 'd@tessel.example', 'D', 'admin', 'x', now(), now());
        INSERT INTO projects (id, name, created_by_id, created_at, updated_at) VALUES
          (1, 'creator stays', 1, now(), now()), (2, 'creator left', 1, now(), now()),
          (3, 'no creator', NULL, now(), now()), (4, 'only a reviewer', NULL, now(), now());
        INSERT INTO project_members (project_id, user_id, created_at, updated_at) VALUES
          (1, 1, '2024-01-02', now()), (1, 2, '2024-01-01', now()),
          (2, 3, '2024-01-01', now()), (2, 4, '2024-01-03', now()), (2, 2, '2024-01-02', now()),
          (3, 2, '2024-01-01', now()),
          (4, 3, '2024-01-01', now());`);
      await m.up({ to: '0004-project-owner' });
      const [rows] = await seq.query(`SELECT project_id, user_id, role FROM project_members ORDER BY project_id, user_id`);
      expect(rows).toEqual([
        { project_id: 1, user_id: 1, role: 'owner' },
        { project_id: 1, user_id: 2, role: 'member' },
        { project_id: 2, user_id: 2, role: 'owner' },
        { project_id: 2, user_id: 3, role: 'member' },
        { project_id: 2, user_id: 4, role: 'member' },
        { project_id: 3, user_id: 2, role: 'owner' },
        { project_id: 4, user_id: 3, role: 'member' },
      ]);
      await expect(seq.query(`UPDATE project_members SET role = 'owner' WHERE project_id = 1 AND user_id = 2`)).rejects.toThrow();
      await expect(seq.query(`UPDATE project_members SET role = 'boss' WHERE project_id = 4`)).rejects.toThrow();
      const [tables] = await seq.query(`SELECT to_regclass('login_throttles') AS t`);
      expect((tables as { t: string | null }[])[0].t).toBe('login_throttles');
      await m.down({ to: '0004-project-owner' });
      const [cols] = await seq.query(`SELECT column_name FROM information_schema.columns WHERE table_name = 'project_members' AND column_name = 'role'`);
      expect(cols).toEqual([]);
    } finally {
      await seq.close();
    }
  });
});

describe('per-account sign-in delay', () => {
  let t: TestApp;
  let secret: string;
  // A long first delay (60 s) so that no test depends on how fast the machine answers.
  const LIMIT = { freeAttempts: 3, baseDelayMs: 60_000, maxDelayMs: 15 * 60_000, windowMs: 60 * 60_000 };
  const login = (email: string, password: string, from: string) =>
    request(t.app).post('/api/auth/login').set('X-Forwarded-For', from).send({ email, password });
  const row = async (email: string) =>
    (
      await sql<{ failed_count: number; lock_ms: number | null }>(
        t.databaseUrl,
        `SELECT failed_count, (extract(epoch FROM locked_until - last_attempt_at) * 1000)::int AS lock_ms FROM login_throttles WHERE key = $1`,
        [throttleKey(secret, email)],
      )
    )[0];
  /** Let the current delay pass without waiting: move the lock and last attempt into the past. */
  const expire = (email: string) =>
    sql(
      t.databaseUrl,
      `UPDATE login_throttles SET locked_until = now() - interval '1 second', last_attempt_at = now() - interval '1 second' - (locked_until - last_attempt_at) WHERE key = $1`,
      [throttleKey(secret, email)],
    );

  beforeAll(async () => {
    // A trusted proxy on loopback, so each request can come from another client address.
    t = await createTestApp({ config: { trustProxy: 'loopback', loginRateLimit: { windowMs: 60_000, max: 1000 }, loginAccountLimit: LIMIT } });
    secret = t.running.config.jwtSecret;
  });
  afterAll(async () => t?.close());

  it('refuses an account after N failures from any address, with Retry-After, even with the right password', async () => {
    for (let i = 0; i < 3; i++) expect((await login(ROLE_EMAIL.curator, 'wrong-password', `203.0.113.${i + 1}`)).status).toBe(401);
    const r = await login(ROLE_EMAIL.curator, DEMO_PASSWORD, '198.51.100.7');
    expect(r.status).toBe(429);
    expect(r.body).toMatchObject({ code: 'rate_limited' });
    expect(Number(r.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(Number(r.headers['retry-after'])).toBeLessThanOrEqual(60);
    expect(await row(ROLE_EMAIL.curator)).toEqual({ failed_count: 3, lock_ms: 60_000 });
  });

  it('treats an unknown e-mail exactly like a known one', async () => {
    const known: number[] = [];
    const unknown: number[] = [];
    for (let i = 0; i < 4; i++) {
      known.push((await login(ROLE_EMAIL.reviewer, 'wrong-password', '203.0.113.9')).status);
      unknown.push((await login('ghost@tessel.example', 'wrong-password', '203.0.113.9')).status);
    }
    expect(known).toEqual([401, 401, 401, 429]);
    expect(unknown).toEqual(known);
    const a = await login(ROLE_EMAIL.reviewer, 'wrong-password', '203.0.113.9');
    const b = await login('ghost@tessel.example', 'wrong-password', '203.0.113.9');
    expect(a.body).toEqual(b.body);
    expect(a.headers['retry-after']).toBe(b.headers['retry-after']);
    expect(await row('ghost@tessel.example')).toEqual(await row(ROLE_EMAIL.reviewer));
  });

  it('doubles the delay after each further failure, up to 15 minutes', async () => {
    const who = 'grow@tessel.example';
    for (let i = 0; i < 3; i++) await login(who, 'wrong-password', '203.0.113.20');
    expect((await row(who)).lock_ms).toBe(60_000);
    await expire(who);
    expect((await login(who, 'wrong-password', '203.0.113.21')).status).toBe(401);
    expect(await row(who)).toEqual({ failed_count: 4, lock_ms: 120_000 });
    await expire(who);
    expect((await login(who, 'wrong-password', '203.0.113.22')).status).toBe(401);
    expect(await row(who)).toEqual({ failed_count: 5, lock_ms: 240_000 });
    const refused = await login(who, 'wrong-password', '203.0.113.23');
    expect(refused.status).toBe(429);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(Number(refused.headers['retry-after'])).toBeLessThanOrEqual(240);
    expect((await row(who)).failed_count).toBe(5); // a refused attempt is not counted
    await sql(t.databaseUrl, `UPDATE login_throttles SET failed_count = 200 WHERE key = $1`, [throttleKey(secret, who)]);
    await expire(who);
    await login(who, 'wrong-password', '203.0.113.24');
    expect(await row(who)).toEqual({ failed_count: 201, lock_ms: 15 * 60_000 });
  });

  it('forgets failures after a success, and after the window passes', async () => {
    const admin = ROLE_EMAIL.admin;
    for (let i = 0; i < 3; i++) await login(admin, 'wrong-password', '203.0.113.30');
    expect((await login(admin, DEMO_PASSWORD, '203.0.113.30')).status).toBe(429);
    await expire(admin);
    expect((await login(admin, DEMO_PASSWORD, '203.0.113.31')).status).toBe(200);
    expect(await row(admin)).toBeUndefined();
    expect((await login(admin, 'wrong-password', '203.0.113.31')).status).toBe(401);
    expect(await row(admin)).toEqual({ failed_count: 1, lock_ms: null });

    const who = 'window@tessel.example';
    for (let i = 0; i < 3; i++) await login(who, 'wrong-password', '203.0.113.40');
    await sql(
      t.databaseUrl,
      `UPDATE login_throttles SET failed_count = 9, last_attempt_at = now() - interval '61 minutes', locked_until = now() - interval '46 minutes' WHERE key = $1`,
      [throttleKey(secret, who)],
    );
    expect((await login(who, 'wrong-password', '203.0.113.41')).status).toBe(401);
    expect(await row(who)).toEqual({ failed_count: 1, lock_ms: null });
  });

  it('keeps the state in PostgreSQL, so a second server process refuses too', async () => {
    const who = 'shared@tessel.example';
    for (let i = 0; i < 3; i++) await login(who, 'wrong-password', '203.0.113.50');
    const other = await createTestApp({
      databaseUrl: t.databaseUrl,
      seed: false,
      config: { jwtSecret: secret, loginRateLimit: { windowMs: 60_000, max: 1000 }, loginAccountLimit: LIMIT, jobs: { runWorkers: false } as never },
    });
    try {
      const r = await request(other.app).post('/api/auth/login').send({ email: who, password: 'wrong-password' });
      expect(r.status).toBe(429);
      expect(r.headers['retry-after']).toBeDefined();
    } finally {
      await other.close();
    }
  });
});

describe('per-address sign-in limit and X-Forwarded-For', () => {
  const attempts = async (t: TestApp, sameAddress: boolean) => {
    const out: number[] = [];
    for (let i = 0; i < 4; i++) {
      const r = await request(t.app)
        .post('/api/auth/login')
        .set('X-Forwarded-For', sameAddress ? '192.0.2.99' : `192.0.2.${i + 1}`)
        .send({ email: `spoof${i}@tessel.example`, password: 'wrong-password' });
      out.push(r.status);
    }
    return out;
  };

  it('ignores a spoofed X-Forwarded-For when no proxy is configured', async () => {
    const t = await createTestApp({ seed: false, config: { loginRateLimit: { windowMs: 60_000, max: 3 } } });
    try {
      expect(await attempts(t, false)).toEqual([401, 401, 401, 429]);
      expect(t.running.config.trustProxy).toBe(false);
    } finally {
      await t.close();
    }
  });

  it('honours X-Forwarded-For from a configured proxy', async () => {
    const t = await createTestApp({ seed: false, config: { trustProxy: 'loopback', loginRateLimit: { windowMs: 60_000, max: 3 } } });
    try {
      expect(await attempts(t, false)).toEqual([401, 401, 401, 401]);
      expect(await attempts(t, true)).toEqual([401, 401, 401, 429]);
    } finally {
      await t.close();
    }
  });
});
