import { describe, expect, it } from 'vitest';
import { analogueSearchSchema } from '../../../shared/schemas/analogues';
import {
  activeFilterCount,
  areaOf,
  parseSearch,
  parseView,
  toggleFacet,
  toRouteQuery,
  withArea,
  withRange,
} from '../../../client/components/library/searchState';

const base = () => analogueSearchSchema.parse({});

describe('library search state in the URL', () => {
  it('round-trips facets, ranges, text, area, sort, page and the view through the route query', () => {
    const s = analogueSearchSchema.parse({
      q: 'Kestrel reef',
      setting: ['pinnacle', 'bank'],
      class: ['backstepping'],
      ranges: { heightM: { min: 100, max: 450.5 }, flankAngleDeg: { min: 10 } },
      bbox: [-40, -20, -10, 5],
      sort: 'heightM',
      dir: 'desc',
      page: 3,
    });
    const query = toRouteQuery(s, { view: 'plots', x: 'areaM2', y: 'aspectRatio', color: 'setting', mark: 12 });
    expect(query).toMatchObject({ 'r.heightM': '100..450.5', 'r.flankAngleDeg': '10..', setting: 'pinnacle,bank', view: 'plots', mark: '12' });
    const back = parseSearch(query);
    expect(back.problems).toEqual([]);
    expect(back.search).toEqual(s);
    expect(parseView(query)).toEqual({ view: 'plots', x: 'areaM2', y: 'aspectRatio', color: 'setting', hist: 'heightM', mark: 12 });
  });

  it('leaves defaults out so a plain search is a short link', () => {
    expect(toRouteQuery(base())).toEqual({});
  });

  it('drops a bad parameter, names its field path, and keeps the rest', () => {
    const r = parseSearch({ 'r.heightM': 'abc..20', setting: 'bank', class: 'sideways', page: '2' });
    expect(r.search.setting).toEqual(['bank']);
    expect(r.search.page).toBe(2);
    expect(r.search.ranges?.heightM).toBeUndefined();
    expect(r.search.class).toBeUndefined();
    expect(r.problems.some((p) => p.startsWith('ranges.heightM'))).toBe(true);
    expect(r.problems.some((p) => p.startsWith('class'))).toBe(true);
  });

  it('repeated keys from a hand-written link count like a comma list', () => {
    expect(parseSearch({ setting: ['bank', 'pinnacle'] }).search.setting).toEqual(['bank', 'pinnacle']);
  });

  it('unknown view values fall back to the defaults', () => {
    expect(parseView({ view: 'globe', x: 'nonsense', mark: '-3' })).toMatchObject({ view: 'list', x: 'baseWidthM', mark: null });
  });

  it('every filter change goes back to page 1', () => {
    const s = { ...base(), page: 4 };
    expect(toggleFacet(s, 'setting', 'bank')).toMatchObject({ setting: ['bank'], page: 1 });
    expect(toggleFacet({ ...s, setting: ['bank'] }, 'setting', 'bank').setting).toBeUndefined();
    expect(withRange(s, 'heightM', 5, undefined)).toMatchObject({ ranges: { heightM: { min: 5 } }, page: 1 });
    expect(withRange(withRange(s, 'heightM', 5, 6), 'heightM', undefined, undefined).ranges).toBeUndefined();
    expect(withArea(s, null).page).toBe(1);
  });

  it('a map box and a radius become bbox and near, and replace each other', () => {
    const boxed = withArea(base(), { kind: 'box', west: -40, south: -20, east: -10, north: 5 });
    expect(boxed.bbox).toEqual([-40, -20, -10, 5]);
    const circled = withArea(boxed, { kind: 'radius', lon: -30, lat: -10, km: 250 });
    expect(circled.bbox).toBeUndefined();
    expect(circled.near).toEqual({ lat: -10, lon: -30, km: 250 });
    expect(areaOf(circled)).toEqual({ kind: 'radius', lon: -30, lat: -10, km: 250 });
    expect(areaOf(boxed)).toEqual({ kind: 'box', west: -40, south: -20, east: -10, north: 5 });
  });

  it('counts active filters', () => {
    expect(activeFilterCount(base())).toBe(0);
    const s = withArea(toggleFacet(toggleFacet({ ...base(), q: 'x' }, 'setting', 'a'), 'tags', 'b'), { kind: 'radius', lon: 0, lat: 0, km: 5 });
    expect(activeFilterCount(s)).toBe(4);
  });
});
