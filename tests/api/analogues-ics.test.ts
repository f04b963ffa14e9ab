/**
 * The ICS chart table served to the tag pickers: edition named, Phanerozoic
 * periods, epochs and stages with base ages, contiguous and nested.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { icsPlacement, icsUnitAt } from '../../shared/ics-chart';
import type { IcsUnit } from '../../shared/schemas/analogues';

let t: TestApp;
let units: IcsUnit[];

beforeAll(async () => {
  t = await createTestApp();
  const r = await request(t.app).get('/api/analogues/ics-chart').set(bearer(await t.token('reviewer')));
  expect(r.status).toBe(200);
  expect(r.body.edition).toMatch(/International Chronostratigraphic Chart v\d{4}\/\d{2}/);
  units = r.body.units;
}, 60_000);
afterAll(async () => t?.close());

const base = (name: string) => units.find((u) => u.name === name)?.baseMa;

describe('ICS chart', () => {
  it('base ages of several boundaries', () => {
    // from memory of the International Chronostratigraphic Chart (v2022/10); not checked against a printed copy here
    expect(base('Gelasian')).toBe(2.58);
    expect(base('Aquitanian')).toBe(23.03);
    expect(base('Danian')).toBe(66.0);
    expect(base('Cenomanian')).toBe(100.5);
    expect(base('Hettangian')).toBe(201.4);
    expect(base('Induan')).toBe(251.902);
    expect(base('Asselian')).toBe(298.9);
    expect(base('Tournaisian')).toBe(358.9);
    expect(base('Lochkovian')).toBe(419.2);
    expect(base('Fortunian')).toBe(538.8);
  });

  it('covers the Phanerozoic periods, nested and contiguous', () => {
    const periods = units.filter((u) => u.rank === 'period').map((u) => u.name);
    expect(periods).toEqual(['Quaternary', 'Neogene', 'Paleogene', 'Cretaceous', 'Jurassic', 'Triassic', 'Permian', 'Carboniferous', 'Devonian', 'Silurian', 'Ordovician', 'Cambrian']);
    for (const rank of ['period', 'epoch', 'stage'] as const) {
      const list = units.filter((u) => u.rank === rank);
      expect(list[0].topMa).toBe(0);
      for (let i = 1; i < list.length; i++) expect(list[i].topMa, `${list[i].name}`).toBe(list[i - 1].baseMa);
      for (const u of list) expect(u.baseMa, u.name).toBeGreaterThan(u.topMa);
    }
    for (const p of units.filter((u) => u.rank === 'period')) {
      const eps = units.filter((u) => u.rank === 'epoch' && u.period === p.name);
      expect(eps[eps.length - 1].baseMa, p.name).toBe(p.baseMa);
      for (const e of eps) {
        const st = units.filter((u) => u.rank === 'stage' && u.epoch === e.name);
        expect(st[st.length - 1].baseMa, e.name).toBe(e.baseMa);
      }
    }
  });

  it('places ages and names', () => {
    expect(icsUnitAt(10)?.name).toBe('Tortonian');
    expect(icsUnitAt(66.0)?.name).toBe('Danian'); // a base belongs to its own unit
    expect(icsPlacement('Visean', null)).toEqual({ period: 'Carboniferous', epoch: 'Mississippian', stage: 'Visean' });
    expect(icsPlacement('Miocene', null)).toEqual({ period: 'Neogene', epoch: 'Miocene', stage: null });
    expect(icsPlacement(null, 700)).toEqual({ period: null, epoch: null, stage: null });
  });
});
