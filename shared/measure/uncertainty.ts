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
import { evaluateEnvelopeFlat, integrateProfile, type Envelope } from './envelope';
import { crestOf } from './buildup';
import { depthOf, type PreparedBuildup, type PreparedInterpretation, type Surface } from './prepare';
import { hasRanges, makeTwtToDepth, modelFromVector, triangularQuantile, velocityParams } from './velocity';
import { linearSamplerFor } from './linear-ranges';

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

interface Store {
  height: Float64Array;
  area: Float64Array;
  volume: Float64Array;
  fl: (Float64Array | null)[];
  fr: (Float64Array | null)[];
}

function storeFor(b: PreparedBuildup, draws: number): Store {
  return {
    height: new Float64Array(draws),
    area: new Float64Array(draws),
    volume: new Float64Array(draws),
    fl: b.flanksL.map((f) => (f ? new Float64Array(draws) : null)),
    fr: b.flanksR.map((f) => (f ? new Float64Array(draws) : null)),
  };
}

function rangesOf(st: Store, draws: number): BuildupRanges {
  return {
    draws,
    heightM: exceedancePercentiles(st.height),
    areaM2: exceedancePercentiles(st.area),
    volumeM3: exceedancePercentiles(st.volume),
    cycles: st.fl.map((_, i) => ({
      index: i + 1,
      left: { flankAngleDeg: st.fl[i] ? exceedancePercentiles(st.fl[i]!) : null },
      right: { flankAngleDeg: st.fr[i] ? exceedancePercentiles(st.fr[i]!) : null },
    })),
  };
}

/** Direct sampler: reconvert every vertex and recompute envelope, area, volume and flanks for each draw. */
function directSamplerFor(b: PreparedBuildup, st: Store): (conv: (y: number, te: number) => number, k: number) => void {
  const n = b.tops.length;
  const plan = b.plan;
  const srcOff = plan.srcOff;
  const Z = new Float64Array(srcOff[srcOff.length - 1]);
  const views = b.sources.map((_, s) => Z.subarray(srcOff[s], srcOff[s + 1]));
  const viewOf = new Map<Surface, Float64Array>(b.sources.map((s, k) => [s, views[k]]));
  const baseZ = new Float64Array(b.base.ys.length);
  const youngest = b.tops[n - 1];
  const topZ = viewOf.get(youngest)!;
  let env: Envelope | undefined;
  return (conv, k) => {
    depthOf(b.base, conv, baseZ);
    for (let s = 0; s < b.sources.length; s++) depthOf(b.sources[s], conv, views[s]);
    const crest = crestOf(youngest.xs, topZ);
    st.height[k] = interpolateAt(b.base.xs, baseZ, crest[0]) - crest[1];
    env = evaluateEnvelopeFlat(plan, Z, env);
    const integ = integrateProfile(env, b.base.xs, baseZ, crest[0]);
    st.area[k] = integ.area;
    st.volume[k] = Math.PI * (integ.momentLeft + integ.momentRight);
    for (let i = 0; i < n; i++) {
      const L = b.flanksL[i];
      const R = b.flanksR[i];
      if (L) st.fl[i]![k] = flankAngles(L.xs, viewOf.get(L)!).flankAngleDeg ?? NaN;
      if (R) st.fr[i]![k] = flankAngles(R.xs, viewOf.get(R)!).flankAngleDeg ?? NaN;
    }
  };
}

export interface MonteCarloOptions {
  draws: number;
  seed: string | number;
  /** 'auto' (default) uses the linearised sampler where the model allows it; 'direct' recomputes everything per draw. */
  method?: 'auto' | 'direct';
}

/**
 * Ranges for every buildup, or null when no velocity is a range (or the
 * section is already in depth). Deterministic for a given seed: each draw
 * takes one uniform number per range, in the model's field order.
 */
export function monteCarlo(p: PreparedInterpretation, opts: MonteCarloOptions): BuildupRanges[] | null {
  const model = p.velocity;
  if (p.verticalDomain !== 'twt_ms' || !model || !hasRanges(model)) return null;
  const rng = seedrandom(String(opts.seed));
  const params = velocityParams(model);
  const K = params.length;
  const draws = opts.draws;
  // every velocity set first (draw by draw, one uniform number per range in field order)
  const Vs = new Float64Array(draws * K);
  for (let k = 0; k < draws; k++) {
    for (let i = 0; i < K; i++) {
      const r = params[i].range;
      Vs[k * K + i] = r ? triangularQuantile(r, rng()) : params[i].mode;
    }
  }
  const stores = p.buildups.map((b) => storeFor(b, draws));
  p.buildups.forEach((b, bi) => {
    const st = stores[bi];
    const lin = opts.method === 'direct' ? null : linearSamplerFor(b, model);
    if (lin) {
      lin.drawMany(Vs, draws, { heightM: st.height, areaM2: st.area, volumeM3: st.volume, left: st.fl, right: st.fr });
      return;
    }
    const direct = directSamplerFor(b, st);
    for (let k = 0; k < draws; k++) direct(makeTwtToDepth(modelFromVector(model, Vs.subarray(k * K, k * K + K))), k);
  });
  return stores.map((st) => rangesOf(st, opts.draws));
}
