import { describe, expect, it } from 'vitest';
import { mapBuildup, mapBuildups, mapPositions, type PointMap } from '../../../client/canvas/depthMapping';
import type { EditorBuildup } from '../../../client/canvas/model';

const map: PointMap = (p) => [p[0], p[1] * 2 + 1];

const b: EditorBuildup = {
  id: 'b1',
  name: 'Marrow Bank',
  version: 3,
  base: [[0, 10], [100, 10]],
  cycles: [{ id: 'c0', top: [[10, 5], [50, 2], [90, 5]], marginLeft: [10, 5], marginRight: [90, 5], flankLeft: [[10, 5], [5, 9]], flankRight: null, ageTopMa: 12, systemsTract: null }],
  terminations: [{ id: 't1', type: 'onlap', at: [30, 4] }],
  topIsDrowningSurface: false,
};

describe('depth-view mapping of the drawn records', () => {
  it('maps every point and keeps ids, names and numbers', () => {
    const m = mapBuildup(map, b);
    expect(m.id).toBe('b1');
    expect(m.base).toEqual([[0, 21], [100, 21]]);
    expect(m.cycles[0].top).toEqual([[10, 11], [50, 5], [90, 11]]);
    expect(m.cycles[0].marginLeft).toEqual([10, 11]);
    expect(m.cycles[0].flankLeft).toEqual([[10, 11], [5, 19]]);
    expect(m.cycles[0].flankRight).toBeNull();
    expect(m.cycles[0].ageTopMa).toBe(12);
    expect(m.terminations[0]).toEqual({ id: 't1', type: 'onlap', at: [30, 9] });
    expect(b.base).toEqual([[0, 10], [100, 10]]); // the record itself is untouched
  });

  it('caches per record: an unchanged buildup keeps the same mapped arrays', () => {
    expect(mapBuildup(map, b)).toBe(mapBuildup(map, b));
    const edited = { ...b, base: [[0, 12], [100, 12]] as [number, number][] };
    const m2 = mapBuildup(map, edited);
    expect(m2.base).toEqual([[0, 25], [100, 25]]);
    expect(m2.cycles[0].top).toBe(mapBuildup(map, b).cycles[0].top); // the shared top array is mapped once
    expect(mapBuildups(null, [b])[0]).toBe(b); // time view: the records themselves
  });

  it('maps the positions of a tool preview, keeping its readings', () => {
    const preview = { kind: 'ruler', a: [1, 1], b: [2, 3], fixed: true, reading: { a: [0, 500], b: [10, 600], angleDeg: 30 }, message: 'x' };
    const m = mapPositions(map, preview);
    expect(m.a).toEqual([1, 3]);
    expect(m.b).toEqual([2, 7]);
    expect(m.reading).toBe(preview.reading);
    const trace = { kind: 'trace', points: [[1, 1], [2, 2]], hover: [3, 3], snap: { point: [4, 4], isEnd: true }, cycleIndex: 0 };
    expect(mapPositions(map, trace)).toEqual({ kind: 'trace', points: [[1, 3], [2, 5]], hover: [3, 7], snap: { point: [4, 9], isEnd: true }, cycleIndex: 0 });
    expect(mapPositions(null, trace)).toBe(trace);
  });
});
