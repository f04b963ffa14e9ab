/**
 * Drowning threshold by bisection (shared/forward-model/threshold.ts) on a
 * case with a known answer.
 *
 * Derivation: a flat column starting exactly at the drowning depth dD (where
 * G = 1 % of Gm) under a constant rise R. Its water depth follows
 * dd/dt = R − f·G(d), an autonomous 1-D equation (and its explicit-Euler
 * steps are monotone for these small steps), so the depth moves away from dD
 * downward iff R > f·G(dD) = f·0.01·Gm. The crest ends deeper than dD (drowned)
 * iff f < R / (0.01·Gm), and, for a fixed f, iff R > 0.01·f·Gm.
 * With Gm = 10 mm/yr = 10 000 m/Myr and R = 50 m/Myr: f* = 50 / 100 = 0.5.
 */
import { describe, expect, it } from 'vitest';
import { depthForGrowthFraction } from '../../../shared/measure/growth';
import { drowningThreshold } from '../../../shared/forward-model';

const growth = { GmMmPerYr: 10, I0: 2000, Ik: 250, kPerM: 0.1 };
const dD = depthForGrowthFraction(0.01, { Gm: 10, I0: 2000, Ik: 250, k: 0.1 });
const flatAtDrowningDepth = {
  profile: [[0, dD], [1000, dD]] as [number, number][],
  columns: 3,
  growth,
  subsidence: { kind: 'constant' as const, rateMPerMyr: 50 },
  stepYr: 500,
  durationYr: 2e6,
  cycles: { productionFactors: [1] },
};

describe('drowning threshold', () => {
  it('production factor: converges on f* = R / (0.01·Gm) = 0.5', () => {
    const r = drowningThreshold(flatAtDrowningDepth, { parameter: 'productionFactor', tolerance: 1e-6 });
    expect(r.drowningDepthM).toBeCloseTo(dD, 12);
    expect(r.converged).toBe(true);
    expect(r.value!).toBeCloseTo(0.5, 5);
    // the sweep for the plot: drowned below the threshold, not above, final depth non-increasing with the factor
    expect(r.points.length).toBeGreaterThan(11);
    for (const p of r.points) if (Math.abs(p.value - 0.5) > 1e-3) expect(p.drowned).toBe(p.value < 0.5);
    for (let i = 1; i < r.points.length; i++) expect(r.points[i].crestWaterDepthM).toBeLessThanOrEqual(r.points[i - 1].crestWaterDepthM + 1e-9);
  });

  it('rise rate: converges on R* = 0.01·f·Gm = 70 m/Myr for f = 0.7', () => {
    const r = drowningThreshold({ ...flatAtDrowningDepth, cycles: { productionFactors: [0.7] } }, { parameter: 'riseRate', lo: 0, hi: 500, tolerance: 1e-4 });
    expect(r.converged).toBe(true);
    expect(r.value!).toBeCloseTo(70, 3);
  });

  it('a relative tolerance stops the bisection once the bracket is that fraction of the range (default range of the rise: 0 to 2·Gm)', () => {
    const r = drowningThreshold({ ...flatAtDrowningDepth, cycles: { productionFactors: [0.7] } }, { parameter: 'riseRate', relativeTolerance: 1e-3, sweepPoints: 0 });
    const range = 2 * growth.GmMmPerYr * 1000;
    expect(r.converged).toBe(true);
    expect(r.bracket![1] - r.bracket![0]).toBeLessThanOrEqual(1e-3 * range);
    expect(r.bracket![1] - r.bracket![0]).toBeGreaterThan(0.5e-3 * range); // stopped there, not at the default 1e-4
    expect(Math.abs(r.value! - 70)).toBeLessThanOrEqual(1e-3 * range);
  });

  it('says so when the range holds no switch', () => {
    const r = drowningThreshold(flatAtDrowningDepth, { parameter: 'riseRate', lo: 0, hi: 20, sweepPoints: 0 });
    expect(r.value).toBeNull();
    expect(r.reason).toMatch(/not drowned anywhere/);
  });

  it('can be cancelled through its progress callback', () => {
    let calls = 0;
    expect(() => drowningThreshold(flatAtDrowningDepth, { parameter: 'productionFactor', onProgress: () => ++calls < 3 })).toThrow(/cancelled/);
    expect(calls).toBe(3);
  });
});
