/**
 * Analogue library API: hand entry, facet counts on a hand-counted set,
 * numeric ranges, full text, sort and pages, saved searches, Look-alikes on a
 * set where the order is known, curator-only changes, lists, export.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { QueryTypes } from 'sequelize';
import { createSequelize } from '../../server/db/sequelize';
import { analogueSearchSchema, type HandEntryInput } from '../../shared/schemas/analogues';
import { exportCsv as exportCsvPages, exportGeoJson as exportGeoJsonPages, type ExportSink } from '../../server/services/analogue-import.service';
import Papa from 'papaparse';
import { facetCache, forgetGeneration, searchCache } from '../../server/services/analogue-rows';
import { searchParseStats } from '../../server/controllers/analogue.controller';
import { AuditEvent } from '../../server/models/index';

let t: TestApp;
let curator: string;
let interpreter: string;
let reviewer: string;

const cite = { authors: 'Varnel, Q.', year: 2001, title: 'Invented buildups of the Tessel Basin', container: 'Tessel Basin Bulletin (invented)' };

/** A flat base 0…W at depth 1000 m and a triangular envelope peaking at x = peak·W with height h. */
function triangle(W: number, h: number, peak = 0.5) {
  return {
    base: [
      [0, 1000],
      [W, 1000],
    ] as [number, number][],
    tops: [],
    envelope: [
      [0, 1000],
      [peak * W, 1000 - h],
      [W, 1000],
    ] as [number, number][],
  };
}

function entry(name: string, over: Partial<HandEntryInput> = {}): HandEntryInput {
  return {
    name,
    citation: cite,
    metrics: { heightM: 100, baseWidthM: 2000, trajectoryDeg: 90, flankAngleDeg: 10, aspectRatio: 0.05 },
    lengthUnit: 'm',
    basis: 'depth',
    ...over,
  } as HandEntryInput;
}

async function add(token: string, body: object) {
  const r = await request(t.app).post('/api/analogues').set(bearer(token)).send(body);
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body;
}

const get = (url: string, token = interpreter) => request(t.app).get(url).set(bearer(token));
const counts = (facet: { value: string; count: number }[]) => Object.fromEntries(facet.map((f) => [f.value, f.count]));

beforeAll(async () => {
  t = await createTestApp();
  curator = await t.token('curator');
  interpreter = await t.token('interpreter');
  reviewer = await t.token('reviewer');
  // the hand-counted set (8 records); hand counts are written next to each assertion
  const set: [string, Partial<HandEntryInput>][] = [
    ['Quenmor Bank A', { setting: 'bank', factory: 'tropical', climate: 'tropical', evolutionClass: 'aggrading', icsUnit: 'Visean', tags: ['karst', 'well-tied'], metrics: { heightM: 50 } }],
    ['Quenmor Bank B', { setting: 'bank', factory: 'tropical', climate: 'arid', evolutionClass: 'prograding', icsUnit: 'Tortonian', tags: ['karst'], metrics: { heightM: 150 } }],
    ['Velost Bank', { setting: 'bank', factory: 'cool-water', climate: 'temperate', evolutionClass: 'backstepping', icsUnit: 'Aptian', tags: ['well-tied'], metrics: { heightM: 250 } }],
    ['Drasun Pinnacle', { setting: 'pinnacle', factory: 'tropical', climate: 'tropical', evolutionClass: 'drowned', icsUnit: 'Tortonian', tags: ['karst'], metrics: { heightM: 300 } }],
    ['Drasun Pinnacle East', { setting: 'pinnacle', factory: 'tropical', climate: 'subtropical', evolutionClass: 'aggrading', icsUnit: 'Frasnian', tags: [], metrics: { heightM: 90 } }],
    ['Ostrin Platform', { setting: 'isolated-platform', factory: 'tropical', climate: 'tropical', evolutionClass: 'backstepping', icsUnit: 'Aptian', tags: ['karst', 'gas-bearing'], metrics: { heightM: 400 } }],
    ['Brelpav Mound', { setting: 'bank', factory: 'mud-mound', climate: 'arid', evolutionClass: 'aggrading', icsUnit: 'Visean', tags: ['gas-bearing'], metrics: { heightM: 120 }, notes: 'Stromatactis-rich core described from cuttings' }],
    ['Cortur Atoll', { setting: 'atoll-like', factory: 'tropical', climate: 'tropical', evolutionClass: 'prograding', icsUnit: 'Tortonian', tags: ['karst'], metrics: { heightM: 180 } }],
  ];
  for (const [name, over] of set) await add(curator, entry(name, { ...over, metrics: { ...entry(name).metrics, ...over.metrics } }));
}, 120_000);

afterAll(async () => {
  await t?.close();
});

describe('facet counts', () => {
  it('counts every facet value with no filter (hand-counted)', async () => {
    const r = await get('/api/analogues');
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.total).toBe(8);
    // settings: bank A, B, Velost, Brelpav = 4; pinnacle 2; isolated-platform 1; atoll-like 1
    expect(counts(r.body.facets.setting)).toEqual({ bank: 4, pinnacle: 2, 'isolated-platform': 1, 'atoll-like': 1 });
    // factories: tropical A, B, Drasun, Drasun E, Ostrin, Cortur = 6; cool-water 1; mud-mound 1
    expect(counts(r.body.facets.factory)).toEqual({ tropical: 6, 'cool-water': 1, 'mud-mound': 1 });
    // periods: Visean → Carboniferous (A, Brelpav), Tortonian → Neogene (B, Drasun, Cortur), Aptian → Cretaceous (Velost, Ostrin), Frasnian → Devonian
    expect(counts(r.body.facets.period)).toEqual({ Carboniferous: 2, Neogene: 3, Cretaceous: 2, Devonian: 1 });
    // tags: karst A, B, Drasun, Ostrin, Cortur = 5; well-tied A, Velost = 2; gas-bearing Ostrin, Brelpav = 2
    expect(counts(r.body.facets.tags)).toEqual({ karst: 5, 'well-tied': 2, 'gas-bearing': 2 });
  });

  it('each facet counts under every other filter but not its own (three facets and a range)', async () => {
    // filters: setting ∈ {bank}, factory ∈ {tropical, mud-mound}, class ∈ {aggrading, prograding}, height 60…1000
    const r = await get('/api/analogues?setting=bank&factory=tropical,mud-mound&class=aggrading,prograding&r.heightM=60..1000');
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    // rows with height 60…1000: all but Bank A (50)
    // result: bank ∧ (tropical|mud-mound) ∧ (aggr|prog) ∧ h≥60 → Bank B (trop, prog, 150), Brelpav (mud, aggr, 120) = 2
    expect(r.body.total).toBe(2);
    expect(r.body.items.map((i: { name: string }) => i.name).sort()).toEqual(['Brelpav Mound', 'Quenmor Bank B']);
    // setting facet (ignores setting): (trop|mud) ∧ (aggr|prog) ∧ h≥60 → B bank, Drasun E pinnacle (aggr, 90), Brelpav bank, Cortur atoll-like
    expect(counts(r.body.facets.setting)).toEqual({ bank: 2, pinnacle: 1, 'atoll-like': 1 });
    // factory facet (ignores factory): bank ∧ (aggr|prog) ∧ h≥60 → B tropical, Brelpav mud-mound (Velost is backstepping)
    expect(counts(r.body.facets.factory)).toEqual({ tropical: 1, 'mud-mound': 1 });
    // class facet (ignores class): bank ∧ (trop|mud) ∧ h≥60 → B prograding, Brelpav aggrading (Velost is cool-water)
    expect(counts(r.body.facets.class)).toEqual({ prograding: 1, aggrading: 1 });
    // climate facet: all filters → B arid, Brelpav arid
    expect(counts(r.body.facets.climate)).toEqual({ arid: 2 });
    // tags (all filters, counted in the same pass as the facets): Bank B karst, Brelpav gas-bearing
    expect(counts(r.body.facets.tags)).toEqual({ karst: 1, 'gas-bearing': 1 });
  });

  it("the app's database sessions run without JIT (compile time would dwarf a facet scan once its cost estimate passes jit_above_cost)", async () => {
    const sequelize = createSequelize(t.databaseUrl);
    try {
      const [row] = await sequelize.query<{ jit: string }>('SHOW jit', { type: QueryTypes.SELECT });
      expect(row.jit).toBe('off');
    } finally {
      await sequelize.close();
    }
  });

  it('tags combine with AND and their counts drill down', async () => {
    const r = await get('/api/analogues?tags=karst');
    expect(r.body.total).toBe(5);
    // among the five karst ones: well-tied only Bank A; gas-bearing only Ostrin
    expect(counts(r.body.facets.tags)).toEqual({ karst: 5, 'well-tied': 1, 'gas-bearing': 1 });
    const both = await get('/api/analogues?tags=karst,gas-bearing');
    expect(both.body.items.map((i: { name: string }) => i.name)).toEqual(['Ostrin Platform']);
  });

  it('full text over name, citation and notes; sort and pages', async () => {
    const notes = await get('/api/analogues?q=stromatactis');
    expect(notes.body.items.map((i: { name: string }) => i.name)).toEqual(['Brelpav Mound']);
    const name = await get('/api/analogues?q=pinnacle');
    expect(name.body.total).toBe(2);
    const cited = await get('/api/analogues?q=tessel%20bulletin');
    expect(cited.body.total).toBe(8);
    const sorted = await get('/api/analogues?sort=heightM&dir=desc&pageSize=3&page=2');
    // heights descending: 400, 300, 250 | 180, 150, 120 | 90, 50
    expect(sorted.body.items.map((i: { metrics: { heightM: number } }) => i.metrics.heightM)).toEqual([180, 150, 120]);
    expect(sorted.body.total).toBe(8);
  });

  it('a change makes a repeated search current (the cache follows the library generation)', async () => {
    const before = await get('/api/analogues?setting=atoll-like');
    expect(before.body.total).toBe(1);
    const extra = await add(curator, entry('Galnel Atoll', { setting: 'atoll-like' }));
    const after = await get('/api/analogues?setting=atoll-like');
    expect(after.body.total).toBe(2);
    const del = await request(t.app).delete(`/api/analogues/${extra.id}`).set(bearer(curator));
    expect(del.status).toBe(204);
    expect((await get('/api/analogues?setting=atoll-like')).body.total).toBe(1);
  });

  it('a search answer carries an entity tag: unchanged → 304, after a change → 200 with the new answer', async () => {
    const url = '/api/analogues?setting=atoll-like&sort=heightM';
    const first = await get(url);
    expect(first.status).toBe(200);
    const etag = first.headers.etag as string;
    expect(etag).toMatch(/^W\/"[\w-]+"$/);
    const same = await request(t.app).get(url).set(bearer(interpreter)).set('If-None-Match', etag);
    expect(same.status).toBe(304);
    const extra = await add(curator, entry('Oskel Atoll', { setting: 'atoll-like' }));
    const changed = await request(t.app).get(url).set(bearer(interpreter)).set('If-None-Match', etag);
    expect(changed.status).toBe(200);
    expect(changed.headers.etag).not.toBe(etag);
    expect(changed.body.total).toBe(first.body.total + 1);
    expect((await request(t.app).delete(`/api/analogues/${extra.id}`).set(bearer(curator))).status).toBe(204);
  });

  it('paging and re-sorting a search count its facets once; a change counts again', async () => {
    forgetGeneration();
    const p1 = await get('/api/analogues?status=any&pageSize=2');
    const p2 = await get('/api/analogues?status=any&pageSize=2&page=2');
    const sorted = await get('/api/analogues?status=any&pageSize=2&sort=heightM&dir=desc');
    expect([p1.status, p2.status, sorted.status]).toEqual([200, 200, 200]);
    expect(p2.body.facets).toEqual(p1.body.facets);
    expect(sorted.body.total).toBe(p1.body.total);
    expect(p2.body.items.map((i: { id: number }) => i.id)).not.toEqual(p1.body.items.map((i: { id: number }) => i.id));
    expect(searchCache.size).toBe(3);
    expect(facetCache.size).toBe(1);
    const extra = await add(curator, entry('Counted Again Bank', { setting: 'bank' }));
    expect(facetCache.size).toBe(0);
    const after = await get('/api/analogues?status=any&pageSize=2&page=2');
    expect(after.body.total).toBe(p1.body.total + 1);
    expect((await request(t.app).delete(`/api/analogues/${extra.id}`).set(bearer(curator))).status).toBe(204);
  });

  it('a search string met again is not parsed again; a bad one is refused every time; the same search written otherwise gets the same answer', async () => {
    const url = '/api/analogues?setting=bank,pinnacle&r.heightM=10..400&sort=heightM&dir=desc&pageSize=3';
    const before = searchParseStats.parsed;
    const a = await get(url);
    const b = await get(url);
    expect([a.status, b.status]).toEqual([200, 200]);
    expect(searchParseStats.parsed - before).toBe(1);
    expect(b.body).toEqual(a.body);
    // the parameters in another order: parsed on its own, answered alike (the answer cache keys on the parsed search)
    const c = await get('/api/analogues?dir=desc&pageSize=3&sort=heightM&r.heightM=10..400&setting=bank,pinnacle');
    expect(searchParseStats.parsed - before).toBe(2);
    expect(c.body).toEqual(a.body);
    for (let i = 0; i < 2; i++) {
      const bad = await get('/api/analogues?setting=bank&r.heightM=..abc');
      expect(bad.status).toBe(400);
      expect(bad.body.details[0].path).toBe('ranges.heightM.max');
    }
    expect(searchParseStats.parsed - before).toBe(4);
  });

  it('bad search parameters answer 400 naming the field', async () => {
    const r = await get('/api/analogues?r.heightM=abc..');
    expect(r.status).toBe(400);
    expect(r.body.details[0].path).toBe('ranges.heightM.min');
    const s = await get('/api/analogues?sort=colour');
    expect(s.status).toBe(400);
    expect(s.body.details[0].path).toBe('sort');
    const range = await get('/api/analogues?r.heightM=500..100');
    expect(range.status).toBe(400);
    expect(range.body.details[0].path).toBe('ranges.heightM');
  });
});

describe('records and permissions', () => {
  it('only curators and admins write; everybody signed in reads', async () => {
    expect((await request(t.app).get('/api/analogues')).status).toBe(401);
    for (const tok of [interpreter, reviewer]) {
      const r = await request(t.app).post('/api/analogues').set(bearer(tok)).send(entry('Refused'));
      expect(r.status).toBe(403);
      expect((await get('/api/analogues', tok)).status).toBe(200);
    }
    const admin = await t.token('admin');
    const a = await add(admin, entry('Admin Entry Rise'));
    const patch = await request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(interpreter)).send({ version: a.version, name: 'x' });
    expect(patch.status).toBe(403);
    expect((await request(t.app).delete(`/api/analogues/${a.id}`).set(bearer(admin))).status).toBe(204);
  });

  it('hand entry converts feet, needs a velocity for time-measured numbers, refuses unknown tags with the field', async () => {
    const ft = await add(curator, entry('Feet Entry Knoll', { lengthUnit: 'ft', metrics: { heightM: 100, areaM2: 1000 } }));
    // international foot 0.3048 m (1959 definition)
    expect(ft.metrics.heightM).toBeCloseTo(30.48, 9);
    expect(ft.metrics.areaM2).toBeCloseTo(1000 * 0.3048 ** 2, 9);
    const time = await request(t.app).post('/api/analogues').set(bearer(curator)).send(entry('Timed', { basis: 'time' }));
    expect(time.status).toBe(400);
    expect(time.body.details[0].path).toBe('basisVelocityMs');
    const tag = await request(t.app).post('/api/analogues').set(bearer(curator)).send(entry('Unknown Tag', { setting: 'lagoon-ring' }));
    expect(tag.status).toBe(422);
    expect(tag.body.code).toBe('unknown_tag');
    expect(tag.body.details[0].path).toBe('setting');
    const ics = await request(t.app).post('/api/analogues').set(bearer(curator)).send(entry('Unknown Stage', { icsUnit: 'Tesselian' }));
    expect(ics.status).toBe(422);
    expect(ics.body.details[0].path).toBe('icsUnit');
    const bad = await request(t.app).post('/api/analogues').set(bearer(curator)).send({ ...entry('Bad'), metrics: { heightM: 'tall' } });
    expect(bad.status).toBe(400);
    expect(bad.body.details[0].path).toBe('metrics.heightM');
    const ctl = await request(t.app).post('/api/analogues').set(bearer(curator)).send(entry('Bad\u0007Name'));
    expect(ctl.status).toBe(400);
    expect(ctl.body.details[0].path).toBe('name');
  });

  it('the curator overrides the class with a reason, with optimistic locking', async () => {
    const a = await add(curator, entry('Override Knoll', { evolutionClass: 'aggrading' }));
    const noReason = await request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: a.version, classOverride: 'drowned' });
    expect(noReason.status).toBe(400);
    expect(noReason.body.details[0].path).toBe('classOverrideReason');
    const ok = await request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: a.version, classOverride: 'drowned', classOverrideReason: 'Onlap on the top seen on a crossing line' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body).toMatchObject({ class: 'drowned', engineClass: 'aggrading', classOverride: 'drowned' });
    const stale = await request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: a.version, name: 'Stale' });
    expect(stale.status).toBe(409);
    expect(stale.body.code).toBe('version_conflict');
    await request(t.app).delete(`/api/analogues/${a.id}`).set(bearer(curator));
  });

  it('two saves from the same version at once: one lands, the other meets the conflict (none is lost unseen)', async () => {
    const a = await add(curator, entry('Twin Save Knoll'));
    const audits = () => AuditEvent.count({ where: { action: 'analogue.update', targetId: String(a.id) } });
    const before = await audits();
    for (let round = 0; round < 3; round++) {
      const v = (await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(curator))).body.version;
      const [x, y] = await Promise.all([
        request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: v, notes: `first of round ${round}` }),
        request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: v, tags: [`second-${round}`] }),
      ]);
      expect([x.status, y.status].sort(), JSON.stringify([x.body.version ?? x.body.code, y.body.version ?? y.body.code])).toEqual([200, 409]);
      const now = (await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(curator))).body;
      expect(now.version).toBe(v + 1);
      expect((x.status === 200 ? x : y).body).toEqual(now);
    }
    expect(await audits()).toBe(before + 3);
    await request(t.app).delete(`/api/analogues/${a.id}`).set(bearer(curator));
  });

  it('controlled lists: curators add and remove, a value in use stays', async () => {
    const add1 = await request(t.app).post('/api/analogues/lists/setting').set(bearer(curator)).send({ value: 'ramp-margin', label: 'Ramp margin' });
    expect(add1.status, JSON.stringify(add1.body)).toBe(201);
    const dup = await request(t.app).post('/api/analogues/lists/setting').set(bearer(curator)).send({ value: 'ramp-margin', label: 'Again' });
    expect(dup.status).toBe(409);
    const refused = await request(t.app).post('/api/analogues/lists/setting').set(bearer(interpreter)).send({ value: 'x', label: 'X' });
    expect(refused.status).toBe(403);
    const lists = await get('/api/analogues/lists');
    expect(lists.body.setting.map((i: { value: string }) => i.value)).toContain('ramp-margin');
    const inUse = await request(t.app).delete('/api/analogues/lists/setting/bank').set(bearer(curator));
    expect(inUse.status).toBe(409);
    expect(inUse.body.code).toBe('list_value_in_use');
    expect((await request(t.app).delete('/api/analogues/lists/setting/ramp-margin').set(bearer(curator))).status).toBe(204);
    expect((await request(t.app).post('/api/analogues/lists/colour').set(bearer(curator)).send({ value: 'x', label: 'X' })).status).toBe(404);
  });

  it('controlled lists at the same moment: one add of a value wins; a removal and a save using the value never both land', async () => {
    const addTwice = await Promise.all(
      ['Shelf ring', 'Shelf ring again'].map((label) => request(t.app).post('/api/analogues/lists/setting').set(bearer(curator)).send({ value: 'shelf-ring', label })),
    );
    expect(addTwice.map((r) => r.status).sort()).toEqual([201, 409]);
    expect(addTwice.find((r) => r.status === 409)!.body).toMatchObject({ code: 'list_value_exists', details: [{ path: 'value' }] });
    const a = await add(curator, entry('Ring Shoal'));
    for (let round = 0; round < 3; round++) {
      const v = (await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(curator))).body.version;
      const [save, remove] = await Promise.all([
        request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: v, setting: 'shelf-ring' }),
        request(t.app).delete('/api/analogues/lists/setting/shelf-ring').set(bearer(curator)),
      ]);
      const now = (await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(curator))).body;
      const listed = (await get('/api/analogues/lists')).body.setting.some((i: { value: string }) => i.value === 'shelf-ring');
      if (save.status === 200) {
        // the save landed first: the value is in use and stays
        expect(remove.body.code).toBe('list_value_in_use');
        expect([now.setting, listed]).toEqual(['shelf-ring', true]);
      } else {
        // the removal landed first: the save is refused, naming the field
        expect([save.status, save.body.code, save.body.details[0].path, remove.status]).toEqual([422, 'unknown_tag', 'setting', 204]);
        expect([now.setting, listed]).toEqual([null, false]);
      }
      // back to the start for the next round: no setting, the value listed
      if (now.setting) expect((await request(t.app).patch(`/api/analogues/${a.id}`).set(bearer(curator)).send({ version: now.version, setting: null })).status).toBe(200);
      if (!listed) expect((await request(t.app).post('/api/analogues/lists/setting').set(bearer(curator)).send({ value: 'shelf-ring', label: 'Shelf ring' })).status).toBe(201);
    }
    await request(t.app).delete(`/api/analogues/${a.id}`).set(bearer(curator));
    expect((await request(t.app).delete('/api/analogues/lists/setting/shelf-ring').set(bearer(curator))).status).toBe(204);
  });

  it('saved searches belong to their owner', async () => {
    const s = await request(t.app).post('/api/analogues/saved-searches').set(bearer(interpreter)).send({ name: 'Karst banks', query: 'setting=bank&tags=karst' });
    expect(s.status, JSON.stringify(s.body)).toBe(201);
    expect((await get('/api/analogues/saved-searches')).body.map((x: { name: string }) => x.name)).toEqual(['Karst banks']);
    expect((await get('/api/analogues/saved-searches', reviewer)).body).toEqual([]);
    expect((await request(t.app).delete(`/api/analogues/saved-searches/${s.body.id}`).set(bearer(reviewer))).status).toBe(404);
    expect((await request(t.app).delete(`/api/analogues/saved-searches/${s.body.id}`).set(bearer(interpreter))).status).toBe(204);
  });

  it('exports a search as CSV and GeoJSON', async () => {
    const csv = await get('/api/analogues/export.csv?setting=pinnacle');
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const lines = csv.text.trim().split(/\r?\n/);
    expect(lines[0].split(',').slice(0, 3)).toEqual(['id', 'name', 'status']);
    expect(lines.length).toBe(3); // header + the two pinnacles
    expect(csv.text).toContain('Drasun Pinnacle East');
    const geo = await get('/api/analogues/export.geojson');
    expect(geo.status).toBe(200);
    const body = JSON.parse(geo.text);
    expect(body.type).toBe('FeatureCollection');
    // none of the hand-counted set has coordinates
    expect(body.features).toEqual([]);
  });
});

describe('exports written page by page', () => {
  const collect = () => {
    let text = '';
    const sink: ExportSink & { text: () => string } = { write: async (s) => void (text += s), closed: () => false, text: () => text };
    return sink;
  };

  it('one row per page gives the same bytes as the route (CSV and GeoJSON), and the rows parse back', async () => {
    const extra = [
      await add(curator, entry('Paged Knoll, "north"', { latitude: -40.5, longitude: -130.25 })),
      await add(curator, entry('Paged Knoll south', { latitude: -41.5, longitude: -131.75 })),
    ];
    const q = analogueSearchSchema.parse({ status: 'any', sort: 'name' });
    const csvRoute = await get('/api/analogues/export.csv?status=any');
    const csvPaged = collect();
    await exportCsvPages(q, csvPaged, { pageRows: 1 });
    expect(csvPaged.text()).toBe(csvRoute.text);
    const parsed = Papa.parse<Record<string, string>>(csvPaged.text(), { header: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    const total = (await get('/api/analogues?status=any&pageSize=1')).body.total as number;
    expect(parsed.data.length).toBe(total);
    expect(parsed.data.map((r) => r.name)).toContain('Paged Knoll, "north"');
    const geoRoute = await get('/api/analogues/export.geojson?status=any');
    const geoPaged = collect();
    await exportGeoJsonPages(q, geoPaged, { pageRows: 1 });
    expect(geoPaged.text()).toBe(geoRoute.text);
    const fc = JSON.parse(geoPaged.text());
    // only the two rows added here have coordinates (in the database's name order)
    expect(fc.features.map((f: { geometry: { coordinates: number[] } }) => f.geometry.coordinates).sort((a: number[], b: number[]) => b[0] - a[0])).toEqual([
      [-130.25, -40.5],
      [-131.75, -41.5],
    ]);
    for (const e of extra) expect((await request(t.app).delete(`/api/analogues/${e.id}`).set(bearer(curator))).status).toBe(204);
  });

  it('a reader that stalls between pages does not hold the database connection: the session ends, the export fails, the pool goes on', async () => {
    const q = analogueSearchSchema.parse({ status: 'any' });
    let writes = 0;
    const stalling: ExportSink = {
      write: async () => {
        if (++writes === 2) await new Promise((r) => setTimeout(r, 2500)); // longer than the 1 s allowed below
      },
      closed: () => false,
    };
    await expect(exportCsvPages(q, stalling, { pageRows: 1, stallSeconds: 1 })).rejects.toThrow();
    expect(writes).toBe(2);
    for (let i = 0; i < 12; i++) expect((await get('/api/analogues?status=any&pageSize=1&facets=0')).status).toBe(200); // more than the pool's 10 connections
  }, 20_000);

  it('stops when the reader goes away, and the cursor is closed (the next export works)', async () => {
    let writes = 0;
    const q = analogueSearchSchema.parse({ status: 'any' });
    await exportCsvPages(q, { write: async () => void writes++, closed: () => writes >= 2 }, { pageRows: 1 });
    expect(writes).toBe(2); // the header and one page
    const again = await get('/api/analogues/export.csv?status=any');
    expect(again.status).toBe(200);
  });
});

describe('Look-alikes', () => {
  it('metrics: order by z-score distance on a set where it is known', async () => {
    const ids: Record<string, number> = {};
    for (const [name, h, traj] of [
      ['LA Query', 100, 90],
      ['LA Near Up', 110, 90],
      ['LA Near Down', 90, 90],
      ['LA Mid', 150, 90],
      ['LA Far', 1000, 90],
    ] as const)
      ids[name] = (await add(curator, entry(name, { tags: ['lookalike-set'], metrics: { heightM: h, trajectoryDeg: traj, baseWidthM: 2000, flankAngleDeg: 10, aspectRatio: 0.05 } }))).id;
    const r = await request(t.app)
      .post('/api/analogues/look-alikes')
      .set(bearer(interpreter))
      .send({ from: { analogueId: ids['LA Query'] }, mode: 'metrics', metrics: [{ key: 'heightM', weight: 1 }], k: 4, filter: { tags: ['lookalike-set'] } });
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    // height is compared in log10: |log 1.1| = 0.041 < |log 0.9| = 0.046 < |log 1.5| = 0.176 < |log 10| = 1
    expect(r.body.matches.map((m: { analogue: { name: string } }) => m.analogue.name)).toEqual(['LA Near Up', 'LA Near Down', 'LA Mid', 'LA Far']);
    expect(r.body.compared).toBe(4);
    const d = r.body.matches[0].differences[0];
    expect(d).toMatchObject({ key: 'heightM', query: 100, match: 110 });
    expect(d.difference).toBeCloseTo(10, 9);
    // the z difference is the log difference over the library's standard deviation of log10 height
    expect(d.zDifference).toBeCloseTo(Math.log10(1.1) / r.body.metrics[0].sd, 9);
    expect(r.body.matches[0].distance).toBeCloseTo(Math.abs(d.zDifference), 9);
  });

  it('shape: a scaled copy is nearest, then the profile with the nearer peak', async () => {
    const mk = async (name: string, W: number, h: number, peak: number) => (await add(curator, entry(name, { tags: ['shape-set'], profile: triangle(W, h, peak) }))).id;
    const q = await mk('SH Query', 2000, 100, 0.5);
    await mk('SH Scaled Copy', 5000, 400, 0.5);
    await mk('SH Skewed A Little', 2000, 100, 0.6);
    await mk('SH Skewed A Lot', 2000, 100, 0.9);
    const r = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { analogueId: q }, mode: 'shape', k: 5, filter: { tags: ['shape-set'] } });
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.matches.map((m: { analogue: { name: string } }) => m.analogue.name)).toEqual(['SH Scaled Copy', 'SH Skewed A Little', 'SH Skewed A Lot']);
    expect(r.body.matches[0].distance).toBeCloseTo(0, 12);
    expect(r.body.matches[0].shape).toHaveLength(64);
    const noProfile = await request(t.app)
      .post('/api/analogues/look-alikes')
      .set(bearer(interpreter))
      .send({ from: { analogueId: (await get('/api/analogues?q=Velost')).body.items[0].id }, mode: 'shape' });
    expect(noProfile.status).toBe(422);
    expect(noProfile.body.code).toBe('query_lacks_profile');
  });

  it('refuses a metric listed twice and an unknown metric with their paths', async () => {
    const r = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { analogueId: 1 }, mode: 'metrics', metrics: [{ key: 'heightM' }, { key: 'heightM' }] });
    expect(r.status).toBe(400);
    expect(r.body.details[0].path).toBe('metrics[1].key');
    const u = await request(t.app).post('/api/analogues/look-alikes').set(bearer(interpreter)).send({ from: { analogueId: 1 }, mode: 'metrics', metrics: [{ key: 'colour' }] });
    expect(u.status).toBe(400);
    expect(u.body.details[0].path).toBe('metrics[0].key');
  });
});
