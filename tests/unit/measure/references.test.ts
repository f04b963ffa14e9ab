/**
 * Checks against published formulas and values (../shared/references.md);
 * each check names its source beside it.
 */
import { describe, expect, it } from 'vitest';
import {
  apparentFromTrue,
  depthForGrowthFraction,
  depthToTwt,
  dipFromTimeGradient,
  exceedancePercentiles,
  growthRate,
  integrateProfile,
  linearVelocityAtTwt,
  measure,
  polygonCentroid,
  rulerReading,
  shoelaceArea,
  trueFromApparent,
  twtToDepth,
  upperEnvelope,
  type Point,
} from '../../../shared/measure';

describe('time–depth conversion', () => {
  it('layered interval velocities: 400 ms at 1500, 500 ms at 2000, 200 ms at 4500 → 1250 m', () => {
    // Sheriff & Geldart, Exploration Seismology (2nd ed., 1995); Yilmaz, Seismic Data Analysis (2001): z = Σ v_i·Δt_i/2 — computed, exact
    const model = { kind: 'layers' as const, layers: [{ topMs: 0, v: 1500 }, { topMs: 400, v: 2000 }, { topMs: 900, v: 4500 }] };
    expect(twtToDepth(model, 1100)).toBeCloseTo(1250, 9);
    expect(twtToDepth(model, 400)).toBeCloseTo(300, 9);
    expect(depthToTwt(model, 1250)).toBeCloseTo(1100, 9);
  });

  it('linear velocity law: v0 1800, k 0.6, t 1.0 s → 1049.576 m, v 2429.7 m/s, inverse 1.000000 s', () => {
    // Geldart & Sheriff, Problems in Exploration Seismology and their Solutions (SEG, 2004), eq. 4.17a — computed
    const model = { kind: 'linear' as const, v0: 1800, k: 0.6 };
    expect(twtToDepth(model, 1000)).toBeCloseTo(1049.576, 3);
    expect(linearVelocityAtTwt(1800, 0.6, 1000)).toBeCloseTo(2429.7, 1);
    expect(depthToTwt(model, 1049.576) / 1000).toBeCloseTo(1.0, 6);
  });

  it('linear law with k = 0 falls back to constant velocity (measurement-spec §3)', () => {
    expect(twtToDepth({ kind: 'linear', v0: 2000, k: 0 }, 1000)).toBe(1000);
  });

  it('dip on a migrated section: v 3000 m/s, dt/dx 0.2 ms/m → 16.70°', () => {
    // Sheriff & Geldart (1995): tan θ = (v/2)·dt/dx on a time-migrated section — computed
    expect(dipFromTimeGradient(0.2, 3000)).toBeCloseTo(16.7, 2);
  });

  it('the Ruler gives the same true dip through the engine', () => {
    // Sheriff & Geldart (1995), tan θ = (v/2)·dt/dx: two points 1000 m apart, 200 ms apart, v 3000 → 16.70°
    const ctx = { verticalDomain: 'twt_ms', coordinates: 'world', velocity: { kind: 'constant', v: 3000 } };
    const r = rulerReading(ctx, [0, 1000], [1000, 1200]);
    expect(r.angleDeg).toBeCloseTo(16.7, 2);
    expect(r.dzM).toBeCloseTo(300, 9);
    expect(r.deepensTo).toBe('right');
    expect(r.distanceM).toBeCloseTo(Math.hypot(1000, 300), 9);
  });
});

describe('vertical exaggeration', () => {
  // Groshong, 3-D Structural Geology (2nd ed., 2006), eq. 6.3: tan(apparent) = VE·tan(true) — computed
  it('10° true at VE 5 → 41.40° apparent', () => expect(apparentFromTrue(10, 5)).toBeCloseTo(41.4, 2));
  it('45° apparent at VE 5 → 11.31° true', () => expect(trueFromApparent(45, 5)).toBeCloseTo(11.31, 2));
  it('2° and 5° true at VE 10 → 19.25° and 41.18°', () => {
    expect(apparentFromTrue(2, 10)).toBeCloseTo(19.25, 2);
    expect(apparentFromTrue(5, 10)).toBeCloseTo(41.18, 2);
  });
  it('apparent ↔ true round trip', () => expect(trueFromApparent(apparentFromTrue(23, 3.5), 3.5)).toBeCloseTo(23, 10));
});

describe('geometry', () => {
  it('shoelace: (3,4), (5,11), (12,8), (9,5), (5,6) → 30', () => {
    // Shoelace formula, standard worked example (references.md, Geometry)
    const poly: Point[] = [[3, 4], [5, 11], [12, 8], [9, 5], [5, 6]];
    expect(shoelaceArea(poly)).toBeCloseTo(30, 12);
    expect(shoelaceArea([...poly].reverse())).toBeCloseTo(30, 12);
  });

  it('centroid of a unit square offset far from the origin', () => {
    // Polygon centroid formula (Bourke 1988), exact for a square: its centre
    const c = polygonCentroid([[1e6, 2e6], [1e6 + 2, 2e6], [1e6 + 2, 2e6 + 2], [1e6, 2e6 + 2]]);
    expect(c[0]).toBeCloseTo(1e6 + 1, 6);
    expect(c[1]).toBeCloseTo(2e6 + 1, 6);
  });

  it('Pappus on the torus from the disc (x − 2)² + y² ≤ 1 → 4π² = 39.478', () => {
    // Pappus's centroid theorem V = 2π·d·A (references.md) — computed: d = 2, A = π
    // the disc as a fine polygon: upper and lower semicircle as envelope and base, axis at x = 0
    const n = 20000;
    const upper: Point[] = [];
    const lower: [number, number][] = [];
    for (let i = 0; i <= n; i++) {
      const t = Math.PI - (Math.PI * i) / n; // x from 1 to 3
      const x = 2 + Math.cos(t);
      upper.push([x, -Math.sin(t)]);
      lower.push([x, Math.sin(t)]);
    }
    const env = upperEnvelope([upper]);
    const integ = integrateProfile(env, lower.map((p) => p[0]), lower.map((p) => p[1]), 0);
    expect(integ.areaLeft).toBe(0);
    expect(2 * Math.PI * integ.momentRight).toBeCloseTo(39.478, 2);
    expect(integ.area).toBeCloseTo(Math.PI, 6);
  });

  it('Pappus on the cone half-profile: radius 1000 m, height 100 m → π r² h / 3 = 1.0472e8 m³', () => {
    // Pappus's centroid theorem (references.md) — computed: right triangle, d = r/3, A = r·h/2
    const env = upperEnvelope([[[0, 0], [1000, 100]]]);
    const integ = integrateProfile(env, [0, 1000], [100, 100], 0);
    const v = 2 * Math.PI * integ.momentRight;
    expect(v / 1.0472e8).toBeCloseTo(1, 4);
    expect(v).toBeCloseTo((Math.PI * 1000 ** 2 * 100) / 3, 3);
  });

  it('a cone-shaped buildup: measure() volume equals π r² h / 3', () => {
    // Pappus's centroid theorem (references.md): symmetric cone, both half-profiles equal
    const b = measure({
      verticalDomain: 'depth_m',
      buildups: [{ base: [[-1000, 100], [1000, 100]], cycles: [{ index: 1, top: [[-1000, 100], [0, 0], [1000, 100]], marginLeft: [-1000, 100], marginRight: [1000, 100] }] }],
    }).buildups[0];
    expect(b.volumeM3).toBeCloseTo((Math.PI * 1000 ** 2 * 100) / 3, 2);
    expect(b.areaM2).toBeCloseTo(100_000, 9);
  });
});

describe('carbonate growth', () => {
  // Bosscher & Schlager (1992), Sedimentology 39: G(z) = Gm·tanh(I0·exp(−k·z)/Ik) — computed with Gm 10 mm/yr, I0 2000, Ik 250, k 0.1
  const p = { Gm: 10, I0: 2000, Ik: 250, k: 0.1 };
  it('G(0), G(20), G(30), G(50)', () => {
    expect(growthRate(0, p)).toBeCloseTo(10.0, 3);
    expect(growthRate(20, p)).toBeCloseTo(7.9419, 4);
    expect(growthRate(30, p)).toBeCloseTo(3.7849, 4);
    expect(growthRate(50, p)).toBeCloseTo(0.5385, 4);
  });
  it('depth of half the maximum rate: 26.785 m', () => {
    expect(depthForGrowthFraction(0.5, p)).toBeCloseTo(26.785, 3);
    expect(growthRate(depthForGrowthFraction(0.5, p), p)).toBeCloseTo(5, 9);
  });
  it('with I0 = Ik the surface rate is tanh(1)·Gm = 0.7616·Gm', () => {
    expect(growthRate(0, { Gm: 1, I0: 300, Ik: 300, k: 0.1 })).toBeCloseTo(0.7616, 4);
  });
  it('no growth when exposed (measurement-spec §10)', () => expect(growthRate(-1, p)).toBe(0));
});

describe('uncertainty reporting convention', () => {
  it('P90 is the low value, P10 the high one', () => {
    // SPE, Petroleum Resources Management System (2018): P90 = 90 % of outcomes at or above it
    const v = Array.from({ length: 101 }, (_, i) => 100 - i); // 0..100, given in descending order
    const p = exceedancePercentiles(v);
    expect(p.p90).toBeCloseTo(10, 9);
    expect(p.p50).toBeCloseTo(50, 9);
    expect(p.p10).toBeCloseTo(90, 9);
    expect(v.filter((x) => x >= p.p90).length / v.length).toBeGreaterThanOrEqual(0.9);
  });
});
