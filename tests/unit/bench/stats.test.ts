/** The summaries the benchmarks print (nearest-rank percentile, as common practice defines it). */
import { describe, expect, it } from 'vitest';
import { median, ms, percentile } from '../../bench/stats';

describe('benchmark summaries', () => {
  it('median and nearest-rank percentiles do not reorder their input', () => {
    const xs = [9, 1, 7, 3, 5, 2, 8, 4, 6, 10];
    expect(median(xs)).toBe(6);
    expect(median([3, 1, 2])).toBe(2);
    expect(percentile(xs, 50)).toBe(5);
    expect(percentile(xs, 97.5)).toBe(10);
    expect(percentile(xs, 10)).toBe(1);
    expect(percentile(xs, 100)).toBe(10);
    expect(xs[0]).toBe(9);
  });
  it('prints milliseconds to one decimal', () => {
    expect(ms(12.345)).toBe('12.3 ms');
  });
});
