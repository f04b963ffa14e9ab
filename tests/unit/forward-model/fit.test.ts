/**
 * Nelder–Mead (shared/forward-model/nelder-mead.ts, from Nelder & Mead 1965)
 * on standard test functions, and the fit of production factors
 * (shared/forward-model/fit.ts) on a synthetic interpretation.
 */
import { describe, expect, it } from 'vitest';
import { ForwardModelCancelled, fitProductionFactors, nelderMead, runForwardModel, type ForwardModelParamsInput } from '../../../shared/forward-model';

describe('Nelder–Mead', () => {
  it('Rosenbrock (1960) from (−1.2, 1): minimum 0 at (1, 1)', () => {
    const rosen = (x: number[]) => 100 * (x[1] - x[0] ** 2) ** 2 + (1 - x[0]) ** 2;
    const r = nelderMead(rosen, [-1.2, 1], { maxIterations: 5000, fTol: 1e-14, xTol: 1e-10 });
    expect(r.converged).toBe(true);
    expect(r.x[0]).toBeCloseTo(1, 5);
    expect(r.x[1]).toBeCloseTo(1, 5);
    expect(r.fx).toBeLessThan(1e-10);
  });

  it('a shifted, scaled quadratic in 4 dimensions: minimum at its centre', () => {
    const c = [3, -2, 0.5, 10];
    const w = [1, 10, 0.1, 4];
    const q = (x: number[]) => x.reduce((s, xi, i) => s + w[i] * (xi - c[i]) ** 2, 0) + 7;
    const r = nelderMead(q, [0, 0, 0, 0], { step: 1, maxIterations: 10000, fTol: 1e-14, xTol: 1e-9 });
    r.x.forEach((xi, i) => expect(xi).toBeCloseTo(c[i], 5));
    expect(r.fx).toBeCloseTo(7, 10);
  });
});

const synthetic: ForwardModelParamsInput = {
  profile: [[0, 205], [1000, 5], [2000, 205]],
  columns: 81,
  growth: { GmMmPerYr: 10, I0: 2000, Ik: 250, kPerM: 0.1 },
  subsidence: { kind: 'constant', rateMPerMyr: 3000 },
  stepYr: 20,
  durationYr: 30000,
  cycles: { boundaries: [10000, 20000], productionFactors: [0.8, 0.5, 0.3] },
};

function tracedTops(p: ForwardModelParamsInput, offset = 0) {
  const run = runForwardModel(p);
  // every 4th column, as an interpreter's trace would sample the surfaces
  return run.surfaces.map((s) => Array.from(run.xs, (x, i) => [x, s[i] + offset] as [number, number]).filter((_, i) => i % 4 === 0));
}

describe('fit of production factors', () => {
  it('recovers the factors that made a synthetic interpretation within 0.01 each, misfit below 1 cm, no warning', { timeout: 120_000 }, () => {
    const tops = tracedTops(synthetic);
    const r = fitProductionFactors({ ...synthetic, cycles: { ...synthetic.cycles, productionFactors: [0.5] } }, tops);
    [0.8, 0.5, 0.3].forEach((f, i) => expect(Math.abs(r.factors[i] - f)).toBeLessThan(0.01));
    expect(r.rmsM).toBeLessThan(0.01);
    expect(r.warnings).toEqual([]);
  });

  it('recovers the subsidence rate with the factors when asked (within 2 %)', { timeout: 120_000 }, () => {
    const two = { ...synthetic, durationYr: 20000, cycles: { boundaries: [10000], productionFactors: [0.8, 0.5] } };
    const tops = tracedTops(two);
    const r = fitProductionFactors({ ...two, subsidence: { kind: 'constant', rateMPerMyr: 2500 }, cycles: { boundaries: [10000], productionFactors: [0.6] } }, tops, { fitSubsidence: true });
    expect(Math.abs(r.subsidenceMPerMyr! - 3000) / 3000).toBeLessThan(0.02);
    [0.8, 0.5].forEach((f, i) => expect(Math.abs(r.factors[i] - f)).toBeLessThan(0.02));
  });

  it('warns when the fit is poor and when a factor is not pinned down', { timeout: 120_000 }, () => {
    // tops 30 m above anything the model can build (production capped at sea level): poor
    const poor = fitProductionFactors(synthetic, tracedTops(synthetic, -30));
    expect(poor.warnings.some((w) => /^Poor fit/.test(w))).toBe(true);
    // a rise of 12 mm/yr sinks everything below the light after the first cycle: later factors change nothing
    const deep = { ...synthetic, subsidence: { kind: 'constant' as const, rateMPerMyr: 12000 } };
    const r = fitProductionFactors({ ...deep, cycles: { ...deep.cycles, productionFactors: [0.5] } }, tracedTops(deep));
    expect(r.warnings.some((w) => /Non-unique: the production factor of cycle 3/.test(w))).toBe(true);
  });

  it('refuses tops that do not match the cycles, naming the field', () => {
    expect(() => fitProductionFactors(synthetic, tracedTops(synthetic).slice(0, 2))).toThrow(/^tops: the model closes 3 cycles but 2 tops were given/);
    expect(() => fitProductionFactors(synthetic, [[[0, 1]], [[0, Number.NaN]], [[0, 1]]])).toThrow(/^tops\[1\]\[0\]: must be a point/);
  });

  it('reports progress rising to below 1 and stops when the progress callback says so', { timeout: 60_000 }, () => {
    const coarse = { ...synthetic, stepYr: 200 };
    const tops = tracedTops(coarse);
    const seen: number[] = [];
    fitProductionFactors({ ...coarse, cycles: { ...coarse.cycles, productionFactors: [0.5] } }, tops, { onProgress: (f) => void seen.push(f) });
    expect(seen.length).toBeGreaterThan(10);
    expect(seen.every((f, i) => f > 0 && f <= 0.99 && (i === 0 || f >= seen[i - 1]))).toBe(true);
    let calls = 0;
    expect(() => fitProductionFactors(coarse, tops, { onProgress: () => ++calls < 5 })).toThrow(ForwardModelCancelled);
    expect(calls).toBe(5);
  });
});
