import { describe, expect, it } from 'vitest';
import { clusterPoints, clusterRadius } from '../../../client/components/library/cluster';

describe('clusterPoints (grid clustering in screen pixels)', () => {
  const pts = [
    { id: 1, x: 1, y: 1 },
    { id: 2, x: 9, y: 3 },
    { id: 3, x: 15, y: 15 },
    { id: 4, x: 31, y: 2 },
    { id: 5, x: Number.NaN, y: 2 },
  ];

  it('groups points of one cell at their mean, keeps lone points as themselves', () => {
    const c = clusterPoints(pts, 10);
    expect(c.map((k) => k.key)).toEqual(['c:0:0', 'p:3', 'p:4']);
    expect(c[0]).toMatchObject({ count: 2, x: 5, y: 2 });
    expect(c[0].members.map((m) => m.id)).toEqual([1, 2]);
    expect(c[1]).toMatchObject({ count: 1, x: 15, y: 15 });
  });

  it('splits clusters when the cells get smaller (zooming in) and merges them when larger', () => {
    expect(clusterPoints(pts, 5)).toHaveLength(4);
    const big = clusterPoints(pts, 40);
    expect(big).toHaveLength(1);
    expect(big[0].count).toBe(4);
  });

  it('refuses a cell size that is not positive', () => {
    expect(() => clusterPoints(pts, 0)).toThrow(RangeError);
  });

  it('marker radius grows with the count and is capped', () => {
    expect(clusterRadius(1)).toBeLessThan(clusterRadius(2));
    expect(clusterRadius(8)).toBeLessThan(clusterRadius(64));
    expect(clusterRadius(1e9)).toBe(22);
  });
});
