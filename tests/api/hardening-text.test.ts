/**
 * Bad text is refused before anything is written: NUL, other control
 * characters and lone UTF-16 surrogates in any text field (JSON bodies,
 * multipart fields, the upload's file name, query strings) answer 400
 * `validation_failed` naming the field, and leave no row, no audit line and
 * no file behind. Multi-line fields keep their line breaks.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { makeImage, upload, FIELDS, tmpSettles, entries } from '../helpers/sections';
import { readyCalibratedSection, savedBuildup, SMALL_GEOMETRY } from '../helpers/api-fixtures';

const NUL = '\u0000';
const LONE = '\ud83c'; // the first half of a surrogate pair, alone
const MESSAGE = 'must not contain control characters or broken Unicode';

let t: TestApp;
let db: pg.Client;
let admin: string;
let interp: string;
let projectId: number;
let sectionId: number;

async function count(sql: string, params: unknown[] = []): Promise<number> {
  return Number((await db.query(`SELECT count(*)::int AS n FROM ${sql}`, params)).rows[0].n);
}

function expectRefused(r: request.Response, path: string, message = MESSAGE) {
  expect(r.status, JSON.stringify(r.body)).toBe(400);
  expect(r.body.code).toBe('validation_failed');
  expect(r.body.details).toContainEqual({ path, message });
  expect(r.body.message).toContain(`${path}: ${message}`);
}

beforeAll(async () => {
  t = await createTestApp();
  db = new pg.Client({ connectionString: t.databaseUrl });
  await db.connect();
  admin = await t.token('admin');
  interp = await t.token('interpreter');
  const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Marrow Bank text checks' });
  expect(p.status).toBe(201);
  projectId = p.body.id;
  sectionId = await readyCalibratedSection(t, interp, projectId);
}, 90_000);
afterAll(async () => {
  await db?.end();
  await t?.close();
});

describe('projects', () => {
  it('a NUL in the name is refused, not rewritten, and nothing is written', async () => {
    const projects = await count('projects');
    const audits = await count('audit_events');
    const r = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: `Shoal${NUL}study` });
    expectRefused(r, 'name');
    expect(await count('projects')).toBe(projects);
    expect(await count('audit_events')).toBe(audits);
  });

  it('a lone surrogate in the description is refused and nothing is written', async () => {
    const projects = await count('projects');
    const r = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Shoal study', description: `Reef ${LONE} margin` });
    expectRefused(r, 'description');
    expect(await count('projects')).toBe(projects);
  });

  it('an update with bad text changes nothing', async () => {
    const before = (await db.query('SELECT name, description FROM projects WHERE id = $1', [projectId])).rows[0];
    for (const body of [{ name: `Renamed${LONE}` }, { description: `x${NUL}` }, { name: 'Renamed\nagain' }]) {
      const r = await request(t.app).patch(`/api/projects/${projectId}`).set(bearer(interp)).send(body);
      expectRefused(r, Object.keys(body)[0]);
    }
    expect((await db.query('SELECT name, description FROM projects WHERE id = $1', [projectId])).rows[0]).toEqual(before);
  });

  it('a multi-line description keeps its line breaks and tab', async () => {
    const r = await request(t.app).patch(`/api/projects/${projectId}`).set(bearer(interp)).send({ description: 'Line one\r\n\tLine two' });
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.description).toBe('Line one\r\n\tLine two');
  });

  it('the search text of a list is checked too', async () => {
    expectRefused(await request(t.app).get(`/api/projects?q=${encodeURIComponent(`sh${NUL}`)}`).set(bearer(interp)), 'q');
    expectRefused(await request(t.app).get(`/api/users?q=${encodeURIComponent(`a${NUL}`)}`).set(bearer(admin)), 'q');
    expectRefused(await request(t.app).get(`/api/projects/${projectId}/sections?q=${encodeURIComponent(`TB${NUL}`)}`).set(bearer(interp)), 'q');
  });
});

describe('users', () => {
  it('a new account with a bad name is refused and not created', async () => {
    const users = await count('users');
    const r = await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'nul@tessel.example', name: `Ana${NUL}`, role: 'reviewer', password: 'long enough pw' });
    expectRefused(r, 'name');
    expect(await count('users')).toBe(users);
    expect(await count('users WHERE email = $1', ['nul@tessel.example'])).toBe(0);
  });

  it('renaming an account to broken text changes nothing', async () => {
    const id = (await db.query("SELECT id, name FROM users WHERE email = 'reviewer@tessel.example'")).rows[0];
    expectRefused(await request(t.app).patch(`/api/users/${id.id}`).set(bearer(admin)).send({ name: `Rev${LONE}` }), 'name');
    expect((await db.query('SELECT name FROM users WHERE id = $1', [id.id])).rows[0].name).toBe(id.name);
  });
});

describe('buildups', () => {
  it('a new buildup with a bad name is refused and not created', async () => {
    const rows = await count('buildups');
    const audits = await count('audit_events');
    expectRefused(await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: `Kestrel${NUL}` }), 'name');
    expectRefused(await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name: `Kestrel${LONE}` }), 'name');
    expect(await count('buildups')).toBe(rows);
    expect(await count('audit_events')).toBe(audits);
  });

  it('a save with a bad name or systems tract changes nothing', async () => {
    const b = await savedBuildup(t, interp, sectionId, 'Kestrel Knoll text');
    const geometry = { ...SMALL_GEOMETRY, cycles: [{ ...SMALL_GEOMETRY.cycles[0], systemsTract: `HST${NUL}` }] };
    expectRefused(await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: b.version, geometry }), 'geometry.cycles[0].systemsTract');
    expectRefused(await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: b.version, name: `K${LONE}`, geometry: SMALL_GEOMETRY }), 'name');
    const row = (await db.query('SELECT name, version FROM buildups WHERE id = $1', [b.id])).rows[0];
    expect(row).toEqual({ name: 'Kestrel Knoll text', version: b.version });
  });

  it('an interpretation sent for measuring names the bad buildup name', async () => {
    const interpretation = {
      verticalDomain: 'depth_m',
      buildups: [{ name: `Kestrel${NUL}`, base: [[0, 1000], [4000, 1000]], cycles: [{ index: 1, top: [[500, 900], [2000, 800], [3500, 900]], marginLeft: [500, 900], marginRight: [3500, 900] }] }],
    };
    const r = await request(t.app).post('/api/measure').set(bearer(interp)).send({ interpretation });
    expect(r.status, JSON.stringify(r.body)).toBe(400);
    expect(r.body.message).toContain(`buildups[0].name: ${MESSAGE}`);
  });
});

describe('sections', () => {
  it('an upload with a NUL in a multipart text field is refused: no row, no file', async () => {
    const rows = await count('sections');
    const stored = entries(t, 'sections').length;
    const r = await upload(t, interp, projectId, await makeImage('png', 64, 32), 'section.png', { ...FIELDS, title: `TB-11${NUL}` });
    expectRefused(r, 'title');
    expect(await count('sections')).toBe(rows);
    expect(entries(t, 'sections').length).toBe(stored);
    expect(await tmpSettles(t)).toEqual([]);
  });

  it('an upload whose file name carries a control character or broken Unicode is refused: no row, no file', async () => {
    const rows = await count('sections');
    for (const name of [`sec${NUL}tion.png`, 'sec\u0007tion.png', 'sec\u0085tion.png']) {
      const r = await upload(t, interp, projectId, await makeImage('png', 64, 32), name);
      expect(r.status, `${JSON.stringify(name)}: ${JSON.stringify(r.body)}`).toBe(400);
      // a raw NUL or BEL in the part header is refused by the multipart parser itself; the rest reach the name check
      expect(['validation_failed', 'bad_multipart']).toContain(r.body.code);
      if (r.body.code === 'validation_failed') expect(r.body.details).toContainEqual({ path: 'image', message: `the file name ${MESSAGE}` });
    }
    // RFC 5987 form (filename*=) decodes %00 to a real NUL: the name check catches it
    const star = await request(t.app)
      .post(`/api/projects/${projectId}/sections`)
      .set(bearer(interp))
      .set('Content-Type', 'multipart/form-data; boundary=xx')
      .send(
        [
          '--xx', 'Content-Disposition: form-data; name="title"', '', 'TB-11', '--xx', 'Content-Disposition: form-data; name="verticalDomain"', '', 'twt_ms',
          '--xx', "Content-Disposition: form-data; name=\"image\"; filename*=utf-8''sec%00tion.png", 'Content-Type: image/png', '', (await makeImage('png', 16, 8)).toString('latin1'), '--xx--', '',
        ].join('\r\n'),
      );
    expectRefused(star, 'image', `the file name ${MESSAGE}`);
    expect(await count('sections')).toBe(rows);
    expect(await tmpSettles(t)).toEqual([]);
  });

  it('a file name in another script is kept as UTF-8 and accepted', async () => {
    const r = await upload(t, interp, projectId, await makeImage('png', 64, 32), 'Kestrel-Å-ケ.png');
    expect(r.status, JSON.stringify(r.body)).toBe(202);
  });

  it('metadata edits with bad text change nothing', async () => {
    const before = (await db.query('SELECT title, line_name, survey, notes, version FROM sections WHERE id = $1', [sectionId])).rows[0];
    for (const [k, v] of [['title', `T${NUL}`], ['lineName', `TB${LONE}`], ['survey', 'TB\t2024'], ['notes', `ok\n${NUL}`], ['polarityNote', `x${LONE}`]] as const) {
      expectRefused(await request(t.app).patch(`/api/sections/${sectionId}`).set(bearer(interp)).send({ version: before.version, [k]: v }), k);
    }
    expect((await db.query('SELECT title, line_name, survey, notes, version FROM sections WHERE id = $1', [sectionId])).rows[0]).toEqual(before);
    const ok = await request(t.app).patch(`/api/sections/${sectionId}`).set(bearer(interp)).send({ version: before.version, notes: 'Picked on\n\tTB-11' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
  });
});

describe('sign-in', () => {
  it('a password with a NUL is refused with its field named', async () => {
    const r = await request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: `x${NUL}` });
    expectRefused(r, 'password');
  });
});
