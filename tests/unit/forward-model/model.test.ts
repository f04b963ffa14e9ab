/**
 * The growth forward model (shared/forward-model/model.ts): growth law check
 * values, keep-up and drowning, monotonic behaviour, backstepping, the
 * angle-of-repose rule and the refusal of bad parameters.
 */
import { describe, expect, it } from 'vitest';
import { depthForGrowthFraction } from '../../../shared/measure/growth';
import { measureRun, modelGrowthRate, relaxSlopes, runForwardModel, runToInterpretation, FORWARD_MODEL_PRESETS, type ForwardModelParamsInput } from '../../../shared/forward-model';
import { MeasureInputError } from '../../../shared/measure/errors';

// Check parameters of references.md (Bosscher & Schlager 1992): Gm = 10 mm/yr, I0 = 2000, Ik = 250, k = 0.1
const growth = { GmMmPerYr: 10, I0: 2000, Ik: 250, kPerM: 0.1 };
const dome = [[0, 205], [1000, 5], [2000, 205]] as [number, number][];

function params(over: Partial<ForwardModelParamsInput> = {}): ForwardModelParamsInput {
  return {
    profile: dome,
    columns: 201,
    growth,
    subsidence: { kind: 'constant', rateMPerMyr: 3000 },
    stepYr: 10,
    durationYr: 30000,
    cycles: { boundaries: [10000, 20000], productionFactors: [1, 1, 1] },
    ...over,
  };
}

/** Thickness (mm) grown in one step of 1 yr by a flat column at depth d with no sea-level change. */
function oneYearGrowthMm(d: number): number {
  const run = runForwardModel({ profile: [[0, d], [100, d]], columns: 2, growth, stepYr: 1, durationYr: 1, cycles: { productionFactors: [1] } });
  return (d - run.surfaces[0][0]) * 1000;
}

describe('growth law in the model (Bosscher & Schlager 1992, check values computed in references.md)', () => {
  it.each([
    [20, 7.9419],
    [30, 3.7849],
    [50, 0.5385],
  ])('G(%d m) = %f mm/yr, in the formula and in one model step', (d, g) => {
    expect(modelGrowthRate({ growth }, d)).toBeCloseTo(g, 3);
    expect(oneYearGrowthMm(d)).toBeCloseTo(g, 3);
  });

  it('G at the surface is Gm·tanh(8) ≈ 10.000 mm/yr (G(0) = 10.000 in references.md), none when exposed', () => {
    expect(modelGrowthRate({ growth }, 0)).toBeCloseTo(10.0, 3);
    expect(modelGrowthRate({ growth }, -3)).toBe(0);
  });

  it('half-rate depth ln(I0/(Ik·atanh 0.5))/k = 26.785 m, and a column there grows Gm/2', () => {
    const d = depthForGrowthFraction(0.5, { Gm: 10, I0: 2000, Ik: 250, k: 0.1 });
    expect(d).toBeCloseTo(26.785, 3);
    expect(oneYearGrowthMm(d)).toBeCloseTo(5, 6);
  });
});

describe('sea level and drowning', () => {
  it('constant sea level: growth stops at sea level (keep-up to the surface, then no accommodation)', () => {
    const run = runForwardModel(params({ subsidence: { kind: 'constant', rateMPerMyr: 0 }, durationYr: 20000, cycles: { boundaries: [10000], productionFactors: [1] } }));
    const [first, second] = run.surfaces;
    const crest = 100; // column of the antecedent crest (x = 1000 m, 5 m deep)
    expect(run.base[crest]).toBeCloseTo(5, 9);
    expect(first[crest]).toBe(0); // reached the surface, not above
    expect(Math.min(...second)).toBeGreaterThanOrEqual(0); // nothing above sea level
    // where cycle 1 had already reached the surface, cycle 2 adds nothing
    for (let i = 0; i < first.length; i++) if (first[i] === 0) expect(second[i]).toBe(0);
    expect(run.crestWaterDepthM).toBe(0);
    expect(run.drowned).toBe(false);
  });

  it('a rise faster than Gm everywhere: the top drowns from the first step', () => {
    // rise 15 mm/yr = 15 000 m/Myr > Gm = 10 mm/yr; the crest starts at sea level
    const base = { profile: [[0, 0], [1000, 0]] as [number, number][], columns: 11, growth, subsidence: { kind: 'constant' as const, rateMPerMyr: 15000 }, stepYr: 100 };
    const oneStep = runForwardModel({ ...base, durationYr: 100, cycles: { productionFactors: [1] } });
    expect(oneStep.crestWaterDepthM).toBeGreaterThan(0);
    const bounds = Array.from({ length: 99 }, (_, i) => (i + 1) * 1000);
    const long = runForwardModel({ ...base, durationYr: 100000, cycles: { boundaries: bounds, productionFactors: [1] } });
    const depths = long.surfaces.map((s, i) => Math.min(...s) - long.seaZAtBoundaries[i]);
    for (let i = 1; i < depths.length; i++) expect(depths[i]).toBeGreaterThan(depths[i - 1]);
    expect(long.drowned).toBe(true);
    expect(long.crestWaterDepthM).toBeGreaterThan(long.drowningDepthM);
  });

  it('a faster rise leaves the crest no shallower, and in give-up (rise > Gm) grows no more sediment at any column', () => {
    // "no more aggradation": the top's position relative to the sea never improves with a faster rise;
    // where the rise outpaces growth the columns sink deeper and grow less.
    let prevDepth = -Infinity;
    let prevThickness: Float64Array | null = null;
    for (const rate of [0, 1000, 3000, 6000, 9000, 11000, 14000, 20000]) {
      const run = runForwardModel(params({ subsidence: { kind: 'constant', rateMPerMyr: rate }, cycles: { productionFactors: [1] } }));
      expect(run.crestWaterDepthM).toBeGreaterThanOrEqual(prevDepth - 1e-9);
      prevDepth = run.crestWaterDepthM;
      if (rate > 10000) {
        const th = run.base.map((b, i) => b - run.surfaces[0][i]);
        if (prevThickness) for (let i = 0; i < th.length; i++) expect(th[i]).toBeLessThanOrEqual(prevThickness[i] + 1e-9);
        prevThickness = th;
      }
    }
  }, 60_000);

  it('a lower production factor gives no wider top (each cycle, engine-measured widths)', () => {
    let prev: number[] | null = null;
    for (const f of [1, 0.8, 0.6, 0.5, 0.4, 0.35, 0.3]) {
      const widths = measureRun(runForwardModel(params({ cycles: { boundaries: [10000, 20000], productionFactors: [f] } }))).buildups[0].cycles.map((c) => c.topWidthM);
      if (prev) widths.forEach((w, i) => expect(w).toBeLessThanOrEqual(prev![i]));
      prev = widths;
    }
    expect(prev![2]).toBeLessThan(100);
  }, 60_000);
});

describe('backstepping (Schlager 1981: drowning needs a rise outpacing growth)', () => {
  it('production below the rise at the margins but above it at the crest: margins step back, the crest keeps up', () => {
    const rise = 3; // mm/yr = 3000 m/Myr
    const factors = [1, 0.5, 0.35];
    const run = runForwardModel(params({ cycles: { boundaries: [10000, 20000], productionFactors: factors } }));
    const m = measureRun(run).buildups[0];
    for (const c of m.cycles.slice(1)) {
      expect(c.left.backstepM!).toBeGreaterThan(0);
      expect(c.right.backstepM!).toBeGreaterThan(0);
    }
    expect(m.classification).toBe('backstepping');
    // the crest is not drowned: f·G at the crest exceeds the rise
    expect(factors[2] * growth.GmMmPerYr).toBeGreaterThan(rise);
    expect(run.crestWaterDepthM).toBeLessThan(1);
    expect(run.drowned).toBe(false);
    // at the margins of cycle 2, now left behind, the youngest cycle's production is below the rise
    const cyc = runToInterpretation(run).buildups[0].cycles;
    for (const x of [cyc[1].marginLeft[0], cyc[1].marginRight[0]]) {
      const i = run.xs.indexOf(x);
      const d = run.surfaces[2][i] - run.seaZAtBoundaries[2];
      expect(factors[2] * modelGrowthRate({ growth }, d)).toBeLessThan(rise);
    }
  });

  it('control: a slow rise with full production keeps the margins in place or building out', () => {
    const m = measureRun(runForwardModel(params({ subsidence: { kind: 'constant', rateMPerMyr: 1000 } }))).buildups[0];
    for (const c of m.cycles.slice(1)) {
      expect(c.left.backstepM!).toBeLessThanOrEqual(0);
      expect(c.right.backstepM!).toBeLessThanOrEqual(0);
    }
    expect(m.classification).not.toBe('backstepping');
  });
});

describe('angle-of-repose rule', () => {
  it('moves sediment down-flank, conserving mass, until no slope exceeds the limit (or only the antecedent is steep)', () => {
    let seed = 7;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let trial = 0; trial < 20; trial++) {
      const n = 50;
      const base = Float64Array.from({ length: n }, () => 100 + 50 * rnd());
      const top = base.map((b) => b - 80 * rnd());
      const before = top.reduce((a, b) => a + b, 0);
      const maxDz = Math.tan((35 * Math.PI) / 180) * 10;
      expect(relaxSlopes(top, base, maxDz, 100000, 1e-10)).toBeLessThan(1e-6);
      expect(top.reduce((a, b) => a + b, 0)).toBeCloseTo(before, 6);
      for (let i = 0; i < n; i++) expect(top[i]).toBeLessThanOrEqual(base[i] + 1e-9); // antecedent never dug into
      for (let i = 0; i + 1 < n; i++) {
        const steep = Math.abs(top[i + 1] - top[i]) > maxDz + 1e-5;
        if (steep) {
          const hi = top[i] < top[i + 1] ? i : i + 1;
          expect(base[hi] - top[hi]).toBeLessThan(1e-6); // only bare antecedent may stay steeper
        }
      }
    }
  });

  it('a run keeps the modelled slopes at or below the limit where sediment lies', { timeout: 60_000 }, () => {
    const run = runForwardModel(params({ slopeLimitDeg: 10, profile: [[0, 300], [1000, 5], [2000, 300]], subsidence: { kind: 'constant', rateMPerMyr: 1000 } }));
    const s = run.surfaces[2];
    const dx = run.xs[1] - run.xs[0];
    const maxDz = Math.tan((10 * Math.PI) / 180) * dx;
    for (let i = 0; i + 1 < s.length; i++) {
      const hi = s[i] < s[i + 1] ? i : i + 1;
      if (run.base[hi] - s[hi] > 1e-6) expect(Math.abs(s[i + 1] - s[i])).toBeLessThanOrEqual(maxDz + 0.01); // within 1 cm: at most 32 relaxation passes per step, the rest carries over
    }
  });
});

describe('sea-level curves and cycle boundaries', () => {
  it('a sinusoidal eustasy with boundaries at lowstands closes one cycle per period; a table interpolates linearly', { timeout: 60_000 }, () => {
    const run = runForwardModel(params({
      subsidence: { kind: 'constant', rateMPerMyr: 500 },
      eustasy: { kind: 'sinusoids', terms: [{ amplitudeM: 10, periodYr: 10000, phaseDeg: 0 }] },
      cycles: { boundaries: 'lowstands', productionFactors: [1] },
    }));
    // lowstands at t ≈ 7500, 17500, 27500 yr, plus the end of the run
    expect(run.boundaryTimesYr.length).toBe(4);
    expect(run.boundaryTimesYr[0]).toBeGreaterThan(7000);
    expect(run.boundaryTimesYr[0]).toBeLessThan(8000);
    const table = runForwardModel(params({ eustasy: { kind: 'table', points: [[0, 0], [10000, 40], [30000, 40]] }, subsidence: { kind: 'constant', rateMPerMyr: 0 } }));
    expect(table.seaZAtBoundaries[0]).toBeCloseTo(-40, 9);
  });

  it('exposure lowering wears an exposed column down to sea level, not below, and never below the antecedent', () => {
    const run = runForwardModel({ profile: [[0, -3], [100, -3]], columns: 2, growth, exposedLoweringMmPerYr: 1, stepYr: 100, durationYr: 10000, cycles: { productionFactors: [1] } });
    // antecedent at 3 m above sea: not lowered below the antecedent profile
    expect(run.surfaces[0][0]).toBeCloseTo(-3, 9);
  });
});

describe('bad parameters are refused naming the field', () => {
  const bad = (over: Record<string, unknown>) => {
    try {
      runForwardModel({ ...params(), ...over });
    } catch (e) {
      expect(e).toBeInstanceOf(MeasureInputError);
      return (e as MeasureInputError).message;
    }
    throw new Error('not refused');
  };
  it.each([
    [{ growth: { ...growth, GmMmPerYr: -1 } }, /^growth\.GmMmPerYr: must be > 0/],
    [{ growth: { ...growth, GmMmPerYr: 500 } }, /^growth\.GmMmPerYr: must be ≤ 100/],
    [{ subsidence: { kind: 'constant', rateMPerMyr: -5 } }, /^subsidence\.rateMPerMyr: must be ≥ 0/],
    [{ exposedLoweringMmPerYr: 50 }, /^exposedLoweringMmPerYr: must be ≤ 10/],
    [{ stepYr: 50000 }, /^stepYr: must not exceed durationYr/],
    [{ cycles: { boundaries: [10000, 20000], productionFactors: [1, 1.2] } }, /^cycles\.productionFactors\[1\]: must be ≤ 1/],
    [{ cycles: { boundaries: [20000, 10000], productionFactors: [1] } }, /^cycles\.boundaries\[1\]: must be later/],
    [{ profile: [] }, /^profile: needs at least 2 points/],
    [{ profile: [[0, 10], [100, 20], [100, 0], [50, 30]] }, /^profile\[2\]: the profile crosses itself/],
    [{ profile: [[0, 10], [100, 20], [80, 30]] }, /^profile\[2\]\[0\]: x must keep going the same way/],
    [{ columns: 30000 }, /^columns: must be ≤ 20000/],
    [{ stepYr: 0.001 }, /^stepYr: gives 30000000 steps/],
    [{ eustasy: { kind: 'table', points: [[0, 0], [0, 5]] } }, /^eustasy\.points\[1\]\[0\]: must be later/],
  ])('%j', (over, msg) => {
    expect(bad(over)).toMatch(msg);
  });
});

describe('presets', () => {
  it('each preset runs and names its sources', { timeout: 60_000 }, () => {
    for (const p of FORWARD_MODEL_PRESETS) {
      expect(p.sources.length).toBeGreaterThan(0);
      const run = runForwardModel(params({ growth: p.growth, slopeLimitDeg: p.slopeLimitDeg, subsidence: { kind: 'constant', rateMPerMyr: 500 } }));
      expect(run.surfaces.length).toBe(3);
    }
  });
});

describe('output for the engine', () => {
  it('a drowned run flags its youngest top, and the engine classes the buildup drowned; ages follow startAgeMa', () => {
    const run = runForwardModel(params({ subsidence: { kind: 'constant', rateMPerMyr: 15000 }, startAgeMa: 12.4 }));
    expect(run.drowned).toBe(true);
    const it = runToInterpretation(run);
    expect(it.buildups[0].topIsDrowningSurface).toBe(true);
    expect(it.buildups[0].cycles.map((c) => c.ageTopMa)).toEqual([12.39, 12.38, 12.37].map((a) => expect.closeTo(a, 9)));
    expect(measureRun(run).buildups[0].classification).toBe('drowned');
  });

  it('margins sit where the top first steepens beyond marginSlopeDeg, walking out from the crest', () => {
    const run = runForwardModel(params({ subsidence: { kind: 'constant', rateMPerMyr: 0 }, durationYr: 10000, cycles: { productionFactors: [1] } }));
    const c = runToInterpretation(run).buildups[0].cycles[0];
    const tan5 = Math.tan((5 * Math.PI) / 180);
    const s = run.surfaces[0];
    const l = run.xs.indexOf(c.marginLeft[0]);
    const r = run.xs.indexOf(c.marginRight[0]);
    for (let i = l; i < r; i++) expect(Math.abs(s[i + 1] - s[i])).toBeLessThanOrEqual(tan5 * 10 + 1e-9);
    expect(Math.abs(s[l] - s[l - 1])).toBeGreaterThan(tan5 * 10);
    expect(Math.abs(s[r + 1] - s[r])).toBeGreaterThan(tan5 * 10);
  });

  it('reports progress and stops when the callback says so', () => {
    const seen: number[] = [];
    expect(() => runForwardModel(params(), { onProgress: (f) => { seen.push(f); return f < 0.3; } })).toThrow(/cancelled/);
    expect(seen.length).toBeGreaterThan(0);
    expect(seen[seen.length - 1]).toBeGreaterThanOrEqual(0.3);
    expect(seen[seen.length - 1]).toBeLessThan(1);
  });
});
