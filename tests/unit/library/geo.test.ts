import { geoArea, geoContains } from 'd3-geo';
import { describe, expect, it } from 'vitest';
import {
  boxFromCorners,
  filterOutline,
  forD3,
  insideGeoFilter,
  insideOutline,
  radiusFromPoints,
  worldLand,
} from '../../../client/components/library/geo';

describe('library map geography', () => {
  it('builds a box from two corners in any order, clamped and rounded', () => {
    expect(boxFromCorners([20.123, -5], [-10, 95])).toEqual({ kind: 'box', west: -10, east: 20.12, south: -5, north: 90 });
  });

  it('a radius is the great-circle distance: 1° of latitude is about 111 km', () => {
    // 1° of a great circle on turf's mean earth radius 6371.0088 km = 111.19 km (common practice).
    const f = radiusFromPoints([0, 0], [0, 1]);
    expect(f).toEqual({ kind: 'radius', lon: 0, lat: 0, km: 111 });
    expect(insideGeoFilter(0, 0.99, f)).toBe(true);
    expect(insideGeoFilter(0, 1.01, f)).toBe(false);
  });

  it('box membership by degrees agrees with turf point-in-polygon on the outline', () => {
    const box = boxFromCorners([-40, -20], [-10, 5]);
    const outline = filterOutline(box);
    for (const [lon, lat] of [
      [-25, -10],
      [-39.9, 4.9],
      [-41, 0],
      [-20, 6],
      [0, 0],
    ] as const) {
      expect(insideOutline(lon, lat, outline)).toBe(insideGeoFilter(lon, lat, box));
    }
  });

  it('the outline handed to d3-geo encloses the small area, not the rest of the globe', () => {
    for (const f of [boxFromCorners([-40, -20], [-10, 5]), radiusFromPoints([-30, -10], [-30, -5])]) {
      const d3 = forD3(filterOutline(f));
      expect(geoArea(d3)).toBeLessThan(2 * Math.PI); // less than half the sphere (4π sr)
      const c = f.kind === 'box' ? [(f.west + f.east) / 2, (f.south + f.north) / 2] : [f.lon, f.lat];
      expect(geoContains(d3, c as [number, number])).toBe(true);
      expect(geoContains(d3, [150, 60])).toBe(false);
    }
  });

  it('the offline land outline is Natural Earth land: it contains Africa and not the mid-Pacific', () => {
    const land = worldLand();
    expect(geoContains(land, [20, 5])).toBe(true);
    expect(geoContains(land, [-150, 0])).toBe(false);
  });
});
