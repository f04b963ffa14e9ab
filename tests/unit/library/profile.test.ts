import { describe, expect, it } from 'vitest';
import { frameProfile, largestGap, shapePoints } from '../../../client/components/library/profile';

const parse = (s: string) => s.split(' ').map((p) => p.split(',').map(Number));

describe('frameProfile', () => {
  // A buildup 1000 m wide and 400 m high (base at 2000 m depth, crest at 1600 m).
  const tall = {
    base: [
      [0, 2000],
      [1000, 2000],
    ] as [number, number][],
    tops: [
      [
        [200, 1800],
        [800, 1800],
      ],
    ] as [number, number][][],
    envelope: [
      [0, 2000],
      [500, 1600],
      [1000, 2000],
    ] as [number, number][],
  };

  it('draws a true-scale shape when it fills enough of the box, depth downwards', () => {
    const f = frameProfile(tall, 520, 300, 10);
    expect(f.exaggeration).toBe(1);
    const env = parse(f.envelope);
    expect(env[0][0]).toBe(10);
    expect(env[2][0]).toBe(510);
    // 500 px for 1000 m: 400 m of height is 200 px, centred in the 280 px inner height.
    expect(env[1][1]).toBe(10 + 40);
    expect(env[0][1]).toBe(10 + 40 + 200);
    expect(parse(f.tops[0])).toEqual([
      [110, 150],
      [410, 150],
    ]);
  });

  it('exaggerates depth for a flat buildup and reports the factor', () => {
    const flat = { ...tall, envelope: tall.envelope.map(([x, z]) => [x * 100, z] as [number, number]), base: tall.base.map(([x, z]) => [x * 100, z] as [number, number]) };
    const f = frameProfile(flat, 520, 300, 10, 0.5);
    // True scale would be 500 px / 100 km: 400 m → 2 px. Half the inner height (140 px) needs ×70.
    expect(f.exaggeration).toBeCloseTo(70, 6);
  });
});

describe('shapePoints and largestGap', () => {
  it('puts x at equal steps and height up, clamped to 0…1', () => {
    expect(shapePoints([0, 1, 0.5, 2], 106, 56, 3)).toBe('3,53 36.3,3 69.7,28 103,3');
    expect(shapePoints([1], 10, 10)).toBe('');
  });
  it('largest gap is the largest absolute difference', () => {
    expect(largestGap([0, 0.5, 1], [0.1, 0.2, 1])).toBeCloseTo(0.3);
  });
});
