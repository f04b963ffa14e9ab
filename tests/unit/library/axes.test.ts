import { describe, expect, it } from 'vitest';
import { histogram, wantsLogAxis } from '../../../client/components/library/axes';

describe('wantsLogAxis', () => {
  it('is log when all values are positive and max/min exceeds 100', () => {
    expect(wantsLogAxis([2, 50, 201])).toBe(true);
    expect(wantsLogAxis([2, 50, 200])).toBe(false); // exactly 100 is not more than two decades
  });
  it('is linear when any value is zero or negative', () => {
    expect(wantsLogAxis([0, 1, 1e6])).toBe(false);
    expect(wantsLogAxis([-1, 1, 1e6])).toBe(false);
  });
  it('ignores missing values and needs two numbers', () => {
    expect(wantsLogAxis([null, 1, undefined, 1e4, Number.NaN])).toBe(true);
    expect(wantsLogAxis([5])).toBe(false);
    expect(wantsLogAxis([])).toBe(false);
  });
});

describe('histogram', () => {
  it('uses Sturges bins (ceil(log2 n) + 1) and counts every value once', () => {
    const xs = [0, 1, 2, 3, 4, 5, 6, 7];
    const h = histogram(xs);
    expect(h).toHaveLength(4); // ceil(log2 8) + 1 = 4
    expect(h.map((b) => b.count)).toEqual([2, 2, 2, 2]);
    expect(h[0].from).toBe(0);
    expect(h[3].to).toBe(7);
  });
  it('bins in log10 when asked and drops values that are not positive', () => {
    const h = histogram([1, 10, 100, 1000, 0, -5], true, 3);
    expect(h.map((b) => b.count)).toEqual([1, 1, 2]);
    expect(h[0].from).toBeCloseTo(1);
    expect(h[1].from).toBeCloseTo(10);
    expect(h[2].to).toBeCloseTo(1000);
  });
  it('one bin when all values are equal, none when there are none', () => {
    expect(histogram([3, 3, 3])).toEqual([{ from: 3, to: 3, count: 3 }]);
    expect(histogram([null, undefined])).toEqual([]);
  });
});
