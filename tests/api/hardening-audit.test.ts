/**
 * Every change and its audit line are written in one transaction: when the
 * audit insert fails, the change is not there either. A test-only trigger on
 * `audit_events` raises for the actions listed in a `audit_fail` table.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup, SMALL_GEOMETRY } from '../helpers/api-fixtures';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';

let t: TestApp;
let db: pg.Client;
let admin: string;
let interp: string;
let projectId: number;
let sectionId: number;

const one = async (sql: string, params: unknown[] = []) => (await db.query(sql, params)).rows[0];
const n = async (sql: string, params: unknown[] = []) => Number((await db.query(`SELECT count(*)::int AS n FROM ${sql}`, params)).rows[0].n);

/** Run `act` while audit lines of `action` fail; expect the request to fail and nothing to change. */
async function withFailingAudit(action: string, act: () => Promise<request.Response>) {
  const lines = await n('audit_events WHERE action = $1', [action]);
  await db.query('INSERT INTO audit_fail (action) VALUES ($1)', [action]);
  try {
    const r = await act();
    expect(r.status, `${action}: ${JSON.stringify(r.body)}`).toBe(500);
  } finally {
    await db.query('DELETE FROM audit_fail WHERE action = $1', [action]);
  }
  expect(await n('audit_events WHERE action = $1', [action])).toBe(lines);
}

beforeAll(async () => {
  t = await createTestApp();
  db = new pg.Client({ connectionString: t.databaseUrl });
  await db.connect();
  await db.query('CREATE TABLE audit_fail (action text PRIMARY KEY)');
  await db.query(`CREATE FUNCTION audit_fail_check() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF EXISTS (SELECT 1 FROM audit_fail f WHERE f.action = NEW.action) THEN
        RAISE EXCEPTION 'audit insert refused for % (test trigger)', NEW.action;
      END IF;
      RETURN NEW;
    END $$`);
  await db.query('CREATE TRIGGER audit_fail_check BEFORE INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION audit_fail_check()');
  admin = await t.token('admin');
  interp = await t.token('interpreter');
  const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Tessel Basin audit checks' });
  projectId = p.body.id;
  sectionId = await readyCalibratedSection(t, interp, projectId);
}, 90_000);
afterAll(async () => {
  await db?.end();
  await t?.close();
});

describe('a failed audit line undoes the change', () => {
  it('the trigger works (so the checks below can fail)', async () => {
    await db.query("INSERT INTO audit_fail (action) VALUES ('probe')");
    await expect(db.query("INSERT INTO audit_events (action, created_at) VALUES ('probe', now())")).rejects.toThrow(/test trigger/);
    await db.query("DELETE FROM audit_fail WHERE action = 'probe'");
  });

  it('project create, update, member add', async () => {
    const projects = await n('projects');
    await withFailingAudit('project.create', () => request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Never stored' }));
    expect(await n('projects')).toBe(projects);

    const before = await one('SELECT name, description, version FROM projects WHERE id = $1', [projectId]);
    await withFailingAudit('project.update', () => request(t.app).patch(`/api/projects/${projectId}`).set(bearer(interp)).send({ name: 'Renamed', description: 'changed' }));
    expect(await one('SELECT name, description, version FROM projects WHERE id = $1', [projectId])).toEqual(before);

    const reviewer = await one("SELECT id FROM users WHERE email = 'reviewer@tessel.example'");
    await withFailingAudit('project.member.add', () => request(t.app).post(`/api/projects/${projectId}/members`).set(bearer(interp)).send({ userId: reviewer.id }));
    expect(await n('project_members WHERE project_id = $1 AND user_id = $2', [projectId, reviewer.id])).toBe(0);
  });

  it('user create and update (with the sign-out of a deactivated account)', async () => {
    await withFailingAudit('user.create', () =>
      request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'audit-fail@tessel.example', name: 'Never stored', role: 'reviewer', password: 'long enough pw' }),
    );
    expect(await n("users WHERE email = 'audit-fail@tessel.example'")).toBe(0);

    const curatorToken = await t.token('curator');
    const curator = await one("SELECT id, name, active FROM users WHERE email = 'curator@tessel.example'");
    await withFailingAudit('user.update', () => request(t.app).patch(`/api/users/${curator.id}`).set(bearer(admin)).send({ name: 'Renamed', active: false }));
    expect(await one('SELECT id, name, active FROM users WHERE id = $1', [curator.id])).toEqual(curator);
    expect((await request(t.app).get('/api/auth/me').set(bearer(curatorToken))).status).toBe(200); // sessions not revoked
  });

  it('sign-in: no session without its audit line', async () => {
    const sessions = await n('auth_sessions');
    await withFailingAudit('auth.login', () => request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: DEMO_PASSWORD }));
    expect(await n('auth_sessions')).toBe(sessions);
  });

  it('buildup create, save, delete and the section velocity', async () => {
    const buildups = await n('buildups');
    await withFailingAudit('buildup.create', () => request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: 'Never stored' }));
    expect(await n('buildups')).toBe(buildups);

    const b = await savedBuildup(t, interp, sectionId, 'Marrow Bank audit');
    const row = await one('SELECT name, version, geometry FROM buildups WHERE id = $1', [b.id]);
    await withFailingAudit('buildup.save', () =>
      request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: b.version, name: 'Renamed', geometry: { ...SMALL_GEOMETRY, topIsDrowningSurface: true } }),
    );
    expect(await one('SELECT name, version, geometry FROM buildups WHERE id = $1', [b.id])).toEqual(row);
    await withFailingAudit('buildup.delete', () => request(t.app).delete(`/api/buildups/${b.id}`).set(bearer(interp)));
    expect(await n('buildups WHERE id = $1', [b.id])).toBe(1);

    await withFailingAudit('section.velocity', () =>
      request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(interp)).send({ velocity: { kind: 'constant', v: 2500 } }),
    );
    expect(await n('section_velocities WHERE section_id = $1', [sectionId])).toBe(0);
  });

  it('section metadata', async () => {
    const before = await one('SELECT title, notes, version FROM sections WHERE id = $1', [sectionId]);
    await withFailingAudit('section.update', () => request(t.app).patch(`/api/sections/${sectionId}`).set(bearer(interp)).send({ version: before.version, title: 'Renamed', notes: 'changed' }));
    expect(await one('SELECT title, notes, version FROM sections WHERE id = $1', [sectionId])).toEqual(before);
    // and the section can still be edited afterwards with the same version
    const ok = await request(t.app).patch(`/api/sections/${sectionId}`).set(bearer(interp)).send({ version: before.version, title: 'TB-11 renamed' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
  });
});
