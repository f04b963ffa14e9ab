/**
 * The pieces the linearised Monte Carlo shares with the engine
 * (flank.ts `resampleEqualArc` / `majorAxisDipDeg`, envelope.ts
 * `addTrapezoid`), checked on their own.
 */
import { describe, expect, it } from 'vitest';
import { FLANK_SAMPLES, flankAngles, majorAxisDipDeg, resampleEqualArc } from '../../../shared/measure/flank';
import { addTrapezoid } from '../../../shared/measure/envelope';

function cumOf(xs: Float64Array, zs: Float64Array) {
  const cum = new Float64Array(xs.length);
  for (let i = 1; i < xs.length; i++) cum[i] = cum[i - 1] + Math.hypot(xs[i] - xs[i - 1], zs[i] - zs[i - 1]);
  return cum;
}

describe('resampleEqualArc', () => {
  it('with segment hints from earlier draws it puts every sample where the forward scan does', () => {
    let seed = 7;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const n = 400;
    const xs = Float64Array.from({ length: n }, (_, i) => i * 2 + (i % 17 === 0 ? 0 : rnd() * 0.01));
    const hint = new Int32Array(FLANK_SAMPLES);
    const a = { x: new Float64Array(FLANK_SAMPLES), z: new Float64Array(FLANK_SAMPLES) };
    const b = { x: new Float64Array(FLANK_SAMPLES), z: new Float64Array(FLANK_SAMPLES) };
    for (let draw = 0; draw < 30; draw++) {
      // depths change from draw to draw (as velocities do), with clusters of tiny segments
      const scale = 0.5 + rnd() * 2;
      const zs = Float64Array.from({ length: n }, (_, i) => scale * (i < 200 ? i * 0.5 : 100 + (i % 3) * 0.02) + (draw % 2 ? 3 * Math.sin(i / 9) : 0));
      const cum = cumOf(xs, zs);
      resampleEqualArc(xs, zs, cum, n, cum[n - 1], a.x, a.z);
      resampleEqualArc(xs, zs, cum, n, cum[n - 1], b.x, b.z, hint);
      expect(Array.from(b.x)).toEqual(Array.from(a.x));
      expect(Array.from(b.z)).toEqual(Array.from(a.z));
    }
  });

  it('a straight flank at 30° gives 30° (tan 30° slope, derived)', () => {
    const xs = Float64Array.from([0, 100, 250, 1000]);
    const zs = Float64Array.from(xs, (x) => x * Math.tan(Math.PI / 6));
    const sx = new Float64Array(FLANK_SAMPLES);
    const sz = new Float64Array(FLANK_SAMPLES);
    const cum = cumOf(xs, zs);
    resampleEqualArc(xs, zs, cum, xs.length, cum[xs.length - 1], sx, sz);
    expect(majorAxisDipDeg(sx, sz)).toBeCloseTo(30, 10);
    expect(flankAngles(xs, zs).flankAngleDeg).toBe(majorAxisDipDeg(sx, sz));
  });
});

describe('addTrapezoid', () => {
  it('areas and first moments about xc of a rectangle split by the crest (derived by hand)', () => {
    const acc = new Float64Array(4);
    // height 2 on [0, 4] with xc = 1: left area 2, moment ∫₀¹ (1 − x)·2 dx = 1; right area 6, moment ∫₁⁴ (x − 1)·2 dx = 9
    addTrapezoid(acc, 0, 1, 2, 2, 1);
    addTrapezoid(acc, 1, 4, 2, 2, 1);
    expect(Array.from(acc)).toEqual([2, 6, 1, 9]);
  });
  it('keeps only the positive part of a height that changes sign', () => {
    const acc = new Float64Array(4);
    // h = 2 − x on [0, 4], xc = 10: positive on [0, 2], area 2, moment ∫₀² (10 − x)(2 − x) dx = 40 − 24 + 8/3 = 56/3
    addTrapezoid(acc, 0, 4, 2, -2, 10);
    expect(acc[0]).toBeCloseTo(2, 12);
    expect(acc[2]).toBeCloseTo(56 / 3, 12);
    expect([acc[1], acc[3]]).toEqual([0, 0]);
  });
});
