/**
 * CSV import into the Analogue library: the mapping step, a validation report
 * naming every bad row and its reason, nothing stored while there are errors
 * unless the curator takes the good rows only, and files that are too large
 * or not CSV refused with a clear answer.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { IMPORT_MAX_BYTES, IMPORT_MAX_ROWS } from '../../shared/schemas/analogues';
import { healthWhileHeavy } from '../helpers/off-loop';

let t: TestApp;
let curator: string;

const MAPPING = {
  columns: { Name: 'name', 'Height (m)': 'heightM', 'Width (m)': 'baseWidthM', Setting: 'setting', Stage: 'icsUnit', Lat: 'latitude', Lon: 'longitude', Tags: 'tags' },
  lengthUnit: 'm',
};

// rows 1…8; the bad ones and why are listed in the test below
const CSV = [
  'Name,Height (m),Width (m),Setting,Stage,Lat,Lon,Tags',
  'Velmor Knoll,120,2400,bank,Aptian,-41.2,-131.5,karst;well-tied', // 1 good
  'Ostdra Bank,340 ft,5100,bank,Aptian,-40.1,-129.0,', // 2 wrong unit (feet in a metre column)
  'Quenlio Mound,tall,900,pinnacle,Visean,-42.0,-133.3,', // 3 not numeric
  'Zelhal Rise,80,1500,lagoon-ring,Visean,-43.0,-135.0,', // 4 unknown setting
  'Velmor Knoll,130,2500,bank,Aptian,-41.3,-131.6,', // 5 duplicate of row 1
  ',70,800,bank,Aptian,-41.0,-131.0,', // 6 missing name
  'Corgri Tor,210,3300,atoll-like,Tesselian,-44.0,-137.0,', // 7 unknown stage
  'Brelsun Shoal,95 m,1800,isolated-platform,Frasnian,-95,-128.0,', // 8 latitude out of range (the "95 m" is fine)
  'Pavrin Dome,60,1100,bank,Frasnian,-39.5,-126.0,', // 9 good
].join('\n');

function post(path: string, csv: string | Buffer, fields: Record<string, string> = {}, filename = 'analogues.csv') {
  let q = request(t.app).post(path).set(bearer(curator));
  for (const [k, v] of Object.entries(fields)) q = q.field(k, v);
  return q.attach('file', Buffer.isBuffer(csv) ? csv : Buffer.from(csv), filename);
}

beforeAll(async () => {
  t = await createTestApp();
  curator = await t.token('curator');
}, 60_000);
afterAll(async () => {
  await t?.close();
});

describe('CSV import', () => {
  it('suggests a mapping from the headers and reports every bad row with its reason', async () => {
    const r = await post('/api/analogues/import/preview', CSV);
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.headers).toEqual(['Name', 'Height (m)', 'Width (m)', 'Setting', 'Stage', 'Lat', 'Lon', 'Tags']);
    expect(r.body.suggestedMapping).toEqual(MAPPING);
    const rep = r.body.report;
    expect(rep.rowCount).toBe(9);
    const byRow = Object.fromEntries(rep.problems.map((p: { row: number; reason: string }) => [p.row, p.reason]));
    expect(byRow).toEqual({ 2: 'wrong_unit', 3: 'not_numeric', 4: 'unknown_tag', 5: 'duplicate', 6: 'missing_required', 7: 'unknown_tag', 8: 'out_of_range' });
    expect(rep.goodRows).toBe(2);
    expect(rep.badRows).toBe(7);
    const p2 = rep.problems.find((p: { row: number }) => p.row === 2);
    expect(p2).toMatchObject({ column: 'Height (m)', field: 'heightM', line: 3 });
    expect(p2.message).toContain('340 ft');
    expect(rep.problems.find((p: { row: number }) => p.row === 5).message).toContain('row 1');
  });

  it('imports nothing while there are errors, then the good rows only when asked', async () => {
    const all = await post('/api/analogues/import', CSV, { mapping: JSON.stringify(MAPPING), mode: 'all' });
    expect(all.status).toBe(422);
    expect(all.body.code).toBe('import_has_errors');
    expect(all.body.details.badRows).toBe(7);
    expect((await request(t.app).get('/api/analogues').set(bearer(curator))).body.total).toBe(0);
    const good = await post('/api/analogues/import', CSV, { mapping: JSON.stringify(MAPPING), mode: 'goodRowsOnly' });
    expect(good.status, JSON.stringify(good.body)).toBe(201);
    expect(good.body.imported).toBe(2);
    const list = await request(t.app).get('/api/analogues?sort=name').set(bearer(curator));
    expect(list.body.items.map((i: { name: string }) => i.name)).toEqual(['Pavrin Dome', 'Velmor Knoll']);
    expect(list.body.items[1]).toMatchObject({ source: 'import', setting: 'bank', stage: 'Aptian', period: 'Cretaceous', latitude: -41.2, tags: ['karst', 'well-tied'] });
    // importing the same file again: the good rows are now duplicates of the library
    const again = await post('/api/analogues/import/preview', CSV, { mapping: JSON.stringify(MAPPING) });
    const reasons = again.body.report.problems.filter((p: { row: number }) => p.row === 1 || p.row === 9).map((p: { reason: string }) => p.reason);
    expect(reasons).toEqual(['duplicate', 'duplicate']);
  });

  it('converts a feet mapping and refuses a metre-labelled column under it', async () => {
    const csv = 'name,height_ft,width_ft\nTurnel Bank,328.084,6561.68\n';
    const ok = await post('/api/analogues/import', csv, { mapping: JSON.stringify({ columns: { name: 'name', height_ft: 'heightM', width_ft: 'baseWidthM' }, lengthUnit: 'ft' }), mode: 'all' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    const a = await request(t.app).get(`/api/analogues/${ok.body.ids[0]}`).set(bearer(curator));
    // international foot 0.3048 m: 328.084 ft ≈ 100.000 m
    expect(a.body.metrics.heightM).toBeCloseTo(328.084 * 0.3048, 9);
    const wrong = await post('/api/analogues/import/preview', 'name,Height (m)\nX,1\n', { mapping: JSON.stringify({ columns: { name: 'name', 'Height (m)': 'heightM' }, lengthUnit: 'ft' }) });
    expect(wrong.body.report.fileProblems.map((p: { code: string }) => p.code)).toEqual(['wrong_unit']);
  });

  it('names missing required columns', async () => {
    const r = await post('/api/analogues/import', 'Setting,Tags\nbank,karst\n', { mapping: JSON.stringify({ columns: { Setting: 'setting', Tags: 'tags' }, lengthUnit: 'm' }), mode: 'all' });
    expect(r.status).toBe(422);
    expect(r.body.details.fileProblems.map((p: { code: string }) => p.code)).toEqual(['missing_required_columns', 'missing_required_columns']);
    const unknown = await post('/api/analogues/import/preview', 'name,h\nA,1\n', { mapping: JSON.stringify({ columns: { name: 'name', h: 'heightM', colour: 'notes' }, lengthUnit: 'm' }) });
    expect(unknown.body.report.fileProblems.map((p: { code: string }) => p.code)).toEqual(['unknown_column']);
    const badMap = await post('/api/analogues/import', 'name,h\nA,1\n', { mapping: JSON.stringify({ columns: { h: 'heightInFurlongs' } }) });
    expect(badMap.status).toBe(400);
    expect(badMap.body.details[0].path).toBe('mapping.columns.h');
  });

  it('refuses a file over the limit (413) and files that are not CSV (422)', async () => {
    // a 50 MB upload: refused by the upload limit while streaming, nothing stored
    const big = Buffer.alloc(50 * 1024 * 1024, 'a,1\n');
    const r = await post('/api/analogues/import/preview', big);
    expect(r.status).toBe(413);
    expect(r.body.code).toBe('file_too_large');
    expect(r.body.details[0].path).toBe('file');
    expect(IMPORT_MAX_BYTES).toBeLessThan(big.length);
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]);
    const p = await post('/api/analogues/import/preview', png, {}, 'looks.csv');
    expect(p.status).toBe(422);
    expect(p.body.code).toBe('not_csv');
    const latin1 = Buffer.from('name,height\nB\xe9ll Knoll,12\n', 'latin1');
    expect((await post('/api/analogues/import/preview', latin1)).body.code).toBe('not_csv');
    const empty = await post('/api/analogues/import/preview', Buffer.alloc(0));
    expect(empty.status).toBe(422);
    const none = await request(t.app).post('/api/analogues/import/preview').set(bearer(curator)).field('mapping', '{}');
    expect(none.status).toBe(400);
    expect(none.body.details[0].path).toBe('file');
  });

  it('parses and checks a file on a worker thread: /api/health answers while a 20,000-row file is checked, and the report is the same', async () => {
    const rows = ['Name,Height (m),Width (m),Setting'];
    for (let i = 0; i < IMPORT_MAX_ROWS; i++) rows.push(`Frelgan Knoll ${i},${50 + (i % 300)},${1000 + i},${i % 997 === 0 ? 'lagoon-ring' : 'bank'}`);
    const { order, heavy: r, health } = await healthWhileHeavy(t.app, () => post('/api/analogues/import/preview', rows.join('\n')));
    expect(health.status).toBe(200);
    expect(r.status, JSON.stringify(r.body).slice(0, 300)).toBe(200);
    expect(order).toEqual(['health', 'heavy']);
    // independently counted: rows whose index is a multiple of 997 carry the unknown setting
    const unknown = Math.floor((IMPORT_MAX_ROWS - 1) / 997) + 1;
    expect(r.body.report.rowCount).toBe(IMPORT_MAX_ROWS);
    expect(r.body.report.badRows).toBe(unknown);
    expect(r.body.report.problems.every((p: { reason: string; field: string }) => p.reason === 'unknown_tag' && p.field === 'setting')).toBe(true);
    expect(r.body.sample).toHaveLength(10);
  });
});
