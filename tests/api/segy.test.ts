/**
 * SEG-Y uploads against a real app, PostgreSQL and pg-boss: a 2D line becomes
 * a calibrated section with no Ties to place, a 3D cube lists its ranges and
 * gives any inline or crossline as a section without a second upload, header
 * byte overrides, refused files leave nothing behind, the header viewer's
 * data, exact amplitude windows, and re-rendering as a job.
 */
import fs from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import sharp from 'sharp';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { binary, tmpSettles, waitForStatus } from '../helpers/sections';
import { CUBE, LINE, cube3d, cubeSample, line2d, lineSample } from '../helpers/segy-fixtures';
import { writeSegy } from '../helpers/segy-writer';
import { needReference, pythonReference, runPython } from '../helpers/python-ref';
import { SegyUpload } from '../../server/models/segy';
import { Section } from '../../server/models/section';

const pyproj = pythonReference('pyproj');

let t: TestApp;
let interp: string;
let demoId: number;

beforeAll(async () => {
  t = await createTestApp();
  interp = await t.token('interpreter');
  const list = await request(t.app).get('/api/projects').set(bearer(interp));
  demoId = list.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
});
afterAll(async () => t?.close());

function sendSegy(file: Buffer | null, fields: Record<string, string | number> = {}, token: string | null = interp) {
  let r = request(t.app).post(`/api/projects/${demoId}/segy`);
  if (token) r = r.set(bearer(token));
  for (const [k, v] of Object.entries({ title: 'TB-11 SEG-Y', lineName: 'TB-11', survey: 'TB-2024', ...fields })) r = r.field(k, String(v));
  if (file) r = r.attach('file', file, 'tb11.sgy');
  return r;
}

const segyDirs = () => (fs.existsSync(path.join(t.storageDir, 'segy')) ? fs.readdirSync(path.join(t.storageDir, 'segy')) : []);

describe('2D line', () => {
  let sectionId: number;
  let uploadId: number;

  it('becomes one section, calibrated from its headers with no Ties to place, and ready', async () => {
    const r = await sendSegy(line2d(), { epsg: 32631 });
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    expect(r.body.upload).toMatchObject({ dimension: '2d', traceCount: LINE.traces, samplesPerTrace: LINE.samples, fileName: 'tb11.sgy' });
    expect(r.body.upload.ranges.positionSource).toBe('cdp');
    expect(r.body.upload.ranges.lengthM).toBeCloseTo((LINE.traces - 1) * LINE.spacingM, 9);
    sectionId = r.body.section.id;
    uploadId = r.body.upload.id;
    const s = await waitForStatus(t, interp, sectionId);
    expect(s).toMatchObject({ status: 'ready', width: LINE.traces, height: LINE.samples, sourceFormat: 'segy', verticalDomain: 'twt_ms' });
    expect(s.segy).toMatchObject({ uploadId, selection: { kind: 'line' }, render: { ramp: 'grey', clipPercentile: 99, agcMs: null } });
    const cal = s.calibration;
    expect(cal.source).toBe('segy_headers');
    expect(cal.version).toBe(1);
    // from the writer's geometry: trace i at u = i + 0.5 is 12.5·i m along the line; sample j at v = j + 0.5 is 100 + 4·j ms
    const A = cal.fit.affine;
    expect(A.a).toBeCloseTo(LINE.spacingM, 9);
    expect(A.c).toBeCloseTo(-LINE.spacingM / 2, 9);
    expect(A.e).toBeCloseTo(LINE.intervalUs / 1000, 12);
    expect(A.f).toBeCloseTo(LINE.delayMs - LINE.intervalUs / 2000, 12);
    expect([A.b, A.d]).toEqual([0, 0]);
    expect(cal.fit.segy.traceDistanceRmsM).toBeLessThan(1e-9);
    expect(cal.calibratedXRangeM).toBeCloseTo(LINE.traces * LINE.spacingM, 6);
    // line ends placed from EPSG:32631 (UTM 31N)
    expect(s.startLon).not.toBeNull();
    expect(s.lineLengthM).toBeGreaterThan(480);
    expect(s.lineLengthM).toBeLessThan(490);
  });

  it('line ends in WGS84 agree with pyproj', (ctx) => {
    const py = needReference(ctx, pyproj);
    return (async () => {
      const s = (await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(interp))).body;
      const ref = runPython(py, `
import json, sys
from pyproj import Transformer
a = json.load(sys.stdin)
t = Transformer.from_crs("EPSG:32631", "EPSG:4326", always_xy=True)
print(json.dumps([list(t.transform(x, y)) for x, y in a]))
`, [[LINE.x0, LINE.y0], [LINE.x0 + (LINE.traces - 1) * LINE.spacingM, LINE.y0]]) as number[][];
      expect(Math.abs(s.startLon - ref[0][0])).toBeLessThan(1e-9);
      expect(Math.abs(s.startLat - ref[0][1])).toBeLessThan(1e-9);
      expect(Math.abs(s.endLon - ref[1][0])).toBeLessThan(1e-9);
      expect(Math.abs(s.endLat - ref[1][1])).toBeLessThan(1e-9);
    })();
  });

  it('reads amplitude windows exactly as written, and refuses windows outside the section or too large', async () => {
    const r = await request(t.app).get(`/api/sections/${sectionId}/amplitudes?trace=3&sample=10&traces=4&samples=7`).set(bearer(interp));
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.values).toEqual(Array.from({ length: 4 }, (_, i) => Array.from({ length: 7 }, (_, j) => lineSample(3 + i, 10 + j))));
    expect(r.body.y).toEqual({ start: LINE.delayMs, step: 4, unit: 'ms' });
    const out = await request(t.app).get(`/api/sections/${sectionId}/amplitudes?trace=39&sample=0&traces=2`).set(bearer(interp));
    expect(out.status).toBe(400);
    expect(out.body.details[0].path).toBe('traces');
    const big = await request(t.app).get(`/api/sections/${sectionId}/amplitudes?trace=0&sample=0&traces=1024&samples=4096`).set(bearer(interp));
    expect(big.status).toBe(400);
    expect(big.body.details[0].path).toBe('samples');
  });

  it('shows its headers: textual, binary fields with bytes and meanings, warnings, paged trace headers', async () => {
    const h = await request(t.app).get(`/api/sections/${sectionId}/segy`).set(bearer(await t.token('reviewer')));
    expect(h.status).toBe(200);
    expect(h.body.textual).toContain('TESSEL BASIN TB-2024');
    expect(h.body.textualEncoding).toBe('ebcdic');
    expect(h.body.binary.find((f: { key: string }) => f.key === 'formatCode')).toMatchObject({ byte: 3225, bytes: 'bytes 3225–3226', value: 5 });
    expect(h.body.warnings.map((w: { code: string }) => w.code)).toContain('sample_interval_mismatch');
    expect(h.body.warnings.find((w: { code: string }) => w.code === 'sample_interval_mismatch').message).toContain(`first at trace ${LINE.oddIntervalTrace + 1}`);
    const p = await request(t.app).get(`/api/sections/${sectionId}/segy/trace-headers?page=2&pageSize=10`).set(bearer(interp));
    expect(p.status).toBe(200);
    expect(p.body.total).toBe(LINE.traces);
    expect(p.body.rows.map((r: { trace: number }) => r.trace)).toEqual([10, 11, 12, 13, 14, 15, 16, 17, 18, 19]);
    const cdpX = p.body.keys.indexOf('cdpX');
    const cdp = p.body.keys.indexOf('cdp');
    expect(p.body.rows[0].values[cdpX]).toBe(Math.round((LINE.x0 + 10 * LINE.spacingM) * 10));
    expect(p.body.rows[0].values[cdp]).toBe(1011);
  });

  it('re-renders with the diverging ramp, a clip percentile and AGC as a job, without a new upload', async () => {
    const before = (await SegyUpload.count());
    const r = await request(t.app).post(`/api/sections/${sectionId}/render`).set(bearer(interp)).send({ ramp: 'diverging', clipPercentile: 95, agcMs: 40 });
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    const s = await waitForStatus(t, interp, sectionId);
    expect(s.status).toBe('ready');
    expect(s.segy.render).toEqual({ ramp: 'diverging', clipPercentile: 95, agcMs: 40 });
    expect(await SegyUpload.count()).toBe(before);
    const tile = await request(t.app).get(`/api/sections/${sectionId}/tiles/${s.tiles.maxLevel}/0_0.jpg`).set(bearer(interp)).buffer(true).parse(binary);
    expect(tile.status).toBe(200);
    const m = await sharp(tile.body).metadata();
    expect([m.width, m.height, m.channels]).toEqual([LINE.traces, LINE.samples, 3]);
    const bad = await request(t.app).post(`/api/sections/${sectionId}/render`).set(bearer(interp)).send({ ramp: 'rainbow' });
    expect(bad.status).toBe(400);
    expect(bad.body.details[0].path).toBe('ramp');
    const refused = await request(t.app).post(`/api/sections/${sectionId}/render`).set(bearer(await t.token('reviewer'))).send({ ramp: 'grey' });
    expect(refused.status).toBe(403);
  });

  it('greyscale tiles show peaks dark and troughs light', async () => {
    const r = await request(t.app).post(`/api/sections/${sectionId}/render`).set(bearer(interp)).send({ ramp: 'grey', clipPercentile: 100 });
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    const s = await waitForStatus(t, interp, sectionId);
    const tile = await request(t.app).get(`/api/sections/${sectionId}/tiles/${s.tiles.maxLevel}/0_0.jpg`).set(bearer(interp)).buffer(true).parse(binary);
    expect((await sharp(tile.body).metadata()).channels).toBe(1);
    const { data, info } = await sharp(tile.body).extractChannel(0).raw().toBuffer({ resolveWithObject: true });
    // trace 0: peak (1000) at sample 5, trough (−1000) at sample 15
    expect(data[5 * info.width]).toBeLessThan(40);
    expect(data[15 * info.width]).toBeGreaterThan(215);
  });

  it('builds the depth view from the rendered amplitudes (a SEG-Y section has no stored image)', async () => {
    const r = await request(t.app).post(`/api/sections/${sectionId}/depth`).set(bearer(interp));
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    const until = Date.now() + 40_000;
    let s;
    for (;;) {
      s = (await request(t.app).get(`/api/sections/${sectionId}/depth`).set(bearer(interp))).body;
      if (s.status === 'ready' || s.status === 'failed' || Date.now() > until) break;
      await new Promise((res) => setTimeout(res, 200));
    }
    expect(s.failureReason ?? null).toBeNull();
    expect(s.status).toBe('ready');
    expect(s.ready.axis.width).toBe(LINE.traces);
  });

  it('deleting the section removes its 2D upload and files', async () => {
    const key = (await SegyUpload.findByPk(uploadId))!.storageKey;
    expect(segyDirs()).toContain(key);
    const d = await request(t.app).delete(`/api/sections/${sectionId}`).set(bearer(interp));
    expect(d.status).toBe(204);
    expect(await SegyUpload.findByPk(uploadId)).toBeNull();
    expect(segyDirs()).not.toContain(key);
  });
});

describe('header byte overrides', () => {
  it('reads CDP X/Y from the bytes the form names', async () => {
    const file = line2d({ cdpXByte: 221, cdpYByte: 233 });
    const without = await sendSegy(file, { cdpSpacing: 5 });
    expect(without.status).toBe(202);
    expect(without.body.upload.ranges.positionSource).toBe('cdpNumber');
    const r = await sendSegy(file, { cdpXByte: 221, cdpYByte: 233 });
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    expect(r.body.upload.ranges.positionSource).toBe('cdp');
    expect(r.body.upload.options).toMatchObject({ cdpX: 221, cdpY: 233 });
    const s = await waitForStatus(t, interp, r.body.section.id);
    expect(s.calibration.fit.affine.a).toBeCloseTo(LINE.spacingM, 9);
    const sp = await waitForStatus(t, interp, without.body.section.id);
    expect(sp.calibration.fit.affine.a).toBeCloseTo(5, 9); // CDP numbers 1001… × 5 m
  });

  it('refuses an override sent after the file (it steers the reading)', async () => {
    const r = await request(t.app).post(`/api/projects/${demoId}/segy`).set(bearer(interp)).field('title', 'late override').attach('file', line2d(), 'tb11.sgy').field('cdpXByte', '221');
    expect(r.status).toBe(400);
    expect(r.body.details[0].path).toBe('cdpXByte');
  });

  it('refuses a byte position outside the trace header, naming the field', async () => {
    const r = await sendSegy(line2d(), { inlineByte: 239 });
    expect(r.status).toBe(400);
    expect(r.body.details[0].path).toBe('inlineByte');
  });
});

describe('3D cube', () => {
  let uploadId: number;
  it('lists inline and crossline ranges (overridden bytes) and makes no section by itself', async () => {
    const r = await sendSegy(cube3d({ ilXlAt: 'elsewhere' }), { inlineByte: 9, crosslineByte: 13 });
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    expect(r.body.section).toBeNull();
    expect(r.body.upload).toMatchObject({ dimension: '3d', traceCount: 20 });
    expect(r.body.upload.ranges.inline).toEqual({ min: 10, max: 13, count: 4 });
    expect(r.body.upload.ranges.crossline).toEqual({ min: 100, max: 104, count: 5 });
    uploadId = r.body.upload.id;
  });

  it('extracts an inline and then a crossline as sections without sending the file again', async () => {
    const uploads = await SegyUpload.count();
    const a = await request(t.app).post(`/api/segy-uploads/${uploadId}/sections`).set(bearer(interp)).send({ kind: 'inline', number: 12, title: 'TB-14 inline 12' });
    expect(a.status, JSON.stringify(a.body)).toBe(202);
    const b = await request(t.app).post(`/api/segy-uploads/${uploadId}/sections`).set(bearer(interp)).send({ kind: 'crossline', number: 103, title: 'TB-14 crossline 103' });
    expect(b.status).toBe(202);
    expect(await SegyUpload.count()).toBe(uploads);
    const sa = await waitForStatus(t, interp, a.body.id);
    expect(sa).toMatchObject({ status: 'ready', width: 5, height: CUBE.samples });
    expect(sa.segy.selection).toEqual({ kind: 'inline', number: 12, traces: 5 });
    expect(sa.calibration.fit.affine.a).toBeCloseTo(CUBE.spacingM, 9);
    expect(sa.calibration.fit.affine.e).toBeCloseTo(2, 12);
    const sb = await waitForStatus(t, interp, b.body.id);
    expect(sb).toMatchObject({ status: 'ready', width: 4 });
    // amplitudes in section order: inline 12 by crossline; crossline 103 by inline (IBM float values exact)
    const wa = await request(t.app).get(`/api/sections/${a.body.id}/amplitudes?trace=0&sample=8&traces=5&samples=2`).set(bearer(interp));
    expect(wa.body.values).toEqual(CUBE.crosslines.map((xl) => [cubeSample(12, xl, 8), cubeSample(12, xl, 9)]));
    const wb = await request(t.app).get(`/api/sections/${b.body.id}/amplitudes?trace=1&sample=0&traces=3&samples=1`).set(bearer(interp));
    expect(wb.body.values).toEqual([11, 12, 13].map((il) => [cubeSample(il, 103, 0)]));
    const info = await request(t.app).get(`/api/segy-uploads/${uploadId}`).set(bearer(await t.token('reviewer')));
    expect(info.body.sections.map((s: { id: number }) => s.id)).toEqual([a.body.id, b.body.id]);
    // the upload stays while sections use it
    expect((await request(t.app).delete(`/api/segy-uploads/${uploadId}`).set(bearer(interp))).status).toBe(409);
  });

  it('refuses a line number that does not exist, naming the field', async () => {
    const r = await request(t.app).post(`/api/segy-uploads/${uploadId}/sections`).set(bearer(interp)).send({ kind: 'inline', number: 99, title: 'nothing' });
    expect(r.status).toBe(422);
    expect(r.body.details[0].path).toBe('number');
    expect(r.body.message).toContain('10–13');
  });
});

describe('refused files leave nothing behind', () => {
  const head = (format: number) => writeSegy({ format: 5, sampleInterval: 4000, samplesPerTrace: 10, binary: [[3225, 2, format]], traces: [{ samples: new Array(10).fill(1) }] });
  const cases: { name: string; file: () => Buffer; fields?: Record<string, string>; code: string; field: string; bytes: RegExp }[] = [
    { name: 'a format code outside the list', file: () => head(4), code: 'segy_bad_format', field: 'formatCode', bytes: /3225–3226/ },
    { name: 'a truncated trace', file: () => line2d().subarray(0, 3600 + 2 * (240 + 400) + 240 + 100), code: 'segy_truncated', field: 'samplesPerTrace', bytes: /3221–3222/ },
    { name: 'a file that is not SEG-Y', file: () => Buffer.alloc(5000, 0x01), code: 'segy_not_segy', field: 'textual', bytes: /1–3200/ },
    { name: 'a text file named .sgy', file: () => Buffer.from('x,y,twt\n'.repeat(600)), code: 'segy_not_segy', field: 'binary', bytes: /3201–3600/ },
    { name: 'a 3D file without inline/crossline numbers', file: () => cube3d({ ilXlAt: 'none' }), code: 'segy_no_inline_crossline', field: 'inline', bytes: /189–192/ },
    { name: 'a line with no coordinates and no spacing', file: () => writeSegy({ format: 5, sampleInterval: 4000, samplesPerTrace: 4, traces: [1, 2, 3].map((c) => ({ fields: [[21, 4, c]], samples: [1, 2, 3, 4] })) }), code: 'segy_no_positions', field: 'cdpX', bytes: /181–188/ },
  ];
  for (const c of cases) {
    it(`${c.name}: 422 naming the field and bytes; no row, no file, no scratch`, async () => {
      const uploads = await SegyUpload.count();
      const sections = await Section.count();
      const dirs = segyDirs().length;
      const r = await sendSegy(c.file(), c.fields);
      expect(r.status, JSON.stringify(r.body)).toBe(422);
      expect(r.body.code).toBe(c.code);
      expect(r.body.details[0]).toMatchObject({ path: 'file', field: c.field });
      expect(r.body.details[0].bytes).toMatch(c.bytes);
      expect(r.body.message).toMatch(c.bytes);
      expect(await SegyUpload.count()).toBe(uploads);
      expect(await Section.count()).toBe(sections);
      expect(segyDirs().length).toBe(dirs);
      expect(await tmpSettles(t)).toEqual([]);
    });
  }

  it('a failure while storing (the audit line refused by a test trigger) leaves no row, no stored file, no job', async () => {
    const db = new pg.Client({ connectionString: t.databaseUrl });
    await db.connect();
    try {
      await db.query(`CREATE FUNCTION segy_audit_refuse() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN RAISE EXCEPTION 'audit insert refused for % (test trigger)', NEW.action; END $$`);
      await db.query(`CREATE TRIGGER segy_audit_refuse BEFORE INSERT ON audit_events FOR EACH ROW WHEN (NEW.action = 'section.segy_create') EXECUTE FUNCTION segy_audit_refuse()`);
      const uploads = await SegyUpload.count();
      const sections = await Section.count();
      const dirs = segyDirs().length;
      const sectionDirs = fs.readdirSync(path.join(t.storageDir, 'sections')).length;
      const r = await sendSegy(line2d());
      expect(r.status).toBe(500);
      expect(await SegyUpload.count()).toBe(uploads);
      expect(await Section.count()).toBe(sections);
      expect(segyDirs().length).toBe(dirs);
      expect(fs.readdirSync(path.join(t.storageDir, 'sections')).length).toBe(sectionDirs);
      expect(await tmpSettles(t)).toEqual([]);
    } finally {
      await db.query('DROP TRIGGER IF EXISTS segy_audit_refuse ON audit_events').catch(() => {});
      await db.end();
    }
  });

  it('a curator may not upload (403 before the file is read)', async () => {
    const r = await sendSegy(line2d(), {}, await t.token('curator'));
    expect(r.status).toBe(403);
  });

  it('an unsupported EPSG code is refused by field', async () => {
    const r = await sendSegy(line2d(), { epsg: 27700 });
    expect(r.status).toBe(400);
    expect(r.body.details[0].path).toBe('epsg');
    expect(await tmpSettles(t)).toEqual([]);
  });
});
