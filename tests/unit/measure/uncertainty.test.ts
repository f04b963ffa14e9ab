/** Monte Carlo ranges (measurement-spec §8): determinism, the SPE-PRMS exceedance order, and the triangular draws. */
import { describe, expect, it } from 'vitest';
import { measure, triangularQuantile } from '../../../shared/measure';
import { depthDocToTwt, loadIn } from './helpers';

const ranged = (v: unknown) => {
  const doc = depthDocToTwt(loadIn('pinnacle-depth.json'), { kind: 'constant', v: 4000 });
  doc.velocity = { kind: 'constant', v };
  return doc;
};

describe('Monte Carlo ranges', () => {
  it('no ranges without a velocity range', () => {
    const out = measure(depthDocToTwt(loadIn('pinnacle-depth.json'), { kind: 'constant', v: 4000 }));
    expect(out.buildups[0].ranges).toBeNull();
  });

  it('same input and seed → same output; another seed → other draws', () => {
    const doc = ranged({ min: 3600, mode: 4000, max: 4400 });
    const a = measure(doc, { draws: 200 });
    const b = measure(doc, { draws: 200 });
    expect(a.buildups[0].ranges).toEqual(b.buildups[0].ranges);
    const c = measure(doc, { draws: 200, seed: 'another' });
    expect(c.buildups[0].ranges!.heightM.p50).not.toBe(a.buildups[0].ranges!.heightM.p50);
    expect(a.options.seed).toBe('cayline');
    expect(a.options.draws).toBe(200);
  });

  it('P90 ≤ P50 ≤ P10 for every reported range', () => {
    // SPE, Petroleum Resources Management System (2018): P90 is the low value, P10 the high one
    const doc = loadIn('kestrel-knoll-twt-buildup-ranges.json');
    const r = measure(doc, { draws: 300 }).buildups[0].ranges!;
    const all = [r.heightM, r.areaM2, r.volumeM3, ...r.cycles.flatMap((c) => [c.left.flankAngleDeg!, c.right.flankAngleDeg!])];
    expect(all.length).toBe(9);
    for (const p of all) {
      expect(p.p90).toBeLessThanOrEqual(p.p50);
      expect(p.p50).toBeLessThanOrEqual(p.p10);
      expect(p.p10 - p.p90).toBeGreaterThan(0);
    }
  });

  it('a constant-velocity range scales heights by the triangular quantiles', () => {
    // depth scales with v; triangular (3600, 4000, 4400): 10th percentile 3600 + √(0.1·800·400) = 3778.885 m/s
    // (inverse CDF of the triangular distribution, computed), median 4000 m/s by symmetry; P90 is the low value (SPE-PRMS 2018)
    const out = measure(ranged({ min: 3600, mode: 4000, max: 4400 }), { draws: 4000 });
    const b = out.buildups[0];
    const q10 = 3600 + Math.sqrt(0.1 * 800 * 400);
    expect(b.heightM).toBeCloseTo(900, 6);
    expect(b.ranges!.heightM.p90 / (900 * (q10 / 4000))).toBeCloseTo(1, 2);
    expect(b.ranges!.heightM.p50 / 900).toBeCloseTo(1, 2);
    expect(b.ranges!.heightM.p10 / (900 * ((8000 - q10) / 4000))).toBeCloseTo(1, 2);
    expect(b.ranges!.areaM2.p90 / (1_770_000 * (q10 / 4000))).toBeCloseTo(1, 2);
    // a 45° flank in depth at 4000 m/s becomes atan(v/4000) at velocity v
    expect(b.ranges!.cycles[0].left.flankAngleDeg!.p90).toBeCloseTo((Math.atan(q10 / 4000) * 180) / Math.PI, 0);
    expect(out.assumptions.join(' ')).toMatch(/4000 seeded triangular draws/);
  });

  it('triangular quantile: ends, mode and a skewed case', () => {
    const r = { min: 1000, mode: 1500, max: 3000 };
    expect(triangularQuantile(r, 0)).toBe(1000);
    expect(triangularQuantile(r, 1)).toBe(3000);
    expect(triangularQuantile(r, 0.5)).toBeCloseTo(3000 - Math.sqrt(0.5 * 2000 * 1500), 9);
    // CDF at the mode is (mode − min)/(max − min) = 0.25
    expect(triangularQuantile(r, 0.25)).toBeCloseTo(1500, 9);
    expect(triangularQuantile({ min: 5, mode: 5, max: 5 }, 0.7)).toBe(5);
  });
});

import { linearSamplerFor, monteCarlo, parseInterpretation } from '../../../shared/measure';
import { prepare } from '../../../shared/measure/prepare';
import { firstDifference } from './helpers';

/** A noisy multi-cycle knoll whose flanks cut older tops (many crossings, so many exactly evaluated intervals). */
function noisyKnoll(n: number, velocity: unknown) {
  let seed = 99;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const line = (x0: number, x1: number, f: (x: number) => number) =>
    Array.from({ length: n }, (_, i) => {
      const x = x0 + ((x1 - x0) * i) / (n - 1);
      return [x, f(x) + (i > 0 && i < n - 1 ? (rnd() - 0.5) * 4 : 0)];
    });
  const cycles = [];
  for (let i = 0; i < 5; i++) {
    const L = 2000 + 600 * i, R = 18000 - 500 * i, t = 1900 - 60 * i, mid = (L + R) / 2;
    const top = line(L, R, (x) => t - 15 * Math.exp(-(((x - mid) / 2000) ** 2)));
    cycles.push({
      index: i + 1, top, marginLeft: top[0], marginRight: top[n - 1],
      flankLeft: line(L, L - 400, (x) => t + ((L - x) / 400) * 100),
      flankRight: line(R, R + 400, (x) => t + ((x - R) / 400) * 100),
    });
  }
  return { verticalDomain: 'twt_ms', velocity, buildups: [{ base: line(0, 20000, (x) => 2000 - 40 * Math.sin(x / 3000)), cycles }] };
}

describe('linearised Monte Carlo equals direct recomputation', () => {
  const cases: [string, unknown][] = [
    ['Kestrel Knoll fixture, buildup model', loadIn('kestrel-knoll-twt-buildup-ranges.json')],
    ['noisy knoll, buildup model', noisyKnoll(150, { kind: 'buildup', water: { v: { min: 1480, mode: 1500, max: 1530 }, seafloorMs: 400 }, overburden: { v: { min: 1800, mode: 2200, max: 2700 } }, carbonate: { v: { min: 3500, mode: 4500, max: 5800 } } })],
    ['noisy knoll, layers', noisyKnoll(150, { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 900, v: { min: 2000, mode: 2400, max: 2900 } }, { topMs: 1750, v: { min: 3000, mode: 4000, max: 5000 } }] })],
    ['noisy knoll, linear law', noisyKnoll(150, { kind: 'linear', v0: { min: 1600, mode: 1800, max: 2100 }, k: 0.6 })],
    ['platform, constant', (() => { const d = depthDocToTwt(loadIn('platform-depth.json'), { kind: 'constant', v: 4000 }); d.velocity = { kind: 'constant', v: { min: 3000, mode: 4000, max: 5000 } }; return d; })()],
  ];
  for (const [name, doc] of cases) {
    it(name, () => {
      const p = prepare(parseInterpretation(doc));
      const fast = monteCarlo(p, { draws: 60, seed: 'cmp' });
      const direct = monteCarlo(p, { draws: 60, seed: 'cmp', method: 'direct' });
      expect(linearSamplerFor(p.buildups[0], p.velocity!)).not.toBeNull();
      expect(firstDifference(fast, direct, '', 1e-8, 1e-6)).toBeNull();
    });
  }
});

/**
 * A knoll whose flanks are traced with very uneven spacing: a zigzag of long
 * segments with, at every corner, a cluster of 24 vertices a few centimetres
 * apart wiggling sideways. Equal-arc-length samples then jump over whole
 * clusters (and back, as the velocities change from draw to draw), and a
 * sample put on the wrong segment would be projected along a wiggle.
 */
function unevenFlankKnoll(velocity: unknown) {
  const doc = noisyKnoll(60, velocity);
  for (const c of doc.buildups[0].cycles) {
    for (const key of ['flankLeft', 'flankRight'] as const) {
      const f = c[key] as number[][];
      const [x0, y0] = f[0];
      const [x1, y1] = f[f.length - 1];
      const pts: number[][] = [];
      const corners = 13;
      for (let q = 0; q < corners; q++) {
        const u = q / (corners - 1);
        const x = x0 + u * (x1 - x0);
        const y = y0 + u * (y1 - y0) + (q > 0 && q < corners - 1 ? (q % 2 ? 8 : -8) : 0);
        pts.push([x, y]);
        if (q === corners - 1) break;
        for (let w = 1; w <= 24; w++) pts.push([x + Math.sign(x1 - x0) * 0.04 * w, y + (w % 2 ? 0.02 : -0.02)]);
      }
      c[key] = pts;
    }
  }
  return doc;
}

describe('linearised Monte Carlo: batch and uneven flanks', () => {
  const buildupModel = { kind: 'buildup', water: { v: { min: 1480, mode: 1500, max: 1530 }, seafloorMs: 400 }, overburden: { v: { min: 1800, mode: 2200, max: 2700 } }, carbonate: { v: { min: 3500, mode: 4500, max: 5800 } } };

  it('unevenly traced flanks: fast sampler equals direct recomputation', () => {
    const p = prepare(parseInterpretation(unevenFlankKnoll(buildupModel)));
    expect(linearSamplerFor(p.buildups[0], p.velocity!)).not.toBeNull();
    const fast = monteCarlo(p, { draws: 80, seed: 'uneven' });
    const direct = monteCarlo(p, { draws: 80, seed: 'uneven', method: 'direct' });
    expect(firstDifference(fast, direct, '', 1e-8, 1e-6)).toBeNull();
  });

  it('drawMany gives exactly the numbers of draw, draw by draw', () => {
    for (const doc of [noisyKnoll(150, buildupModel), unevenFlankKnoll(buildupModel)]) {
      const p = prepare(parseInterpretation(doc));
      const b = p.buildups[0];
      const n = b.tops.length;
      const K = 3;
      const draws = 25;
      let seed = 3;
      const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
      const lo = [1480, 1800, 3500];
      const hi = [1530, 2700, 5800];
      const Vs = Float64Array.from({ length: draws * K }, (_, i) => lo[i % K] + rnd() * (hi[i % K] - lo[i % K]));
      const mk = () => new Float64Array(draws);
      const batch = { heightM: mk(), areaM2: mk(), volumeM3: mk(), left: Array.from({ length: n }, mk), right: Array.from({ length: n }, mk) };
      linearSamplerFor(b, p.velocity!)!.drawMany(Vs, draws, batch);
      const one = linearSamplerFor(b, p.velocity!)!;
      const out = { heightM: 0, areaM2: 0, volumeM3: 0, left: new Float64Array(n), right: new Float64Array(n) };
      for (let d = 0; d < draws; d++) {
        one.draw(Vs.slice(d * K, d * K + K), out);
        expect(batch.heightM[d]).toBe(out.heightM);
        expect(batch.areaM2[d]).toBe(out.areaM2);
        expect(batch.volumeM3[d]).toBe(out.volumeM3);
        for (let c = 0; c < n; c++) {
          expect(batch.left[c][d]).toBe(out.left[c]);
          expect(batch.right[c][d]).toBe(out.right[c]);
          expect(out.left[c]).toBeGreaterThan(0);
        }
      }
    }
  });
});
