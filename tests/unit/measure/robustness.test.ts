/**
 * Named edge cases of the measurement engine: reversed point order, vertical
 * flank segments, flat crests, single-cycle buildups, options, calibration
 * modes, and every kind of bad input (each refusal must name the field path).
 */
import { describe, expect, it } from 'vitest';
import {
  CalibrationError,
  MeasureInputError,
  applyCalibration,
  createDepthConverter,
  envelopeAt,
  fitCalibration,
  flankAngles,
  interpolateAt,
  invertCalibration,
  measure,
  monotoneRuns,
  orderByX,
  orthogonalRegression,
  resampleByArcLength,
  toDepthDomain,
  upperEnvelope,
  type Point,
} from '../../../shared/measure';
import { clone, firstDifference, loadIn, type Doc } from './helpers';

const pinnacle = () => loadIn('pinnacle-depth.json');

function reverseAll(doc: Doc): Doc {
  const out = clone(doc);
  for (const b of out.buildups) {
    b.base.reverse();
    for (const c of b.cycles) {
      c.top.reverse();
      c.flankLeft?.reverse();
      c.flankRight?.reverse();
    }
  }
  return out;
}

describe('geometry helpers', () => {
  it('interpolation is linear inside and takes the nearest end value outside', () => {
    const xs = [0, 10, 20];
    const zs = [100, 200, 150];
    expect(interpolateAt(xs, zs, 5)).toBe(150);
    expect(interpolateAt(xs, zs, 15)).toBe(175);
    expect(interpolateAt(xs, zs, -50)).toBe(100);
    expect(interpolateAt(xs, zs, 99)).toBe(150);
    expect(interpolateAt(xs, zs, 10)).toBe(200);
  });

  it('interpolation at a vertical step takes the value after the step', () => {
    expect(interpolateAt([0, 10, 10, 20], [100, 100, 50, 50], 10)).toBe(50);
    expect(interpolateAt([0, 10, 10, 20], [100, 100, 50, 50], 9)).toBe(100);
  });

  it('orderByX reverses right-to-left traces and keeps vertical segments in traced order', () => {
    expect(orderByX([[20, 1], [10, 2], [10, 3], [0, 4]])).toEqual([[0, 4], [10, 3], [10, 2], [20, 1]]);
    expect(orderByX([[0, 1], [10, 2], [5, 3]])).toEqual([[0, 1], [5, 3], [10, 2]]);
  });

  it('monotone runs split at turning points and vertical segments', () => {
    expect(monotoneRuns([0, 1, 2, 1, 0])).toEqual([[0, 1, 2], [4, 3, 2]]);
    expect(monotoneRuns([0, 1, 1, 2])).toEqual([[0, 1], [2, 3]]);
  });

  it('upper envelope takes the smallest z and inserts crossings', () => {
    // two lines crossing at x = 5: z = x and z = 10 − x → envelope min, crossing at (5, 5)
    const env = upperEnvelope([[[0, 0], [10, 10]], [[0, 10], [10, 0]]]);
    expect(envelopeAt(env, 0)).toBe(0);
    expect(envelopeAt(env, 5)).toBeCloseTo(5, 12);
    expect(envelopeAt(env, 7)).toBeCloseTo(3, 12);
    expect(envelopeAt(env, 11)).toBeNaN();
    // a third line dipping below both between the ends
    const env2 = upperEnvelope([[[0, 0], [10, 10]], [[0, 10], [10, 0]], [[0, 1], [10, 1]]]);
    expect(envelopeAt(env2, 5)).toBeCloseTo(1, 12);
    expect(envelopeAt(env2, 0.5)).toBeCloseTo(0.5, 12);
  });

  it('arc-length resampling spaces points evenly', () => {
    const r = resampleByArcLength([[0, 0], [1, 0], [1, 3]], 5);
    expect(r).toEqual([[0, 0], [1, 0], [1, 1], [1, 2], [1, 3]]);
  });

  it('orthogonal regression handles vertical and horizontal lines', () => {
    expect(orthogonalRegression([[5, 0], [5, 10], [5, 20]])!.dipDeg).toBeCloseTo(90, 12);
    expect(orthogonalRegression([[0, 3], [10, 3]])!.dipDeg).toBeCloseTo(0, 12);
    expect(orthogonalRegression([[0, 0], [10, 10]])!.dipDeg).toBeCloseTo(45, 12);
  });

  it('flank angle weights by length, not by vertex density', () => {
    // a 30° stretch densely traced and a 60° stretch of the same length with two vertices:
    // equal-arc-length resampling balances them, the continuous major axis lies at 45°
    const dense: Point[] = [];
    const c30 = Math.cos(Math.PI / 6), s30 = Math.sin(Math.PI / 6), c60 = Math.cos(Math.PI / 3), s60 = Math.sin(Math.PI / 3);
    for (let i = 0; i <= 50; i++) dense.push([100 * c30 * (i / 50), 100 * s30 * (i / 50)]);
    dense.push([100 * c30 + 100 * c60, 100 * s30 + 100 * s60]);
    const f = flankAngles(dense.map((p) => p[0]), dense.map((p) => p[1]));
    expect(f.flankAngleDeg!).toBeCloseTo(45, 1);
    expect(f.flankMaxDeg!).toBeCloseTo(60, 9);
    expect(flankAngles(null, null)).toEqual({ flankAngleDeg: null, flankMaxDeg: null });
  });
});

describe('calibration', () => {
  const m = { a: 2.5, b: 0.05, c: -100, d: 0.02, e: 1.2, f: 900 };
  const tiesFor = (world: Point[]) => world.map((w) => ({ px: invertCalibration(m, w), world: w }));

  it('recovers an exact affine map from 3 ties with zero residuals', () => {
    const fit = fitCalibration(tiesFor([[0, 1000], [4000, 1000], [0, 2000]]));
    for (const k of ['a', 'b', 'c', 'd', 'e', 'f'] as const) expect(fit.affine[k]).toBeCloseTo(m[k], 9);
    expect(fit.rmsPx).toBeLessThan(1e-9);
    expect(applyCalibration(fit.affine, invertCalibration(fit.affine, [123, 456]))[0]).toBeCloseTo(123, 9);
  });

  it('reports residuals in pixels and world units for an inconsistent tie', () => {
    const ties = [{ px: [0, 0], world: [0, 0] }, { px: [100, 0], world: [100, 0] }, { px: [0, 100], world: [0, 100] }, { px: [100, 100], world: [104, 100] }] as never;
    const fit = fitCalibration(ties);
    // least squares spreads the 4 m misfit: x residuals ±1 m at every tie (by symmetry), scale 1 m/px → 1 px
    fit.residuals.forEach((r) => expect(Math.abs(r.residualWorld[0])).toBeCloseTo(1, 9));
    expect(fit.rmsWorld.x).toBeCloseTo(1, 9);
    expect(fit.rmsWorld.y).toBeCloseTo(0, 9);
    expect(fit.rmsPx).toBeGreaterThan(0.9);
  });

  it('axes mode fits x from u and y from v (b = d = 0)', () => {
    const fit = fitCalibration([{ px: [0, 0], world: [100, 0] }, { px: [1000, 500], world: [2600, 1000] }], 'axes');
    expect(fit.affine).toEqual({ a: 2.5, b: 0, c: 100, d: 0, e: 2, f: 0 });
  });

  it('refuses fewer than 3 ties, collinear ties, and axes ties on one column', () => {
    expect(() => fitCalibration([{ px: [0, 0], world: [0, 0] }, { px: [1, 1], world: [1, 1] }])).toThrow(/calibration: an affine calibration needs at least 3 ties, got 2/);
    expect(() => fitCalibration([{ px: [0, 0], world: [0, 0] }, { px: [1, 1], world: [1, 5] }, { px: [2, 2], world: [2, 9] }])).toThrow(CalibrationError);
    expect(() => fitCalibration([{ px: [0, 0], world: [0, 0] }, { px: [1, 1], world: [1, 5] }, { px: [2, 2], world: [2, 9] }])).toThrow(/collinear/);
    expect(() => fitCalibration([{ px: [5, 0], world: [0, 0] }, { px: [5, 10], world: [1, 5] }], 'axes')).toThrow(/distinct u/);
  });
});

describe('input handling', () => {
  it('right-to-left polylines give the same numbers', () => {
    const a = measure(pinnacle());
    const b = measure(reverseAll(pinnacle()));
    expect(firstDifference(b.buildups, a.buildups)).toBeNull();
  });

  it('a vertical flank segment: flank max 90°, area unchanged by the step', () => {
    const doc = loadIn('bank-depth.json');
    // cycle 3 left flank: vertical cliff 1400 → 1700 at x = 1000, then 45° to the base at x = 700
    doc.buildups[0].cycles[2].flankLeft = [[1000, 1400], [1000, 1700], [700, 2000]];
    const b = measure(doc).buildups[0];
    expect(b.cycles[2].left.flankMaxDeg).toBeCloseTo(90, 9);
    // regression through a 300 m vertical stretch and a 424 m 45° stretch lies between 45° and 90°
    expect(b.cycles[2].left.flankAngleDeg!).toBeGreaterThan(45);
    expect(b.cycles[2].left.flankAngleDeg!).toBeLessThan(90);
    // left envelope now: below x = 1000 the older flank 2, z = 1600 + (1000 − x) down to (600, 2000), is
    // shallower than the new flank 3, z = 1700 + (1000 − x); so the left flank area is 400·400/2 = 80 000
    // (x 600..1000), the top 600·1000 = 600 000 (x 1000..2000); the right side is unchanged,
    // 600·600/2 = 180 000 + 600 000. The envelope's vertical jump at x = 1000 has no width, hence no area.
    expect(b.areaM2).toBeCloseTo(80_000 + 600_000 + 600_000 + 180_000, 6);
  });

  it('flat crest: midpoint of the leftmost and rightmost shallowest vertices', () => {
    const b = measure(loadIn('platform-depth.json')).buildups[0];
    expect(b.crest).toEqual([2000, 1600]);
    const doc = pinnacle();
    doc.buildups[0].cycles[2].top = [[1500, 1200], [1700, 1100], [2100, 1100], [2500, 1200]];
    expect(measure(doc).buildups[0].crest).toEqual([1900, 1100]);
  });

  it('single-cycle buildup is aggrading with "one cycle: no margin shift measurable"', () => {
    const doc = pinnacle();
    doc.buildups[0].cycles = doc.buildups[0].cycles.slice(0, 1);
    const b = measure(doc).buildups[0];
    expect(b.classification).toBe('aggrading');
    expect(b.evidence).toContain('one cycle: no margin shift measurable');
    expect(b.trajectoryDeg).toBeNull();
    expect(b.cycles[0].trajectoryDeg).toBeNull();
    expect(b.cycles[0].left.backstepM).toBeNull();
    expect(b.heightM).toBe(200);
    // a flagged single cycle is drowned
    doc.buildups[0].topIsDrowningSurface = true;
    expect(measure(doc).buildups[0].classification).toBe('drowned');
  });

  it('thresholds change through options and are printed', () => {
    // pinnacle trajectory 149.04°: backstepping at tol 10, aggrading at tol 60
    const out = measure(pinnacle(), { aggradingToleranceDeg: 60 });
    expect(out.options.aggradingToleranceDeg).toBe(60);
    expect(out.buildups[0].classification).toBe('aggrading');
    expect(out.buildups[0].cycles[1].class).toBe('aggrading');
    // drowned needs 2 terminations by default; 3 → back to its trajectory class
    const d = loadIn('drowned-terminations-depth.json');
    expect(measure(d).buildups[0].classification).toBe('drowned');
    const o3 = measure(d, { drownedMinTerminations: 3 });
    expect(o3.options.drownedMinTerminations).toBe(3);
    expect(o3.buildups[0].classification).toBe('backstepping');
    expect(o3.buildups[0].evidence.join(' ')).toMatch(/fewer than the 3 required/);
    // a tighter termination tolerance drops the downlap that is 5 m off the top
    expect(measure(d, { terminationToleranceM: 4 }).buildups[0].terminationsOnTop).toBe(1);
  });

  it('downstepping when margins fall', () => {
    const doc = loadIn('bank-depth.json');
    const c = doc.buildups[0].cycles;
    c[1].marginLeft = [900, 1850];
    c[1].marginRight = [3100, 1850];
    c[1].top = [[900, 1850], [3100, 1850]];
    doc.buildups[0].cycles = c.slice(0, 2);
    const b = measure(doc).buildups[0];
    expect(b.cycles[1].class).toBe('downstepping');
    expect(b.classification).toBe('downstepping');
  });

  it('asymmetry hint when one side is steeper and backstepped less', () => {
    const doc = pinnacle();
    for (const c of doc.buildups[0].cycles) {
      // steepen the right flanks: same top point, toe moved inward to 60°
      const [x, z] = c.flankRight[0];
      const h = c.flankRight[1][1] - z;
      c.flankRight = [[x, z], [x + h / Math.tan(Math.PI / 3), z + h]];
    }
    // and reduce right backstep: cycle 3 right margin at 2700 instead of 2500
    const c3 = doc.buildups[0].cycles[2];
    c3.top = [[1500, 1200], [2000, 1100], [2700, 1200]];
    c3.marginRight = [2700, 1200];
    c3.flankRight = [[2700, 1200], [2700 + 300 / Math.tan(Math.PI / 3), 1500]];
    const a = measure(doc).buildups[0].asymmetry;
    expect(a.flankAngleDeg!).toBeCloseTo(45 - 60, 6);
    expect(a.backstepM).toBeCloseTo(1000 - 800, 9);
    expect(a.hint).toMatch(/right side is steeper.*may have faced the prevailing wind/);
  });

  it('several buildups are measured independently', () => {
    const doc = pinnacle();
    const bank = loadIn('bank-depth.json').buildups[0];
    doc.buildups.push(bank);
    const out = measure(doc);
    expect(out.buildups.map((b) => b.classification)).toEqual(['backstepping', 'aggrading']);
  });

  it('output carries assumptions and the caution', () => {
    const out = measure({ ...pinnacle(), verticalDomain: 'twt_ms', velocity: { kind: 'constant', v: 4000 } });
    expect(out.format).toBe('cayline.measurements/1');
    expect(out.assumptions.join(' ')).toMatch(/Constant velocity 4000 m\/s/);
    expect(out.assumptions.join(' ')).toMatch(/migrated/);
    expect(out.caution).toMatch(/support, and do not replace, the judgement of a qualified interpreter/);
    expect(out.velocityUsed).toEqual({ kind: 'constant', v: 4000 });
  });

  it('toDepthDomain converts pixel points through calibration and velocity', () => {
    const ctx = {
      verticalDomain: 'twt_ms',
      coordinates: 'pixels',
      calibration: { mode: 'axes', ties: [{ px: [0, 0], world: [0, 0] }, { px: [1000, 1000], world: [5000, 2000] }] },
      velocity: { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 400, v: 2000 }, { topMs: 900, v: 4500 }] },
    };
    // pixel (200, 550) → x 1000 m, t 1100 ms → 300 + 500 + 450 = 1250 m (Sheriff & Geldart 1995 layered check)
    const [x, z] = toDepthDomain(ctx, [200, 550]);
    expect(x).toBeCloseTo(1000, 9);
    expect(z).toBeCloseTo(1250, 9);
  });

  it('the buildup velocity model adds carbonate only below the envelope', () => {
    const ctx = {
      verticalDomain: 'twt_ms',
      velocity: { kind: 'buildup', water: { v: 1500, seafloorMs: 400 }, overburden: { v: 2000 }, carbonate: { v: 5000 } },
      buildups: [{ base: [[0, 1200], [1000, 1200]], cycles: [{ index: 1, top: [[200, 800], [800, 800]], marginLeft: [200, 800], marginRight: [800, 800] }] }],
    };
    const c = createDepthConverter(ctx);
    // water 400 ms → 300 m; overburden 400 ms → 400 m; carbonate 400 ms → 1000 m
    expect(c.toDepth([500, 1200])[1]).toBeCloseTo(300 + 400 + 1000, 9);
    // outside the envelope's x-range: water + overburden only (800 ms of overburden → 800 m)
    expect(c.toDepth([900, 1200])[1]).toBeCloseTo(300 + 800, 9);
    // above the envelope: no carbonate
    expect(c.toDepth([500, 600])[1]).toBeCloseTo(300 + 200, 9);
    // in the water column
    expect(c.toDepth([500, 200])[1]).toBeCloseTo(150, 9);
  });
});

describe('bad input is refused with the path of the field', () => {
  const expectRefusal = (doc: unknown, pathText: string, msg?: RegExp, options?: unknown) => {
    let err: unknown;
    try {
      measure(doc, options);
    } catch (e) {
      err = e;
    }
    expect(err, `expected a refusal at ${pathText}`).toBeInstanceOf(MeasureInputError);
    const e = err as MeasureInputError;
    expect(e.path).toBe(pathText);
    if (pathText) expect(e.message.startsWith(`${pathText}: `)).toBe(true);
    if (msg) expect(e.message).toMatch(msg);
  };
  const base = () => pinnacle();

  it('not an object / missing fields', () => {
    expectRefusal(null, '', /expected object/);
    const d = base();
    delete d.verticalDomain;
    expectRefusal(d, 'verticalDomain', /is required/);
    const e = base();
    delete e.buildups[0].cycles[1].marginLeft;
    expectRefusal(e, 'buildups[0].cycles[1].marginLeft', /is required/);
  });

  it('margin outside its top\'s x-range', () => {
    const d = base();
    d.buildups[0].cycles[1].marginLeft = [900, 1500];
    expectRefusal(d, 'buildups[0].cycles[1].marginLeft', /outside the top's x-range/);
  });

  it('fewer than 2 points in a polyline', () => {
    const d = base();
    d.buildups[0].cycles[0].flankRight = [[3500, 1800]];
    expectRefusal(d, 'buildups[0].cycles[0].flankRight', /at least 2 points/);
    const e = base();
    e.buildups[0].base = [[0, 2000]];
    expectRefusal(e, 'buildups[0].base', /at least 2 points/);
  });

  it('NaN, Infinity and strings in coordinates', () => {
    const d = base();
    d.buildups[0].cycles[2].top[1] = [2000, NaN];
    expectRefusal(d, 'buildups[0].cycles[2].top[1][1]', /finite number/);
    const e = base();
    e.buildups[0].base[3] = [Infinity, 2000];
    expectRefusal(e, 'buildups[0].base[3][0]', /finite number/);
    const f = base();
    f.buildups[0].cycles[0].marginRight = ['3500', 1800];
    expectRefusal(f, 'buildups[0].cycles[0].marginRight[0]', /finite number/);
  });

  it('unknown termination type, vertical domain, coordinates', () => {
    const d = base();
    d.buildups[0].terminations = [{ type: 'offlap', at: [2000, 1100] }];
    expectRefusal(d, 'buildups[0].terminations[0].type', /onlap, downlap, toplap, truncation/);
    expectRefusal({ ...base(), verticalDomain: 'feet' }, 'verticalDomain');
    expectRefusal({ ...base(), coordinates: 'latlon' }, 'coordinates');
    expectRefusal({ ...base(), format: 'other/1' }, 'format');
  });

  it('cycles out of order, no cycles, no buildups', () => {
    const d = base();
    d.buildups[0].cycles[1].index = 3;
    expectRefusal(d, 'buildups[0].cycles[1].index', /must be 2/);
    const e = base();
    e.buildups[0].cycles = [];
    expectRefusal(e, 'buildups[0].cycles', /at least one cycle/);
    expectRefusal({ ...base(), buildups: [] }, 'buildups', /at least one buildup/);
  });

  it('margins in the wrong order after calibration', () => {
    const d = base();
    d.buildups[0].cycles[2].marginLeft = [2500, 1200];
    d.buildups[0].cycles[2].marginRight = [1500, 1200];
    expectRefusal(d, 'buildups[0].cycles[2].marginRight', /right of marginLeft/);
  });

  it('ages that do not get younger upward', () => {
    const d = base();
    d.buildups[0].cycles[2].ageTopMa = 17;
    expectRefusal(d, 'buildups[0].cycles[2].ageTopMa', /younger .* cycle 2 \(16 Ma\)/);
    const e = base();
    e.buildups[0].baseAgeMa = 17;
    expectRefusal(e, 'buildups[0].cycles[0].ageTopMa', /younger .* the base \(17 Ma\)/);
  });

  it('velocity model problems', () => {
    const twt = (velocity: unknown) => ({ ...base(), verticalDomain: 'twt_ms', velocity });
    expectRefusal({ ...base(), verticalDomain: 'twt_ms' }, 'velocity', /is required when verticalDomain is "twt_ms"/);
    expectRefusal(twt({ kind: 'sonic' }), 'velocity.kind', /unknown velocity model kind/);
    expectRefusal(twt({ kind: 'constant', v: -5 }), 'velocity.v', /> 0/);
    expectRefusal(twt({ kind: 'constant', v: { min: 3000, mode: 2500, max: 5000 } }), 'velocity.v.mode', /≥ min/);
    expectRefusal(twt({ kind: 'constant', v: { min: 3000, mode: 4500, max: 4000 } }), 'velocity.v.max', /≥ mode/);
    expectRefusal(twt({ kind: 'constant', v: { min: 3000, mode: 4500 } }), 'velocity.v.max', /is required/);
    expectRefusal(twt({ kind: 'layers', layers: [{ topMs: 100, v: 1500 }] }), 'velocity.layers[0].topMs', /start at 0 ms/);
    expectRefusal(twt({ kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 500, v: 2000 }, { topMs: 400, v: 3000 }] }), 'velocity.layers[2].topMs', /tops ascend/);
    expectRefusal(twt({ kind: 'linear', v0: 1800, k: -0.1 }), 'velocity.k', /≥ 0/);
    expectRefusal(twt({ kind: 'buildup', water: { v: 1500, seafloorMs: 400 }, overburden: { v: 2200 } }), 'velocity.carbonate', /required|expected object/);
  });

  it('calibration problems', () => {
    const px = (calibration: unknown) => ({ ...base(), coordinates: 'pixels', calibration });
    expectRefusal({ ...base(), coordinates: 'pixels' }, 'calibration', /is required when coordinates are "pixels"/);
    expectRefusal(px([{ px: [0, 0], world: [0, 0] }, { px: [10, 10], world: [10, 10] }]), 'calibration', /at least 3 ties/);
    expectRefusal(px([{ px: [0, 0], world: [0, 0] }, { px: [10, 10], world: [10, 10] }, { px: [20, 20], world: [20, 25] }]), 'calibration', /collinear/);
    expectRefusal(px([{ px: [0, 0], world: [0, 0] }, { px: [10], world: [10, 10] }]), 'calibration[1].px', /point/);
    expectRefusal(px({ mode: 'skewed', ties: [] }), 'calibration.mode');
  });

  it('bad options name options.<field>', () => {
    expectRefusal(base(), 'options.aggradingToleranceDeg', /< 90/, { aggradingToleranceDeg: 95 });
    expectRefusal(base(), 'options.drownedMinTerminations', /integer/, { drownedMinTerminations: 1.5 });
    expectRefusal(base(), 'options.draws', /≥ 10/, { draws: 0 });
    expectRefusal(base(), 'options', /unknown field "tolerance"/, { tolerance: 3 });
    expectRefusal(base(), 'options', /expected object|must be an object/, 'fast');
  });

  it('flank with no length', () => {
    const d = base();
    d.buildups[0].cycles[0].flankLeft = [[500, 1800], [500, 1800]];
    expectRefusal(d, 'buildups[0].cycles[0].flankLeft', /no length/);
  });
});
