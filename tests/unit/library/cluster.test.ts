import { describe, expect, it } from 'vitest';
import { clusterPoints, clusterRadius, mergeOverlapping } from '../../../client/components/library/cluster';

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

describe('mergeOverlapping', () => {
  const fixed = () => 10; // every marker 10 px in radius
  it('merges circles that would overlap, weighting the position by the counts', () => {
    const c = mergeOverlapping(
      [
        { key: 'c:0:0', x: 0, y: 0, count: 3, members: [{ id: 1, x: 0, y: 0 }, { id: 2, x: 0, y: 0 }, { id: 3, x: 0, y: 0 }] },
        { key: 'p:4', x: 20, y: 0, count: 1, members: [{ id: 4, x: 20, y: 0 }] },
        { key: 'p:5', x: 100, y: 0, count: 1, members: [{ id: 5, x: 100, y: 0 }] },
      ],
      fixed,
      2,
    );
    expect(c).toHaveLength(2);
    expect(c[0]).toMatchObject({ key: 'c:0:0', count: 4, x: 5, y: 0 });
    expect(c[0].members.map((m) => m.id)).toEqual([1, 2, 3, 4]);
    expect(c[1].key).toBe('p:5');
  });
  it('keeps apart circles that only just clear each other, and chains merges until none overlap', () => {
    expect(mergeOverlapping([{ key: 'p:1', x: 0, y: 0, count: 1, members: [] }, { key: 'p:2', x: 22, y: 0, count: 1, members: [] }], fixed, 2)).toHaveLength(2);
    // Radius 10 px per member: 1 and 2 overlap (19 < 20); 2 and 3 do not (20), but once 1+2 are one
    // circle of 20 px at x = 9.5 it reaches 3 (29.5 < 30), so all three end in one marker.
    const chain = mergeOverlapping(
      [0, 19, 39].map((x, i) => ({ key: `p:${i}`, x, y: 0, count: 1, members: [] })),
      (n) => 10 * n,
      0,
    );
    expect(chain).toHaveLength(1);
    expect(chain[0].count).toBe(3);
    expect(chain[0].key).toBe('c:p:0');
  });
});
