import { describe, expect, it } from 'vitest';
import { comparableKeys, metricDifferences } from '../../../client/components/library/metricDifferences';

describe('per-metric differences of a shape Look-alike', () => {
  it('match minus query in raw units; SDs in log10 space for size metrics, plain for angles (hand-computed)', () => {
    const rows = metricDifferences(
      { heightM: 100, trajectoryDeg: 10, baseWidthM: 2000 },
      { heightM: 1000, trajectoryDeg: 4, baseWidthM: 500 },
      ['heightM', 'trajectoryDeg', 'baseWidthM'],
      { heightM: 0.5, trajectoryDeg: 3, baseWidthM: 0.25 },
    );
    expect(rows).toHaveLength(3);
    // log10(1000) - log10(100) = 1 decade, over an SD of 0.5 decades
    expect(rows[0]).toMatchObject({ key: 'heightM', query: 100, match: 1000, difference: 900 });
    expect(rows[0].zDifference).toBeCloseTo(2, 12);
    // (4 - 10) / 3
    expect(rows[1]).toMatchObject({ key: 'trajectoryDeg', difference: -6 });
    expect(rows[1].zDifference).toBeCloseTo(-2, 12);
    // log10(500 / 2000) = -0.60206 over 0.25
    expect(rows[2].difference).toBe(-1500);
    expect(rows[2].zDifference).toBeCloseTo(Math.log10(0.25) / 0.25, 12);
  });

  it('leaves out metrics either side lacks, non-positive values of log metrics, repeats and unknown keys; keeps the order asked', () => {
    const rows = metricDifferences(
      { heightM: 0, aspectRatio: 0.1, flankAngleDeg: 20, netBackstepM: -40, cycleCount: 3 },
      { heightM: 50, aspectRatio: 0.2, flankAngleDeg: null, netBackstepM: 10 },
      ['netBackstepM', 'heightM', 'aspectRatio', 'flankAngleDeg', 'cycleCount', 'aspectRatio', 'bogus' as never],
      { netBackstepM: 25, aspectRatio: 0.3 },
    );
    expect(rows.map((r) => r.key)).toEqual(['netBackstepM', 'aspectRatio']);
    expect(rows[0].difference).toBe(50);
    expect(rows[0].zDifference).toBeCloseTo(2, 12); // not a log metric: a negative query value is fine
    expect(rows[1].zDifference).toBeCloseTo(Math.log10(2) / 0.3, 12);
  });

  it('no SD known (or a zero SD): the raw difference stays, the SD column is empty', () => {
    const rows = metricDifferences({ heightM: 80, flankAngleDeg: 12 }, { heightM: 60, flankAngleDeg: 15 }, ['heightM', 'flankAngleDeg'], { flankAngleDeg: 0 });
    expect(rows.map((r) => [r.key, r.difference, r.zDifference])).toEqual([
      ['heightM', -20, null],
      ['flankAngleDeg', 3, null],
    ]);
  });

  it('comparable keys: those the query has a usable value for, once each', () => {
    expect(comparableKeys({ heightM: 120, baseWidthM: -5, trajectoryDeg: 0, aspectRatio: null }, ['heightM', 'baseWidthM', 'trajectoryDeg', 'aspectRatio', 'heightM'])).toEqual([
      'heightM',
      'trajectoryDeg',
    ]);
  });
});
