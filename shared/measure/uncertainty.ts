/**
 * Velocity uncertainty by Monte Carlo (measurement-spec §8).
 *
 * When any velocity is a range {min, mode, max}, N velocity sets are drawn
 * (each range independently, triangular distribution, seeded with
 * seedrandom so the same input and seed give the same output), the
 * geometry is reconverted and heightM, areaM2, volumeM3 and every flank
 * angle are recomputed. Percentiles use the exceedance convention of
 * petroleum resource reporting — SPE, *Petroleum Resources Management
 * System* (2018): P90 is the low value (90 % of draws are at or above it),
 * P50 the median, P10 the high value. Quantiles interpolate linearly between
 * order statistics (Hyndman & Fan 1996, type 7).
 *
 * Units: as the metrics (m, m², m³, degrees). Choice: velocities are drawn
 * independently (no correlation between layers), and classification is not
 * redrawn (it is reported for the mode velocities).
 */
import seedrandom from 'seedrandom';
import { flankAngles } from './flank';
import { interpolateAt } from './geometry';
import { evaluateEnvelope, integrateProfile } from './envelope';
import { crestOf } from './buildup';
import { depthOf, type PreparedBuildup, type PreparedInterpretation, type Surface } from './prepare';
import { drawVelocityModel, hasRanges, makeTwtToDepth } from './velocity';

export interface Percentiles {
  p90: number;
  p50: number;
  p10: number;
}

export interface BuildupRanges {
  draws: number;
  heightM: Percentiles;
  areaM2: Percentiles;
  volumeM3: Percentiles;
  cycles: { index: number; left: { flankAngleDeg: Percentiles | null }; right: { flankAngleDeg: Percentiles | null } }[];
}

/** Type-7 quantile of an ascending array. */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** P90 (low, 10th percentile), P50 and P10 (high, 90th percentile) of the values — SPE-PRMS exceedance convention. */
export function exceedancePercentiles(values: ArrayLike<number>): Percentiles {
  const s = Float64Array.from(values).sort();
  return { p90: quantileSorted(s, 0.1), p50: quantileSorted(s, 0.5), p10: quantileSorted(s, 0.9) };
}

interface Sampler {
  run(conv: (y: number, te: number) => number, k: number): void;
  result(): BuildupRanges;
}

function samplerFor(b: PreparedBuildup, draws: number): Sampler {
  const buf = new Map<Surface, Float64Array>();
  const zb = (s: Surface) => {
    let z = buf.get(s);
    if (!z) { z = new Float64Array(s.ys.length); buf.set(s, z); }
    return z;
  };
  const n = b.tops.length;
  const height = new Float64Array(draws);
  const area = new Float64Array(draws);
  const volume = new Float64Array(draws);
  const fl = b.flanksL.map((f) => (f ? new Float64Array(draws) : null));
  const fr = b.flanksR.map((f) => (f ? new Float64Array(draws) : null));
  const youngest = b.tops[n - 1];
  // a top that is also a flank source is converted once
  return {
    run(conv, k) {
      const baseZ = depthOf(b.base, conv, zb(b.base));
      const sourcesZ = b.sources.map((s) => depthOf(s, conv, zb(s)));
      const topZ = buf.get(youngest)!;
      const crest = crestOf(youngest.xs, topZ);
      height[k] = interpolateAt(b.base.xs, baseZ, crest[0]) - crest[1];
      const env = evaluateEnvelope(b.plan, sourcesZ);
      const integ = integrateProfile(env, b.base.xs, baseZ, crest[0]);
      area[k] = integ.area;
      volume[k] = Math.PI * (integ.momentLeft + integ.momentRight);
      for (let i = 0; i < n; i++) {
        const L = b.flanksL[i];
        const R = b.flanksR[i];
        if (L) fl[i]![k] = flankAngles(L.xs, buf.get(L)!).flankAngleDeg ?? NaN;
        if (R) fr[i]![k] = flankAngles(R.xs, buf.get(R)!).flankAngleDeg ?? NaN;
      }
    },
    result() {
      return {
        draws,
        heightM: exceedancePercentiles(height),
        areaM2: exceedancePercentiles(area),
        volumeM3: exceedancePercentiles(volume),
        cycles: b.tops.map((_, i) => ({
          index: i + 1,
          left: { flankAngleDeg: fl[i] ? exceedancePercentiles(fl[i]!) : null },
          right: { flankAngleDeg: fr[i] ? exceedancePercentiles(fr[i]!) : null },
        })),
      };
    },
  };
}

/**
 * Ranges for every buildup, or null when no velocity is a range (or the
 * section is already in depth). Deterministic for a given seed.
 */
export function monteCarlo(p: PreparedInterpretation, opts: { draws: number; seed: string | number }): BuildupRanges[] | null {
  const model = p.velocity;
  if (p.verticalDomain !== 'twt_ms' || !model || !hasRanges(model)) return null;
  const rng = seedrandom(String(opts.seed));
  const samplers = p.buildups.map((b) => samplerFor(b, opts.draws));
  for (let k = 0; k < opts.draws; k++) {
    const conv = makeTwtToDepth(drawVelocityModel(model, rng));
    for (const s of samplers) s.run(conv, k);
  }
  return samplers.map((s) => s.result());
}
