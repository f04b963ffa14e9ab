/**
 * A failed library change leaves nothing behind: when the audit line cannot be
 * written (a test-only trigger refuses it), no analogue row is stored, an
 * update is not applied, an import stores no row, and a promotion leaves no
 * crop file in storage.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import request from 'supertest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup } from '../helpers/api-fixtures';

let t: TestApp;
let db: pg.Client;
let curator: string;
let buildupId: number;

const n = async (where = 'true') => Number((await db.query(`SELECT count(*)::int AS n FROM analogues WHERE ${where}`)).rows[0].n);
const crops = () => {
  const dir = path.join(t.storageDir, 'analogues', 'crops');
  return fs.existsSync(dir) ? fs.readdirSync(dir) : [];
};

async function failing(action: string, act: () => Promise<request.Response>) {
  await db.query('INSERT INTO audit_fail (action) VALUES ($1)', [action]);
  try {
    const r = await act();
    expect(r.status, JSON.stringify(r.body)).toBe(500);
  } finally {
    await db.query('DELETE FROM audit_fail WHERE action = $1', [action]);
  }
}

beforeAll(async () => {
  t = await createTestApp();
  db = new pg.Client({ connectionString: t.databaseUrl });
  await db.connect();
  await db.query('CREATE TABLE audit_fail (action text PRIMARY KEY)');
  await db.query(`CREATE FUNCTION audit_fail_check() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF EXISTS (SELECT 1 FROM audit_fail f WHERE f.action = NEW.action) THEN RAISE EXCEPTION 'audit insert refused for % (test trigger)', NEW.action; END IF;
      RETURN NEW;
    END $$`);
  await db.query('CREATE TRIGGER audit_fail_check BEFORE INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION audit_fail_check()');
  curator = await t.token('curator');
  const interp = await t.token('interpreter');
  const projects = await request(t.app).get('/api/projects').set(bearer(interp));
  const demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  buildupId = (await savedBuildup(t, interp, await readyCalibratedSection(t, interp, demoId), 'Marrow Bank')).id;
}, 120_000);
afterAll(async () => {
  await db?.end();
  await t?.close();
});

describe('failed library changes leave nothing', () => {
  it('promotion: no row and no crop file', async () => {
    await failing('analogue.promote', () => request(t.app).post(`/api/buildups/${buildupId}/promote`).set(bearer(curator)).send({}));
    expect(await n()).toBe(0);
    expect(crops()).toEqual([]);
    // the same promotion goes through once the audit line can be written, and keeps its crop
    const ok = await request(t.app).post(`/api/buildups/${buildupId}/promote`).set(bearer(curator)).send({});
    expect(ok.status).toBe(201);
    expect(crops()).toHaveLength(1);
  });

  it('hand entry, update and import', async () => {
    const before = await n();
    await failing('analogue.create', () => request(t.app).post('/api/analogues').set(bearer(curator)).send({ name: 'Never Knoll', metrics: { heightM: 10 }, basis: 'depth' }));
    expect(await n()).toBe(before);
    const a = (await request(t.app).post('/api/analogues').set(bearer(curator)).send({ name: 'Kept Knoll', metrics: { heightM: 10 }, basis: 'depth' })).body;
    await failing('analogue.update', () => request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: a.version, name: 'Renamed', tags: ['x'] }));
    expect((await db.query('SELECT name, version, tags FROM analogues WHERE id = $1', [a.id])).rows[0]).toEqual({ name: 'Kept Knoll', version: a.version, tags: [] });
    const csv = 'name,height_m\nImport One,10\nImport Two,20\n';
    await failing('analogue.import', () =>
      request(t.app)
        .post('/api/analogues/import')
        .set(bearer(curator))
        .field('mapping', JSON.stringify({ columns: { name: 'name', height_m: 'heightM' }, lengthUnit: 'm' }))
        .field('mode', 'all')
        .attach('file', Buffer.from(csv), 'a.csv'),
    );
    expect(await n("name LIKE 'Import%'")).toBe(0);
  });
});
