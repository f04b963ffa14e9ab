/**
 * The project buildup register (GET /api/projects/:id/buildups) and its CSV
 * and GeoJSON exports; the display unit preference (GET/PUT /api/me/preferences).
 *
 * Scenario (invented): project "Tessel register" with two TB-11 sections on a
 * 200 × 100 px image (x = 20·u m, TWT = 1000 + 10·v ms); section A has line
 * geography (1.0° E → 1.1° E along the equator), section B has none. Five
 * buildups: four measurable ones whose crests rise to different heights, and
 * one never traced ("Empty sketch"), which cannot be measured.
 */
import fs from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, ROLE_EMAIL, type TestApp } from '../helpers/app';
import { FIELDS, makeImage, upload, waitForStatus } from '../helpers/sections';
import { SMALL_TIES, signIn } from '../helpers/api-fixtures';
import { needReference, pythonReference, runPython } from '../helpers/python-ref';
import { measure, type BuildupMeasurement } from '../../shared/measure/index';
import { fromGeometry, toInterpretationInput, type VelocityModel } from '../../shared/editor/model';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';
import { FOOT_M } from '../../shared/units';

let t: TestApp;
let interp: string;
let reviewer: string;
let curator: string;
let outsider: string;
let projectId: number;
let sectionA: number;
let sectionB: number;

/** A one-cycle buildup: flat base at v 90, a top from u `l` to `r` with its crest at v `crest`. */
function geometry(l: number, r: number, crest: number) {
  const mid = (l + r) / 2;
  return {
    base: [[5, 90], [195, 90]],
    cycles: [{ index: 1, top: [[l, 60], [mid, crest], [r, 60]], marginLeft: [l, 60], marginRight: [r, 60] }],
    terminations: [],
    topIsDrowningSurface: false,
  };
}

type Geometry = ReturnType<typeof geometry>;

interface Made {
  id: number;
  name: string;
  geometry: Geometry | null;
  sectionId: number;
}
const made: Record<string, Made> = {};

/** The engine's own numbers for a geometry on these sections (default velocity model and options). */
function engine(g: Geometry, ties: unknown[] = SMALL_TIES): BuildupMeasurement {
  const editor = fromGeometry({ id: 1, name: 'x', version: 1, geometry: g });
  const input = toInterpretationInput(editor, { calibrationTies: ties as never, verticalDomain: 'twt_ms', velocity: DEFAULT_VELOCITY as VelocityModel });
  return measure(input).buildups[0];
}

async function section(fields: Record<string, string>): Promise<number> {
  const up = await upload(t, interp, projectId, await makeImage('png', 200, 100), 'tb11.png', fields);
  expect(up.status, JSON.stringify(up.body)).toBe(202);
  expect((await waitForStatus(t, interp, up.body.id)).status).toBe('ready');
  const cal = await request(t.app).put(`/api/sections/${up.body.id}/calibration`).set(bearer(interp)).send({ ties: SMALL_TIES });
  expect(cal.status, JSON.stringify(cal.body)).toBe(201);
  return up.body.id;
}

async function buildup(sectionId: number, name: string, g: Geometry | null) {
  const c = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(interp)).send({ name });
  expect(c.status, JSON.stringify(c.body)).toBe(201);
  if (g) {
    const s = await request(t.app).put(`/api/buildups/${c.body.id}`).set(bearer(interp)).send({ version: c.body.version, geometry: g });
    expect(s.status, JSON.stringify(s.body)).toBe(200);
  }
  made[name] = { id: c.body.id, name, geometry: g, sectionId };
}

const reg = (query = '', token = interp) => request(t.app).get(`/api/projects/${projectId}/buildups${query}`).set(bearer(token));

/** Wait until no buildup of the project waits for its figures (the summary jobs ran). */
async function settled(query = '?pageSize=200') {
  const until = Date.now() + 60_000;
  for (;;) {
    const r = await reg(query);
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    if (r.body.pending === 0) return r.body;
    if (Date.now() > until) throw new Error(`register still pending: ${JSON.stringify(r.body)}`);
    await new Promise((res) => setTimeout(res, 250));
  }
}

beforeAll(async () => {
  t = await createTestApp();
  interp = await t.token('interpreter');
  reviewer = await t.token('reviewer');
  curator = await t.token('curator');
  const admin = await t.token('admin');
  await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'outsider@tessel.example', name: 'Outsider', role: 'interpreter', password: 'long-enough-pw' });
  outsider = await signIn(t, 'outsider@tessel.example', 'long-enough-pw');
  projectId = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Tessel register' })).body.id;
  const users = (await request(t.app).get('/api/users').set(bearer(admin))).body.items as { id: number; email: string }[];
  for (const role of ['reviewer', 'curator'] as const) {
    const id = users.find((u) => u.email === ROLE_EMAIL[role])!.id;
    expect((await request(t.app).post(`/api/projects/${projectId}/members`).set(bearer(admin)).send({ userId: id })).status).toBe(201);
  }
  sectionA = await section({ ...FIELDS, title: 'TB-11 east', startLon: '1.0', startLat: '0', endLon: '1.1', endLat: '0' });
  sectionB = await section({ ...FIELDS, title: 'TB-14 north', lineName: 'TB-14' });
  // crests: the smaller v, the higher the crest (TWT grows with v)
  await buildup(sectionA, 'Kestrel Knoll', geometry(50, 150, 40));
  await buildup(sectionA, 'Marrow Bank', geometry(30, 110, 20));
  await buildup(sectionA, 'Tessel Spur', geometry(120, 180, 50));
  await buildup(sectionB, 'Spur of TB-14', geometry(60, 140, 30));
  await buildup(sectionA, 'Empty sketch', null);
}, 240_000);
afterAll(async () => t?.close());

describe('register: figures from the engine', () => {
  it('lists every buildup with the engine figures once the summary jobs ran; the untraced one says what is missing', async () => {
    const body = await settled();
    expect(body.total).toBe(5);
    const byName = Object.fromEntries(body.items.map((r: { name: string }) => [r.name, r]));
    for (const m of Object.values(made)) {
      const row = byName[m.name];
      expect(row, m.name).toBeTruthy();
      expect(row.sectionId).toBe(m.sectionId);
      if (!m.geometry) {
        expect(row.status).toBe('not_measurable');
        expect(row.problem).toMatch(/\S/);
        expect(row.heightM).toBeNull();
        continue;
      }
      const e = engine(m.geometry);
      expect(row.status).toBe('ok');
      expect(row.classification).toBe(e.classification);
      expect(row.heightM).toBeCloseTo(e.heightM, 6);
      expect(row.baseWidthM).toBeCloseTo(e.baseWidthM, 6);
      expect(row.aspectRatio).toBeCloseTo(e.aspectRatio, 9);
      expect(row.areaM2).toBeCloseTo(e.areaM2, 3);
      // the default velocity model has ranges: volume P50 is the Monte Carlo median (seeded, so reproducible)
      expect(e.ranges).not.toBeNull();
      expect(row.volumeP50M3).toBeCloseTo(e.ranges!.volumeM3.p50, 0);
      if (e.trajectoryDeg === null) expect(row.trajectoryDeg).toBeNull();
      else expect(row.trajectoryDeg).toBeCloseTo(e.trajectoryDeg, 9);
    }
  });

  it('a save refreshes the summary (the old figures are never shown for the new version)', async () => {
    const k = made['Kestrel Knoll'];
    const before = (await settled()).items.find((r: { id: number }) => r.id === k.id);
    const cur = (await request(t.app).get(`/api/buildups/${k.id}`).set(bearer(interp))).body;
    const g = geometry(50, 150, 10); // a much higher crest
    const s = await request(t.app).put(`/api/buildups/${k.id}`).set(bearer(interp)).send({ version: cur.version, geometry: g });
    expect(s.status).toBe(200);
    const right = await reg('?pageSize=200');
    const row = right.body.items.find((r: { id: number }) => r.id === k.id);
    // either already recomputed, or waiting — but never the previous version's height
    if (row.status === 'pending') expect(row.heightM).toBeNull();
    else expect(row.heightM).not.toBeCloseTo(before.heightM, 3);
    const after = (await settled()).items.find((r: { id: number }) => r.id === k.id);
    expect(after.heightM).toBeCloseTo(engine(g).heightM, 6);
    expect(after.heightM).toBeGreaterThan(before.heightM);
    made['Kestrel Knoll'].geometry = g;
  });
});

describe('register: stale summaries', () => {
  it('a new calibration of the section makes its rows pending, then recomputed with the new Ties', async () => {
    await settled();
    // section B only: x = 30·u m instead of 20·u m
    const wider = [
      { px: [0, 0], world: [0, 1000] },
      { px: [200, 0], world: [6000, 1000] },
      { px: [0, 100], world: [0, 2000] },
    ];
    const cal = await request(t.app).put(`/api/sections/${sectionB}/calibration`).set(bearer(interp)).send({ ties: wider });
    expect(cal.status).toBe(201);
    const b = made['Spur of TB-14'];
    const now = (await reg('?pageSize=200')).body;
    const row = now.items.find((r: { id: number }) => r.id === b.id);
    if (row.status === 'pending') expect(row.baseWidthM).toBeNull();
    const after = (await settled()).items.find((r: { id: number }) => r.id === b.id);
    expect(after.baseWidthM).toBeCloseTo(engine(b.geometry!, wider).baseWidthM, 6);
    expect(after.baseWidthM).not.toBeCloseTo(engine(b.geometry!).baseWidthM, 0);
    // put the original Ties back for the tests below
    expect((await request(t.app).put(`/api/sections/${sectionB}/calibration`).set(bearer(interp)).send({ ties: SMALL_TIES })).status).toBe(201);
    const back = (await settled()).items.find((r: { id: number }) => r.id === b.id);
    expect(back.baseWidthM).toBeCloseTo(engine(b.geometry!).baseWidthM, 6);
  });
});

describe('register: sorting, filtering, pagination', () => {
  const heights = () =>
    Object.values(made)
      .filter((m) => m.geometry)
      .map((m) => ({ name: m.name, h: engine(m.geometry!).heightM }));

  it('sorts by height both ways, unmeasured rows last', async () => {
    await settled();
    const asc = await reg('?sort=heightM&dir=asc&pageSize=200');
    const expected = heights().sort((a, b) => a.h - b.h).map((x) => x.name);
    expect(asc.body.items.map((r: { name: string }) => r.name)).toEqual([...expected, 'Empty sketch']);
    const desc = await reg('?sort=heightM&dir=desc&pageSize=200');
    expect(desc.body.items.map((r: { name: string }) => r.name)).toEqual([...expected].reverse().concat('Empty sketch'));
  });

  it('sorts by name and by section', async () => {
    const byName = await reg('?sort=name&dir=asc&pageSize=200');
    // hand-sorted, case-insensitive
    expect(byName.body.items.map((r: { name: string }) => r.name)).toEqual(['Empty sketch', 'Kestrel Knoll', 'Marrow Bank', 'Spur of TB-14', 'Tessel Spur']);
    const bySection = await reg('?sort=section&dir=desc&pageSize=200');
    expect(bySection.body.items[0].section).toBe('TB-14 north');
    expect(bySection.body.items.slice(1).every((r: { section: string }) => r.section === 'TB-11 east')).toBe(true);
  });

  it('pages on the server: 5 rows at 2 a page are 2 + 2 + 1, in one order', async () => {
    const all = (await reg('?sort=name&dir=asc&pageSize=200')).body.items.map((r: { id: number }) => r.id);
    const pages = [];
    for (const page of [1, 2, 3]) {
      const r = await reg(`?sort=name&dir=asc&pageSize=2&page=${page}`);
      expect(r.body.total).toBe(5);
      expect(r.body.page).toBe(page);
      pages.push(r.body.items.map((x: { id: number }) => x.id));
    }
    expect(pages.map((p) => p.length)).toEqual([2, 2, 1]);
    expect(pages.flat()).toEqual(all);
    const past = await reg('?sort=name&dir=asc&pageSize=2&page=4');
    expect(past.body.items).toEqual([]);
    expect(past.body.total).toBe(5);
  });

  it('filters by text (name, section, line), class, review state and numeric ranges', async () => {
    expect((await reg('?q=spur')).body.total).toBe(2); // "Tessel Spur", "Spur of TB-14"
    expect((await reg('?q=TB-14')).body.total).toBe(1); // section title / line name of B, and the name "Spur of TB-14": one buildup
    expect((await reg('?q=%25')).body.total).toBe(0); // a literal %, not a wildcard
    // review state: sign one off in the database (the review workflow has its own tests)
    const { ctx } = await import('../../server/context');
    await ctx().sequelize.query(`UPDATE buildups SET review_state = 'signed_off' WHERE id = ${made['Marrow Bank'].id}`);
    const signed = await reg('?reviewState=signed_off');
    expect(signed.body.items.map((r: { name: string }) => r.name)).toEqual(['Marrow Bank']);
    expect((await reg('?reviewState=draft,signed_off')).body.total).toBe(5);
    // class: as many as the engine gives that class
    const classes = Object.values(made)
      .filter((m) => m.geometry)
      .map((m) => engine(m.geometry!).classification);
    const cls = classes[0];
    expect((await reg(`?classification=${cls}`)).body.total).toBe(classes.filter((c) => c === cls).length);
    // height between the second and third lowest (inclusive): exactly those two
    const hs = heights().sort((a, b) => a.h - b.h);
    const r = await reg(`?heightMMin=${hs[1].h - 1e-6}&heightMMax=${hs[2].h + 1e-6}&sort=heightM&dir=asc`);
    expect(r.body.items.map((x: { name: string }) => x.name)).toEqual([hs[1].name, hs[2].name]);
  });

  it('refuses bad queries with the field path', async () => {
    const bad = await reg('?sort=colour');
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toContain('sort');
    const r2 = await reg('?heightMMin=10&heightMMax=5');
    expect(r2.status).toBe(400);
    expect(JSON.stringify(r2.body)).toContain('heightMMax');
    const r3 = await reg('?classification=reefal');
    expect(r3.status).toBe(400);
    expect(JSON.stringify(r3.body)).toContain('classification');
    const r4 = await reg('?pageSize=0');
    expect(r4.status).toBe(400);
    expect(r4.body.code).toBeTruthy();
    expect(r4.body.message).toBeTruthy();
  });
});

describe('register: access', () => {
  it('members only: reviewers and curators may read and export, outsiders get 404, anonymous 401', async () => {
    for (const tok of [reviewer, curator]) {
      expect((await reg('', tok)).status).toBe(200);
      expect((await request(t.app).get(`/api/projects/${projectId}/buildups/export.csv`).set(bearer(tok))).status).toBe(200);
      expect((await request(t.app).get(`/api/projects/${projectId}/buildups/export.geojson`).set(bearer(tok))).status).toBe(200);
    }
    expect((await reg('', outsider)).status).toBe(404);
    expect((await request(t.app).get(`/api/projects/${projectId}/buildups/export.csv`).set(bearer(outsider))).status).toBe(404);
    expect((await request(t.app).get(`/api/projects/${projectId}/buildups`)).status).toBe(401);
  });
});

describe('preferences', () => {
  it('reads and sets the length unit; refuses anything but m and ft', async () => {
    expect((await request(t.app).get('/api/me/preferences').set(bearer(reviewer))).body).toEqual({ lengthUnit: 'm' });
    const put = await request(t.app).put('/api/me/preferences').set(bearer(reviewer)).send({ lengthUnit: 'ft' });
    expect(put.status).toBe(200);
    expect(put.body).toEqual({ lengthUnit: 'ft' });
    expect((await request(t.app).get('/api/me/preferences').set(bearer(reviewer))).body).toEqual({ lengthUnit: 'ft' });
    // someone else's preference is untouched
    expect((await request(t.app).get('/api/me/preferences').set(bearer(curator))).body).toEqual({ lengthUnit: 'm' });
    const bad = await request(t.app).put('/api/me/preferences').set(bearer(reviewer)).send({ lengthUnit: 'yd' });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.details ?? bad.body)).toContain('lengthUnit');
  });
});

describe('CSV export', () => {
  const csv = (query: string, token = interp) => request(t.app).get(`/api/projects/${projectId}/buildups/export.csv${query}`).set(bearer(token)).buffer(true).parse((res, cb) => {
    const chunks: Buffer[] = [];
    res.on('data', (c: Buffer) => chunks.push(c));
    res.on('end', () => cb(null, Buffer.concat(chunks)));
  });

  it('reads back with papaparse; numbers equal the engine in metres and in international feet', async () => {
    await settled();
    for (const unit of ['m', 'ft'] as const) {
      const r = await csv(`?unit=${unit}&sort=name&dir=asc`);
      expect(r.status).toBe(200);
      expect(r.headers['content-type']).toMatch(/^text\/csv; charset=utf-8/);
      expect(r.headers['content-disposition']).toContain(`tessel-register-buildups-${unit}.csv`);
      const text = (r.body as Buffer).toString('utf8');
      expect(text.charCodeAt(0)).not.toBe(0xfeff);
      expect(text).toContain('\r\n'); // RFC 4180 line ends
      const parsed = Papa.parse<Record<string, string>>(text.trim(), { header: true });
      expect(parsed.errors).toEqual([]);
      const f = unit === 'ft' ? FOOT_M : 1;
      const L = unit === 'ft' ? 'ft' : 'm';
      expect(parsed.meta.fields).toEqual(
        expect.arrayContaining([`Height (${L})`, `Base width (${L})`, 'Aspect ratio', 'Net trajectory (°)', `Area (${L}²)`, `Volume P50 (${L}³)`, 'Review state']),
      );
      expect(parsed.data.map((d) => d.Buildup)).toEqual(['Empty sketch', 'Kestrel Knoll', 'Marrow Bank', 'Spur of TB-14', 'Tessel Spur']);
      for (const d of parsed.data) {
        const m = made[d.Buildup];
        if (!m.geometry) {
          expect(d[`Height (${L})`]).toBe('');
          continue;
        }
        const e = engine(m.geometry);
        expect(Number(d['Buildup id'])).toBe(m.id);
        expect(Number(d[`Height (${L})`])).toBeCloseTo(e.heightM / f, 6);
        expect(Number(d[`Base width (${L})`])).toBeCloseTo(e.baseWidthM / f, 6);
        expect(Number(d[`Area (${L}²)`])).toBeCloseTo(e.areaM2 / (f * f), 2);
        expect(Number(d[`Volume P50 (${L}³)`]) / (e.ranges!.volumeM3.p50 / (f * f * f))).toBeCloseTo(1, 9);
        expect(Number(d['Aspect ratio'])).toBeCloseTo(e.aspectRatio, 9);
        expect(d.Class).toBe(e.classification);
      }
    }
  });

  it('BOM on request; names with commas and quotes are quoted (RFC 4180); formula-like text is defused', async () => {
    await buildup(sectionA, 'Knoll "A", west', null);
    await buildup(sectionA, '=HYPERLINK("x")', null);
    const r = await csv('?bom=1&q=knoll');
    const bytes = r.body as Buffer;
    expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    const text = bytes.toString('utf8').slice(1);
    expect(text).toContain('"Knoll ""A"", west"');
    const parsed = Papa.parse<Record<string, string>>(text.trim(), { header: true });
    expect(parsed.data.map((d) => d.Buildup).sort()).toEqual(['Kestrel Knoll', 'Knoll "A", west']);
    const f = await csv('?q=HYPERLINK');
    const rows = Papa.parse<Record<string, string>>((f.body as Buffer).toString('utf8').trim(), { header: true }).data;
    expect(rows[0].Buildup.startsWith("'=")).toBe(true);
    const bad = await csv('?bom=maybe');
    expect(bad.status).toBe(400);
    expect((bad.body as Buffer).toString()).toContain('bom');
  });

  it('uses the caller’s unit preference when no unit is asked for', async () => {
    await request(t.app).put('/api/me/preferences').set(bearer(curator)).send({ lengthUnit: 'ft' });
    const r = await csv('', curator);
    expect((r.body as Buffer).toString('utf8').split('\r\n')[0]).toContain('Height (ft)');
    await request(t.app).put('/api/me/preferences').set(bearer(curator)).send({ lengthUnit: 'm' });
    const m = await csv('', curator);
    expect((m.body as Buffer).toString('utf8').split('\r\n')[0]).toContain('Height (m)');
  });
});

describe('GeoJSON export', () => {
  const shapely = pythonReference('shapely');

  it('follows RFC 7946 and places each crest along its line; buildups without line geography are listed, with their reasons, in a foreign member', async (testCtx) => {
    await settled();
    const r = await request(t.app).get(`/api/projects/${projectId}/buildups/export.geojson?unit=ft`).set(bearer(interp));
    expect(r.status).toBe(200);
    expect(r.headers['content-type']).toMatch(/^application\/geo\+json/); // RFC 7946 §12 media type
    const fc = JSON.parse(r.text);
    // RFC 7946 §3.3: a FeatureCollection with a "features" array; §4: no "crs" member
    expect(fc.type).toBe('FeatureCollection');
    expect(Array.isArray(fc.features)).toBe(true);
    expect(fc).not.toHaveProperty("crs");
    const onA = Object.values(made).filter((m) => m.sectionId === sectionA && m.geometry);
    expect(fc.features.map((f: { properties: { name: string } }) => f.properties.name).sort()).toEqual(onA.map((m) => m.name).sort());
    for (const f of fc.features) {
      // §3.2: a Feature has "geometry" and "properties"; §3.1.2 Point: one position; §3.1.1: [longitude, latitude], WGS 84
      expect(f.type).toBe('Feature');
      expect(f.geometry.type).toBe('Point');
      expect(f.geometry.coordinates).toHaveLength(2);
      const [lon, lat] = f.geometry.coordinates;
      expect(lon).toBeGreaterThanOrEqual(-180);
      expect(lon).toBeLessThanOrEqual(180);
      expect(lat).toBeGreaterThanOrEqual(-90);
      expect(lat).toBeLessThanOrEqual(90);
      // the line runs along the equator from 1.0° E to 1.1° E (a great circle), over x = 0 … 4000 m of the section
      const e = engine(made[f.properties.name].geometry!);
      expect(lat).toBeCloseTo(0, 6);
      expect(lon).toBeCloseTo(1.0 + (0.1 * e.crest[0]) / 4000, 5);
      expect(f.properties.height_ft).toBeCloseTo(e.heightM / FOOT_M, 6);
      expect(f.properties.area_ft2).toBeCloseTo(e.areaM2 / FOOT_M ** 2, 2);
      expect(f.properties.class).toBe(e.classification);
    }
    // the buildup on TB-14 (no line geography) and the unmeasured ones are skipped, each with its reason
    const skipped = Object.fromEntries(fc.skipped.map((s: { name: string; reason: string }) => [s.name, s.reason]));
    expect(skipped['Spur of TB-14']).toMatch(/no line geography/);
    expect(skipped['Empty sketch']).toMatch(/not measured/);
    // geometry validity with shapely (independent parser)
    const py = needReference(testCtx, shapely);
    const out = runPython(
      py,
      ['import json, sys', 'from shapely.geometry import shape', 'fc = json.load(sys.stdin)', 'print(json.dumps([shape(f["geometry"]).is_valid for f in fc["features"]]))'].join('\n'),
      fc,
    ) as boolean[];
    expect(out).toEqual(fc.features.map(() => true));
  });
});

describe('batch of signed-off reports (one ZIP archive of PDFs)', () => {
  const zipRef = pythonReference('zipfile'); // python's standard library: an independent ZIP reader

  it('refuses a project with nothing signed off, clearly', async () => {
    const empty = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Nothing signed yet' })).body.id;
    const r = await request(t.app).post(`/api/projects/${empty}/buildups/report-batch`).set(bearer(interp)).send({});
    expect(r.status).toBe(409);
    expect(r.body.code).toBe('nothing_signed_off');
  });

  it('one job with progress packs every signed-off buildup’s report PDF and an index; members only', async (testCtx) => {
    const { ctx } = await import('../../server/context');
    const signed = ['Marrow Bank', 'Tessel Spur'];
    await ctx().sequelize.query(`UPDATE buildups SET review_state = 'draft' WHERE id IN (${Object.values(made).map((m) => m.id).join(',')})`);
    await ctx().sequelize.query(`UPDATE buildups SET review_state = 'signed_off', signed_off_at = now() WHERE id IN (${signed.map((n) => made[n].id).join(',')})`);
    const start = await request(t.app).post(`/api/projects/${projectId}/buildups/report-batch`).set(bearer(reviewer)).send({ paper: 'a4', unit: 'ft' });
    expect(start.status, JSON.stringify(start.body)).toBe(202);
    expect(start.body.total).toBe(2);
    const id = start.body.id as string;
    // members only
    expect((await request(t.app).get(`/api/report-batches/${id}`).set(bearer(outsider))).status).toBe(404);
    expect((await request(t.app).get(`/api/report-batches/${id}`)).status).toBe(401);
    expect((await request(t.app).get('/api/report-batches/not-a-batch').set(bearer(curator))).status).toBe(404);
    // progress rises to 1 and the state ends done
    const seen: number[] = [];
    const until = Date.now() + 150_000;
    let last;
    for (;;) {
      last = await request(t.app).get(`/api/report-batches/${id}`).set(bearer(curator));
      expect(last.status).toBe(200);
      seen.push(last.body.progress);
      if (last.body.state === 'done' || last.body.state === 'failed') break;
      if (Date.now() > until) throw new Error(`batch not finished: ${JSON.stringify(last.body)}`);
      await new Promise((res) => setTimeout(res, 400));
    }
    expect(last.body.state, JSON.stringify(last.body)).toBe('done');
    expect(last.body.done).toBe(2);
    expect(seen.at(-1)).toBe(1);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
    // the archive
    const f = await request(t.app).get(`/api/report-batches/${id}/file`).set(bearer(curator)).buffer(true).parse((res, cb) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(f.status).toBe(200);
    expect(f.headers['content-type']).toBe('application/zip');
    expect(f.headers['content-disposition']).toContain('tessel-register-signed-off-reports-a4-ft.zip');
    const py = needReference(testCtx, zipRef);
    const listing = runPython(
      py,
      [
        'import base64, io, json, sys, zipfile',
        'z = zipfile.ZipFile(io.BytesIO(base64.b64decode(json.load(sys.stdin))))',
        'bad = z.testzip()',
        'print(json.dumps({"bad": bad, "files": {n: z.read(n)[:5].decode("latin-1") for n in z.namelist()}, "index": z.read("index.csv").decode("utf-8-sig")}))',
      ].join('\n'),
      (f.body as Buffer).toString('base64'),
    ) as { bad: string | null; files: Record<string, string>; index: string };
    expect(listing.bad).toBeNull();
    const pdfs = Object.keys(listing.files).filter((n) => n.endsWith('.pdf'));
    expect(pdfs).toHaveLength(2);
    for (const n of pdfs) expect(listing.files[n]).toBe('%PDF-');
    const index = Papa.parse<Record<string, string>>(listing.index.trim(), { header: true }).data;
    expect(index.map((r) => r.Buildup).sort()).toEqual([...signed].sort());
    expect(index.every((r) => pdfs.includes(r.File))).toBe(true);

    // the archive is kept a day: a young one survives the sweep, an old one goes and its download says so
    const { sweepBatchArchives, BATCH_KEEP_MS } = await import('../../server/jobs/report.job');
    const zip = path.join(t.storageDir, 'report-batches', `${id}.zip`);
    expect(await sweepBatchArchives()).toEqual([]);
    const past = new Date(Date.now() - BATCH_KEEP_MS - 60_000);
    fs.utimesSync(zip, past, past);
    expect(await sweepBatchArchives()).toEqual([`${id}.zip`]);
    expect(fs.existsSync(zip)).toBe(false);
    const gone = await request(t.app).get(`/api/report-batches/${id}/file`).set(bearer(curator));
    expect(gone.status).toBe(410);
    expect(gone.body.code).toBe('batch_gone');
  }, 200_000);
});
