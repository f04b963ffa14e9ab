/**
 * Buildup reports and single-buildup exports, read back by independent
 * parsers: CSV with papaparse, GeoJSON against RFC 7946 rules and with
 * Debian's python3-shapely / python3-pyproj, the PDF with poppler's
 * pdftotext / pdfinfo / pdftoppm. Numbers are compared with the engine's own
 * answer from GET /measurements. Demo data: the invented Tessel Basin lines
 * TB-11 (Kestrel Knoll) and TB-14 (Marrow Bank), seeded small.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import Papa from 'papaparse';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { binary } from '../helpers/sections';
import { readyCalibratedSection, savedBuildup } from '../helpers/api-fixtures';
import { needReference, pythonReference, runPython } from '../helpers/python-ref';
import { ctx } from '../../server/context';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { seedDemoInterpretation } from '../../server/db/seeders/interpretations';
import { DEMO_SECTIONS, sectionGeometry } from '../../server/synth/demo';
import { BuildupReportRow } from '../../server/models/report';
import { Buildup } from '../../server/models/buildup';
import { recoverReports } from '../../server/jobs/report.job';
import { writeReportPdfOffLoop } from '../../server/reports/pdf-thread';
import { threadId } from 'node:worker_threads';
import { CAUTION, type MeasurementOutput } from '../../shared/measure/index';
import { ROOT_DIR } from '../../server/config';

let t: TestApp;
let token: string;
let projectId: number;
let tb11: { id: number; width: number; height: number };
let tb14: { id: number };
let knollId: number;
let bankId: number;
const shots = path.join(ROOT_DIR, 'tests', 'e2e', 'screenshots');
const scratch = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-report-test-'));

/** The international foot: 0.3048 m exactly (1959 agreement of the US, UK, Canada, Australia, New Zealand and South Africa; NIST SP 811 appendix B). */
const FOOT = 0.3048;

const get = (p: string) => request(t.app).get(p).set(bearer(token));
const file = (p: string) => request(t.app).get(p).set(bearer(token)).buffer(true).parse(binary);

async function waitReady(id: number, timeoutMs = 60_000) {
  const until = Date.now() + timeoutMs;
  const seen: number[] = [];
  for (;;) {
    const r = await get(`/api/reports/${id}`);
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    seen.push(r.body.progress);
    if (r.body.status === 'ready' || r.body.status === 'failed') return { ...r.body, seen };
    if (Date.now() > until) throw new Error(`report ${id} still ${r.body.status} (${r.body.progress} %)`);
    await new Promise((res) => setTimeout(res, 150));
  }
}

async function pdfOf(buildupId: number, paper: 'a4' | 'letter', extra = '') {
  const ask = await request(t.app).post(`/api/buildups/${buildupId}/report/pdf`).set(bearer(token)).send({ paper, ...(extra ? JSON.parse(extra) : {}) });
  expect([200, 202], JSON.stringify(ask.body)).toContain(ask.status);
  const done = await waitReady(ask.body.id);
  expect(done.status, done.failureReason).toBe('ready');
  const q = new URLSearchParams({ paper, ...(extra ? JSON.parse(extra) : {}) }).toString();
  const res = await file(`/api/buildups/${buildupId}/export/pdf?${q}`);
  expect(res.status).toBe(200);
  const out = path.join(scratch, `report-${buildupId}-${paper}-${Math.random().toString(36).slice(2)}.pdf`);
  fs.writeFileSync(out, res.body as Buffer);
  return { res, file: out, status: done };
}

const pdftotext = (f: string) => execFileSync('pdftotext', ['-layout', f, '-'], { encoding: 'utf8' });
const pdfinfo = (f: string) => execFileSync('pdfinfo', [f], { encoding: 'utf8' });

beforeAll(async () => {
  t = await createTestApp();
  token = await t.token('interpreter');
  const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
  const seeded = await seedDemoSections(deps, { width: 1600, height: 500 });
  expect(await seedDemoInterpretation(deps)).toBe(true);
  const sections = await Promise.all(seeded.seeded.map(async (id) => (await get(`/api/sections/${id}`)).body));
  for (const s of sections) {
    const until = Date.now() + 45_000;
    while ((await get(`/api/sections/${s.id}`)).body.status !== 'ready') {
      if (Date.now() > until) throw new Error('demo section not ready');
      await new Promise((r) => setTimeout(r, 200));
    }
  }
  projectId = sections[0].projectId;
  const s11 = sections.find((s) => s.lineName === 'TB-11');
  const s14 = sections.find((s) => s.lineName === 'TB-14');
  tb11 = { id: s11.id, width: s11.width, height: s11.height };
  tb14 = { id: s14.id };
  bankId = (await get(`/api/sections/${tb14.id}/buildups`)).body[0].id;
  // Kestrel Knoll traced from the generator's true geometry, at the seeded size
  const def = DEMO_SECTIONS.find((d) => d.lineName === 'TB-11')!;
  const g = sectionGeometry(def, { width: tb11.width, height: tb11.height }).pixelGeometry.buildups[0] as unknown as {
    name: string;
    base: number[][];
    cycles: Record<string, unknown>[];
    terminations: unknown[];
    topIsDrowningSurface: boolean;
  };
  const c = await request(t.app).post(`/api/sections/${tb11.id}/buildups`).set(bearer(token)).send({ name: 'Kestrel Knoll' });
  expect(c.status).toBe(201);
  const geometry = {
    base: g.base,
    // a systems-tract note with a comma and quotes, to exercise RFC 4180 quoting
    cycles: g.cycles.map((cy, i) => ({ ...cy, systemsTract: i === 0 ? 'TST, early "a"' : null })),
    terminations: g.terminations,
    topIsDrowningSurface: g.topIsDrowningSurface,
  };
  const s = await request(t.app).put(`/api/buildups/${c.body.id}`).set(bearer(token)).send({ version: c.body.version, geometry });
  expect(s.status, JSON.stringify(s.body)).toBe(200);
  knollId = c.body.id;
}, 120_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(scratch, { recursive: true, force: true });
});

describe('report data', () => {
  it('carries the title block and the very numbers of GET /measurements', async () => {
    const r = await get(`/api/buildups/${knollId}/report`);
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    const m = (await get(`/api/buildups/${knollId}/measurements`)).body as MeasurementOutput;
    expect(r.body.title).toMatchObject({ buildup: 'Kestrel Knoll', line: 'TB-11', survey: 'TB-2024', project: 'Tessel Basin screening', reviewState: 'draft', reviewStateLabel: 'Draft' });
    expect(r.body.title.caylineVersion).toBe(JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'package.json'), 'utf8')).version);
    expect(r.body.missing).toEqual([]);
    expect(r.body.measurement.heightM).toBe(m.buildups[0].heightM);
    expect(r.body.measurement.classification).toBe(m.buildups[0].classification);
    expect(r.body.caution).toBe(CAUTION);
    expect(r.body.crop.width).toBeGreaterThan(0);
    expect(r.body.crop.intrinsicVE).toBeGreaterThan(0);
    // the VE stated for a stretch is the image's own VE times the stretch
    const s2 = (await get(`/api/buildups/${knollId}/report?stretch=2`)).body.crop;
    expect(s2.ve).toBeCloseTo(2 * r.body.crop.intrinsicVE, 9);
    expect(s2.trueScaleStretch * s2.intrinsicVE).toBeCloseTo(1, 12);
  });

  it('follows the person’s length unit unless the query names one', async () => {
    const curator = await t.token('curator');
    const pref = await request(t.app).put('/api/me/preferences').set(bearer(curator)).send({ lengthUnit: 'ft' });
    expect(pref.status, JSON.stringify(pref.body)).toBe(200);
    const r = await request(t.app).get(`/api/buildups/${knollId}/report`).set(bearer(curator));
    expect(r.body.unit).toBe('ft');
    const csv = await request(t.app).get(`/api/buildups/${knollId}/export/csv`).set(bearer(curator));
    expect(csv.text.split('\r\n')[0]).toContain('Top width (ft)');
    const asked = await request(t.app).get(`/api/buildups/${knollId}/report?unit=m`).set(bearer(curator));
    expect(asked.body.unit).toBe('m');
  });

  it('shows who signed off, when and which version in the title block', async () => {
    const reviewer = await request(t.app).get('/api/auth/me').set(bearer(await t.token('reviewer')));
    const at = new Date('2026-11-30T10:00:00Z');
    const row = (await Buildup.findByPk(bankId))!;
    await Buildup.update({ reviewState: 'signed_off', signedOffById: reviewer.body.id ?? reviewer.body.user?.id, signedOffAt: at, signedOffVersion: row.version }, { where: { id: bankId } });
    try {
      const r = await get(`/api/buildups/${bankId}/report`);
      expect(r.body.title).toMatchObject({ reviewState: 'signed_off', reviewStateLabel: 'Signed off', signedOffAt: at.toISOString(), signedOffVersion: row.version });
      expect(r.body.title.signedOffBy).toBeTruthy();
      const pdf = await pdfOf(bankId, 'a4');
      expect(pdftotext(pdf.file).replace(/\s+/g, ' ')).toContain(`Signed off, by ${r.body.title.signedOffBy} on 2026-11-30 (version ${row.version})`);
    } finally {
      await Buildup.update({ reviewState: 'draft', signedOffById: null, signedOffAt: null, signedOffVersion: null }, { where: { id: bankId } });
    }
  }, 90_000);

  it('refuses a bad unit or stretch naming the field', async () => {
    const a = await get(`/api/buildups/${knollId}/report?unit=yd`);
    expect(a.status).toBe(400);
    expect(a.body.code).toBe('validation_failed');
    expect(a.body.message).toMatch(/^unit/);
    const b = await get(`/api/buildups/${knollId}/report?stretch=40`);
    expect(b.status).toBe(400);
    expect(b.body.message).toMatch(/^stretch/);
    const c = await get(`/api/buildups/${knollId}/export/xls`);
    expect(c.status).toBe(400);
    expect(c.body.message).toMatch(/^format/);
  });

  it('a buildup with nothing measurable says what is missing instead of failing', async () => {
    const c = await request(t.app).post(`/api/sections/${tb11.id}/buildups`).set(bearer(token)).send({ name: 'Empty sketch' });
    const r = await get(`/api/buildups/${c.body.id}/report`);
    expect(r.status).toBe(200);
    expect(r.body.measurement).toBeNull();
    expect(r.body.missing).toContain('Trace the base');
    expect(r.body.missing).toContain('Trace a cycle top and pin both its margins');
    const csv = await get(`/api/buildups/${c.body.id}/export/csv`);
    expect(csv.status).toBe(422);
    expect(csv.body.code).toBe('not_measurable');
    const pdf = await pdfOf(c.body.id, 'a4');
    const text = pdftotext(pdf.file);
    expect(text).toContain('What is missing');
    expect(text).toContain('Trace the base');
    expect(text).toContain('Not measurable yet');
  }, 90_000);

  it('names in Latin Extended, Cyrillic and Greek letters print as typed (title, table, footer, metadata); CJK prints "?"', async () => {
    // invented name; Unicode blocks: Latin Extended-A (Ż, ł), Cyrillic (Холм), Greek (Ωρα)
    const name = 'Żuławy Холм Ωρα 礁';
    const c = await request(t.app).post(`/api/sections/${tb11.id}/buildups`).set(bearer(token)).send({ name });
    expect(c.status, JSON.stringify(c.body)).toBe(201);
    const pdf = await pdfOf(c.body.id, 'a4');
    const text = pdftotext(pdf.file);
    expect(text).toContain('Buildup report: Żuławy Холм Ωρα ?');
    expect(text).toContain('Żuławy Холм Ωρα ? · ');
    expect(text).not.toContain('?uławy');
    expect(pdfinfo(pdf.file)).toMatch(new RegExp(`Title:\\s+Buildup report: ${name}\\n`));
    const fonts = execFileSync('pdffonts', [pdf.file], { encoding: 'utf8' }).split('\n').slice(2).filter(Boolean);
    expect(fonts.length).toBeGreaterThanOrEqual(3); // the Latin, Latin Extended, Cyrillic and Greek subsets of the faces used
    for (const f of fonts) expect(f).toMatch(/IBMPlexSans.*\byes\b/);
    fs.mkdirSync(shots, { recursive: true });
    execFileSync('pdftoppm', ['-r', '80', '-f', '1', '-l', '1', '-png', pdf.file, path.join(shots, 'report-pdf-scripts')]);
  }, 90_000);
});

describe('CSV', () => {
  it('one row per cycle, one header row with units, RFC 4180 quoting; numbers equal the engine’s', async () => {
    const res = await get(`/api/buildups/${knollId}/export/csv?unit=m`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toBe('attachment; filename="tb-11-kestrel-knoll-cycles.csv"');
    const text = res.text;
    expect(text.charCodeAt(0)).not.toBe(0xfeff);
    // RFC 4180 §2: CRLF line ends; a field with a comma or quotes is quoted and its quotes doubled
    expect(text).toContain('\r\n');
    expect(text).toContain('"TST, early ""a"""');
    const parsed = Papa.parse<string[]>(text.trim(), { header: false, dynamicTyping: false });
    expect(parsed.errors).toEqual([]);
    const [header, ...rows] = parsed.data;
    const m = ((await get(`/api/buildups/${knollId}/measurements`)).body as MeasurementOutput).buildups[0];
    expect(rows).toHaveLength(m.cycles.length);
    expect(header).toContain('Top width (m)');
    expect(header).toContain('Left flank angle (°)');
    expect(header).toContain('Systems tract');
    const col = (name: string) => header.indexOf(name);
    m.cycles.forEach((c, i) => {
      expect(Number(rows[i][col('Cycle')])).toBe(c.index);
      expect(Number(rows[i][col('Top width (m)')])).toBe(c.topWidthM);
      expect(Number(rows[i][col('Thickness (m)')])).toBe(c.thicknessM);
      const fl = rows[i][col('Left flank angle (°)')];
      expect(fl === '' ? null : Number(fl)).toBe(c.left.flankAngleDeg);
    });
    expect(rows[0][col('Systems tract')]).toBe('TST, early "a"');
  });

  it('in feet: lengths divided by 0.3048 exactly, angles unchanged; optional UTF-8 BOM', async () => {
    const res = await get(`/api/buildups/${knollId}/export/csv?unit=ft&bom=1`);
    expect(res.status).toBe(200);
    expect(res.text.charCodeAt(0)).toBe(0xfeff);
    const parsed = Papa.parse<Record<string, string>>(res.text.slice(1).trim(), { header: true });
    const m = ((await get(`/api/buildups/${knollId}/measurements`)).body as MeasurementOutput).buildups[0];
    parsed.data.forEach((row, i) => {
      expect(Number(row['Top width (ft)'])).toBeCloseTo(m.cycles[i].topWidthM / FOOT, 9);
      expect(Number(row['Thickness (ft)']) * FOOT).toBeCloseTo(m.cycles[i].thicknessM, 9);
      expect(row['Trajectory (°)']).toBe(m.cycles[i].trajectoryDeg === null ? '' : String(m.cycles[i].trajectoryDeg));
    });
  });
});

describe('JSON and GeoJSON', () => {
  it('JSON is the engine’s output', async () => {
    const res = await get(`/api/buildups/${knollId}/export/json`);
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toContain('tb-11-kestrel-knoll-measurements.json');
    const body = JSON.parse(res.text);
    expect(body).toEqual((await get(`/api/buildups/${knollId}/measurements`)).body);
  });

  it('GeoJSON follows RFC 7946: lon,lat order, no crs member, points along the line at their fraction of the section', async () => {
    const res = await get(`/api/buildups/${bankId}/export/geojson`);
    expect(res.status, res.text).toBe(200);
    expect(res.headers['content-type']).toBe('application/geo+json'); // RFC 7946 §12
    expect(res.headers['content-disposition']).toContain('tb-14-marrow-bank.geojson');
    const gj = JSON.parse(res.text);
    expect(gj.type).toBe('FeatureCollection');
    expect('crs' in gj).toBe(false); // RFC 7946 §4: no crs member
    const section = (await get(`/api/sections/${tb14.id}`)).body;
    const def = DEMO_SECTIONS.find((d) => d.lineName === 'TB-14')!;
    void def;
    for (const f of gj.features) {
      expect(f.type).toBe('Feature');
      const coords = f.geometry.type === 'Point' ? [f.geometry.coordinates] : f.geometry.coordinates;
      for (const [lon, lat] of coords) {
        // RFC 7946 §3.1.1: longitude first; the demo line lies between its end coordinates
        expect(lon).toBeGreaterThanOrEqual(Math.min(section.startLon, section.endLon) - 1e-9);
        expect(lon).toBeLessThanOrEqual(Math.max(section.startLon, section.endLon) + 1e-9);
        expect(lat).toBeGreaterThanOrEqual(Math.min(section.startLat, section.endLat) - 1e-9);
        expect(lat).toBeLessThanOrEqual(Math.max(section.startLat, section.endLat) + 1e-9);
      }
    }
    const crest = gj.features.find((f: { properties: { kind: string } }) => f.properties.kind === 'crest');
    const m = ((await get(`/api/buildups/${bankId}/measurements`)).body as MeasurementOutput).buildups[0];
    expect(crest.properties.height).toBe(m.heightM);
    expect(crest.properties.classification).toBe(m.classification);
    expect(gj.features.filter((f: { properties: { kind: string } }) => f.properties.kind === 'margin')).toHaveLength(2 * m.cycles.length);
  });

  const refs = pythonReference(['shapely', 'pyproj']);
  it('GeoJSON geometry is valid for shapely, and the crest lies at its section fraction along the WGS 84 geodesic (pyproj)', async (c) => {
    const python = needReference(c, refs);
    const gj = JSON.parse((await get(`/api/buildups/${bankId}/export/geojson`)).text);
    const section = (await get(`/api/sections/${tb14.id}`)).body;
    const report = (await get(`/api/buildups/${bankId}/report`)).body;
    const { xLeftM, xRightM } = report.lineEnds;
    const crest = gj.features.find((f: { properties: { kind: string } }) => f.properties.kind === 'crest');
    const fraction = (report.measurement.crest[0] - xLeftM) / (xRightM - xLeftM);
    const out = runPython(
      python,
      `
import json, sys
from shapely.geometry import shape
from pyproj import Geod
d = json.load(sys.stdin)
valid = all(shape(f["geometry"]).is_valid for f in d["gj"]["features"])
g = Geod(ellps="WGS84")
s = d["start"]; e = d["end"]; p = d["p"]
_, _, whole = g.inv(s[0], s[1], e[0], e[1])
_, _, part = g.inv(s[0], s[1], p[0], p[1])
print(json.dumps({"valid": valid, "fraction": part / whole}))
`,
      { gj, start: [section.startLon, section.startLat], end: [section.endLon, section.endLat], p: crest.geometry.coordinates },
    ) as { valid: boolean; fraction: number };
    expect(out.valid).toBe(true);
    // turf walks a sphere, pyproj the WGS 84 ellipsoid: on a ~15 km line the fractions agree to ~1e-4
    expect(out.fraction).toBeCloseTo(fraction, 3);
  });

  it('refuses GeoJSON with 422 naming the missing line geography', async () => {
    const sid = await readyCalibratedSection(t, token, projectId);
    const b = await savedBuildup(t, token, sid, 'Kestrel Knoll copy');
    const res = await get(`/api/buildups/${b.id}/export/geojson`);
    expect(res.status).toBe(422);
    expect(res.body.code).toBe('no_line_geography');
    expect(res.body.message).toMatch(/line geography/);
    expect(res.body.details[0].path).toBe('section.startLon');
  }, 60_000);
});

describe('PDF, PNG and SVG through the report job', () => {
  it('A4 and Letter PDFs: classification, height and caution in the text, page sizes, page numbers; cached until the buildup changes', async () => {
    const m = ((await get(`/api/buildups/${knollId}/measurements`)).body as MeasurementOutput).buildups[0];
    const a4 = await pdfOf(knollId, 'a4');
    expect(a4.res.headers['content-type']).toBe('application/pdf');
    expect(a4.res.headers['content-disposition']).toContain('tb-11-kestrel-knoll-report-a4.pdf');
    expect(a4.status.seen.some((p: number) => p > 0 && p < 100) || a4.status.progress === 100).toBe(true);
    const text = pdftotext(a4.file);
    const label = m.classification[0].toUpperCase() + m.classification.slice(1);
    expect(text).toContain(`Classification: ${label}`);
    // the height as the PDF writes it: one decimal, thin-space thousands
    const h = m.heightM.toFixed(1).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009').replace(/\s/g, ' ');
    expect(text.replace(/\s+/g, ' ')).toContain(`Height ${h} m`);
    // Greek letters print from the Greek subset; signs no subset has are spelled out, never silently dropped
    expect(text).toContain('tan θ');
    expect(text).toMatch(/surface -> drowned/);
    expect(text.replace(/\s+/g, ' ')).toContain(CAUTION.replace(/\s+/g, ' '));
    expect(text).toMatch(/Page 1 of \d+/);
    expect(text).toContain('Kestrel Knoll');
    const info = pdfinfo(a4.file);
    // ISO 216 A4 is 210 × 297 mm = 595.28 × 841.89 pt
    expect(info).toMatch(/Page size:\s+595\.2\d x 841\.8\d pts \(A4\)/);
    // fonts embedded (pdffonts: emb = yes) and they are IBM Plex Sans
    const fonts = execFileSync('pdffonts', [a4.file], { encoding: 'utf8' }).split('\n').slice(2).filter(Boolean);
    expect(fonts.length).toBeGreaterThan(0);
    for (const f of fonts) expect(f).toMatch(/IBMPlexSans.*\byes\b/);
    const pages = Number(/Pages:\s+(\d+)/.exec(info)![1]);
    expect(text).toContain(`Page ${pages} of ${pages}`);
    // rasterise for a look (tests/e2e/screenshots, ignored by git)
    fs.mkdirSync(shots, { recursive: true });
    execFileSync('pdftoppm', ['-r', '60', '-png', a4.file, path.join(shots, 'report-pdf-a4')]);

    const letter = await pdfOf(knollId, 'letter');
    // US Letter is 8.5 × 11 in = 612 × 792 pt
    expect(pdfinfo(letter.file)).toMatch(/Page size:\s+612 x 792 pts \(letter\)/);

    // asked again: the same ready report at once
    const again = await request(t.app).post(`/api/buildups/${knollId}/report/pdf`).set(bearer(token)).send({ paper: 'a4' });
    expect(again.status).toBe(200);
    expect(again.body.id).toBe(a4.status.id);
  }, 120_000);

  it('builds the PDF off the event loop: timers keep firing while it is made', async () => {
    const r = await get(`/api/buildups/${knollId}/report`);
    expect(r.status).toBe(200);
    const input = { report: r.body, figures: [], paper: 'a4' as const };
    // count event-loop turns (setImmediate re-arming itself) while one PDF is made
    const turnsDuring = async (make: () => Promise<unknown>) => {
      let turns = 0;
      let on = true;
      const spin = () => {
        if (!on) return;
        turns++;
        setImmediate(spin);
      };
      setImmediate(spin);
      await make();
      on = false;
      return turns;
    };
    let made = { pages: 0, threadId: 0 };
    const turns = await turnsDuring(async () => (made = await writeReportPdfOffLoop(input, path.join(scratch, 'loop-b.pdf'))));
    // made on another thread than this test's, and this thread kept turning meanwhile
    // (building the document on this thread would hold the loop from its start to the final write)
    expect(made.threadId).not.toBe(threadId);
    expect(made.pages).toBeGreaterThan(0);
    expect(turns).toBeGreaterThan(50);
    expect(pdftotext(path.join(scratch, 'loop-b.pdf'))).toContain(CAUTION.slice(0, 40));
  });

  it('begins the PDF before the crops are ready: crops that come later are drawn, crops that fail fail it and write nothing', async () => {
    const r = await get(`/api/buildups/${knollId}/report`);
    expect(r.status).toBe(200);
    const jpeg = await sharp({ create: { width: 40, height: 20, channels: 3, background: '#5a7d8c' } }).jpeg().toBuffer();
    const figure = { title: 'Late crop', caption: 'Delivered after the document began', image: jpeg, overlay: '<svg xmlns="http://www.w3.org/2000/svg" width="40" height="20"></svg>', width: 40, height: 20 };
    let deliver: (f: (typeof figure)[]) => void = () => {};
    const late = new Promise<(typeof figure)[]>((resolve) => (deliver = resolve));
    const file = path.join(scratch, 'late-crops.pdf');
    const making = writeReportPdfOffLoop({ report: r.body, figures: late, paper: 'a4' }, file);
    await new Promise((res) => setTimeout(res, 300));
    expect(fs.existsSync(file)).toBe(false); // waiting for the crops
    deliver([figure]);
    expect((await making).pages).toBeGreaterThan(0);
    expect(pdftotext(file)).toContain('Delivered after the document began');

    const failed = path.join(scratch, 'failed-crops.pdf');
    await expect(writeReportPdfOffLoop({ report: r.body, figures: Promise.reject(new Error('tile 3_1 is missing')), paper: 'a4' }, failed)).rejects.toThrow(/tile 3_1 is missing/);
    expect(fs.existsSync(failed)).toBe(false);
    // the thread goes on with the next report
    expect((await writeReportPdfOffLoop({ report: r.body, figures: [], paper: 'letter' }, path.join(scratch, 'after-failed.pdf'))).pages).toBeGreaterThan(0);
  });

  it('feet in the PDF: the height divided by 0.3048', async () => {
    const m = ((await get(`/api/buildups/${knollId}/measurements`)).body as MeasurementOutput).buildups[0];
    const ft = await pdfOf(knollId, 'a4', JSON.stringify({ unit: 'ft' }));
    // thousands grouped with a thin space (shared/format.ts); whitespace normalised on both sides
    const h = (m.heightM / FOOT).toFixed(1).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009').replace(/\s/g, ' ');
    const text = pdftotext(ft.file).replace(/\s+/g, ' ');
    expect(text).toContain(`Height ${h} ft`);
    // the classification evidence speaks feet too: its mean aggradation (0.1 m in the engine's sentence) divided by 0.3048
    const agg = (Number(m.netAggradationM!.toFixed(1)) / FOOT).toFixed(1);
    expect(text).toContain(`mean aggradation ${agg} ft`);
  }, 90_000);

  it('Note pins inside the crop are drawn on it, numbered; a new pin gives a new report', async () => {
    const before = await pdfOf(knollId, 'a4', JSON.stringify({ stretch: 2 }));
    const report = (await get(`/api/buildups/${knollId}/report`)).body;
    const at = [Math.round(report.crop.u0 + report.crop.width / 2), Math.round(report.crop.v0 + report.crop.height / 3)];
    const n = await request(t.app).post(`/api/sections/${tb11.id}/threads`).set(bearer(token)).send({ anchor: { kind: 'point', at }, body: 'Check the onlaps here' });
    expect(n.status, JSON.stringify(n.body)).toBe(201);
    const again = (await get(`/api/buildups/${knollId}/report`)).body;
    expect(again.notePins).toEqual([{ number: expect.any(Number), at, resolved: false }]);
    const after = await pdfOf(knollId, 'a4', JSON.stringify({ stretch: 2 }));
    expect(after.status.id).not.toBe(before.status.id);
    const svg = (await file(`/api/buildups/${knollId}/export/svg?stretch=2`)).body.toString('utf8');
    expect(svg).toContain('class="note-pin"');
    expect(svg).toContain(`>${again.notePins[0].number}</text>`);
  }, 90_000);

  it('PNG and SVG of the marked-up crop alone (202 with the job while it is being made)', async () => {
    // the Note pin above changed what the stretch-1 report shows: asking for the PNG queues it
    const first = await get(`/api/buildups/${knollId}/export/png`);
    expect(first.status).toBe(202);
    expect(first.headers['retry-after']).toBe('2');
    expect(first.body).toMatchObject({ code: 'report_preparing', report: { status: expect.stringMatching(/queued|running/) } });
    expect((await waitReady(first.body.report.id)).status).toBe('ready');
    const png = await file(`/api/buildups/${knollId}/export/png`);
    expect(png.status).toBe(200);
    expect(png.headers['content-type']).toBe('image/png');
    expect(png.headers['content-disposition']).toContain('tb-11-kestrel-knoll-crop.png');
    const meta = await sharp(png.body as Buffer).metadata();
    expect([meta.format, meta.channels, meta.hasAlpha]).toEqual(['png', 3, false]); // opaque RGB
    const report = (await get(`/api/buildups/${knollId}/report`)).body;
    // drawn 1400 px wide (or narrower when the height cap applies), keeping the crop's proportions at stretch 1
    expect(Math.abs(meta.width! / meta.height! - report.crop.width / report.crop.height)).toBeLessThan(0.02 * (report.crop.width / report.crop.height));
    fs.writeFileSync(path.join(shots, 'report-crop.png'), png.body as Buffer);
    const svg = await file(`/api/buildups/${knollId}/export/svg`);
    expect(svg.status).toBe(200);
    expect(svg.headers['content-type']).toBe('image/svg+xml');
    const text = (svg.body as Buffer).toString('utf8');
    expect(text).toContain('<image');
    expect(text).toContain('data:image/jpeg;base64,');
    expect((text.match(/class="top /g) ?? []).length).toBeGreaterThanOrEqual(2 * report.geometry.cycles.length - 1);
    expect(text).toContain('VE ≈');
  }, 60_000);

  it('a new buildup version gives a new report; the old one is dropped with its files', async () => {
    const first = await pdfOf(bankId, 'a4');
    const old = await BuildupReportRow.findByPk(first.status.id);
    const b = (await get(`/api/buildups/${bankId}`)).body;
    const saved = await request(t.app).put(`/api/buildups/${bankId}`).set(bearer(token)).send({ version: b.version, geometry: b.geometry, name: 'Marrow Bank' });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    const second = await pdfOf(bankId, 'a4');
    expect(second.status.id).not.toBe(first.status.id);
    expect(await BuildupReportRow.findByPk(first.status.id)).toBeNull();
    expect(fs.existsSync(path.join(t.storageDir, 'reports', old!.cacheKey))).toBe(false);
    expect(fs.existsSync(path.join(t.storageDir, 'reports', second.status.cacheKey, 'report.pdf'))).toBe(true);
  }, 120_000);

  it('a report whose process died is queued again and finished; no half file is left in place', async () => {
    const ask = await request(t.app).post(`/api/buildups/${bankId}/report/pdf`).set(bearer(token)).send({ paper: 'letter', stretch: 1.5 });
    const done = await waitReady(ask.body.id);
    expect(done.status).toBe('ready');
    // make it look like a run of a dead process: running, owned by a worker id with no heartbeat row, files not yet in place
    const row = (await BuildupReportRow.findByPk(ask.body.id))!;
    fs.rmSync(path.join(t.storageDir, 'reports', row.cacheKey), { recursive: true, force: true });
    await row.update({ status: 'running', workerId: 'w00000000deadbeef', progress: 40 });
    const rec = await recoverReports();
    expect(rec.requeued).toContain(row.id);
    const again = await waitReady(row.id);
    expect(again.status).toBe('ready');
    expect((await BuildupReportRow.findByPk(row.id))!.attempts).toBe(2);
    expect(fs.existsSync(path.join(t.storageDir, 'reports', row.cacheKey, 'report.pdf'))).toBe(true);
    // the scratch of the finished run is gone
    expect(fs.readdirSync(path.join(t.storageDir, 'tmp')).filter((n) => n.startsWith('report-'))).toEqual([]);
  }, 120_000);
});

describe('report folders', () => {
  it('a folder no row refers to goes after an hour; a young one or one with a row stays', async () => {
    const { sweepReportFolders, REPORT_LEFTOVER_AGE_MS } = await import('../../server/jobs/report.job');
    const orphan = 'a'.repeat(64);
    const young = 'b'.repeat(64);
    for (const k of [orphan, young]) {
      fs.mkdirSync(path.join(t.storageDir, 'reports', k), { recursive: true });
      fs.writeFileSync(path.join(t.storageDir, 'reports', k, 'report.pdf'), '%PDF-leftover');
    }
    const past = new Date(Date.now() - REPORT_LEFTOVER_AGE_MS - 60_000);
    fs.utimesSync(path.join(t.storageDir, 'reports', orphan), past, past);
    const kept = (await BuildupReportRow.findByPk((await pdfOf(bankId, 'letter')).status.id))!;
    fs.utimesSync(path.join(t.storageDir, 'reports', kept.cacheKey), past, past);
    const gone = await sweepReportFolders();
    expect(gone).toEqual([orphan]);
    expect(fs.existsSync(path.join(t.storageDir, 'reports', young))).toBe(true);
    expect(fs.existsSync(path.join(t.storageDir, 'reports', kept.cacheKey, 'report.pdf'))).toBe(true);
  }, 60_000);
});
