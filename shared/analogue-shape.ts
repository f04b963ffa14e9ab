/**
 * Analogue library numbers shared by the server and the browser:
 * - the depth profile of a buildup (base, each top, upper envelope in depth
 *   metres) from the engine's own depth conversion;
 * - the normalised shape and the shape distance used by Look-alikes;
 * - the metrics an analogue keeps, taken from a `cayline.measurements/1`
 *   buildup entry, and their vector (log10 for metrics that span decades).
 */
import { parseInterpretation } from './measure/index';
import { prepare, converterFor, toDepth } from './measure/prepare';
import { evaluateEnvelope } from './measure/envelope';
import { modeOf } from './measure/velocity';
import type { BuildupMeasurement } from './measure/index';
import { METRICS, SHAPE_SAMPLES, type DepthPoint, type DepthProfile, type Metrics, type MetricKey } from './schemas/analogues';

const round = (v: number) => Math.round(v * 1000) / 1000;

/**
 * Depth profiles of every buildup of an interpretation (spec §4 input), using
 * the velocity model's modes, exactly as `measure()` converts them: base,
 * each top (oldest first) and the upper envelope (spec §6) in [x m, z m].
 */
export function depthProfilesOf(input: unknown): DepthProfile[] {
  const it = parseInterpretation(input);
  const p = prepare(it);
  const conv = converterFor(p, p.velocity ? modeOf(p.velocity) : null);
  return p.buildups.map((b) => {
    const d = toDepth(b, conv);
    const line = (l: { xs: ArrayLike<number>; zs: ArrayLike<number> }): DepthPoint[] => Array.from(l.xs, (x, i) => [round(x), round(l.zs[i])] as DepthPoint);
    const env = evaluateEnvelope(b.plan, d.sourcesZ);
    const envelope: DepthPoint[] = [];
    for (let k = 0; k < env.n; k++) {
      const a: DepthPoint = [round(env.x0[k]), round(env.z0[k])];
      const last = envelope[envelope.length - 1];
      if (!last || last[0] !== a[0] || last[1] !== a[1]) envelope.push(a);
      envelope.push([round(env.x1[k]), round(env.z1[k])]);
    }
    return { base: line(d.base), tops: d.tops.map(line), envelope };
  });
}

/** Linear interpolation of a polyline sorted by x; `outside` beyond its ends (nearest end value when undefined). */
function interp(pts: readonly DepthPoint[], x: number, outside?: number): number {
  const n = pts.length;
  if (x < pts[0][0]) return outside ?? pts[0][1];
  if (x > pts[n - 1][0]) return outside ?? pts[n - 1][1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (pts[mid][0] <= x) lo = mid;
    else hi = mid;
  }
  const [x0, z0] = pts[lo];
  const [x1, z1] = pts[hi];
  return x1 === x0 ? z1 : z0 + ((z1 - z0) * (x - x0)) / (x1 - x0);
}

const byX = (pts: readonly DepthPoint[]) => [...pts].sort((a, b) => a[0] - b[0]);

/**
 * The normalised shape of a profile: the height above the base,
 * h(x) = max(0, z_base(x) − z_envelope(x)) (0 where the envelope does not
 * reach), with x scaled to 0…1 over the base's width and h to 0…1 by its
 * largest sampled value, sampled at `n` equally spaced x (linear
 * interpolation, base extended flat beyond its ends). Null when the profile
 * has no width or no height.
 */
export function shapeOf(profile: Pick<DepthProfile, 'base' | 'envelope'>, n = SHAPE_SAMPLES): number[] | null {
  const base = byX(profile.base);
  const env = byX(profile.envelope);
  const x0 = base[0][0];
  const w = base[base.length - 1][0] - x0;
  if (!(w > 0) || env.length < 2) return null;
  const h: number[] = [];
  for (let i = 0; i < n; i++) {
    const x = x0 + (w * i) / (n - 1);
    const ze = interp(env, x, NaN);
    h.push(Number.isNaN(ze) ? 0 : Math.max(0, interp(base, x) - ze));
  }
  const top = Math.max(...h);
  if (!(top > 0)) return null;
  return h.map((v) => v / top);
}

/**
 * Shape distance: the L2 (Euclidean) distance between two shapes resampled at
 * the same n equally spaced x, divided by √n (the root-mean-square difference
 * of normalised heights, 0 = same shape, at most 1).
 */
export function shapeDistance(a: readonly number[], b: readonly number[]): number {
  if (a.length !== b.length) throw new Error(`shapeDistance: ${a.length} vs ${b.length} samples`);
  let s = 0;
  for (let i = 0; i < a.length; i++) s += (a[i] - b[i]) ** 2;
  return Math.sqrt(s / a.length);
}

/** Blocks of the piecewise aggregate approximation used to index shapes. */
export const SHAPE_PAA_BLOCKS = 8;

/**
 * Piecewise aggregate approximation of a shape (Keogh et al. 2001): the mean
 * of each of SHAPE_PAA_BLOCKS equal blocks, times √(block length). The
 * Euclidean distance of two such vectors is a lower bound of the Euclidean
 * distance of the shapes (Cauchy–Schwarz within each block), so a
 * nearest-neighbour search on this 8-dimensional index can be checked exact.
 */
export function shapePaa(shape: readonly number[]): number[] {
  const L = shape.length / SHAPE_PAA_BLOCKS;
  if (!Number.isInteger(L)) throw new Error(`shapePaa: ${shape.length} samples do not split into ${SHAPE_PAA_BLOCKS} blocks`);
  const out: number[] = [];
  for (let j = 0; j < SHAPE_PAA_BLOCKS; j++) {
    let s = 0;
    for (let i = j * L; i < (j + 1) * L; i++) s += shape[i];
    out.push((s / L) * Math.sqrt(L));
  }
  return out;
}

const mean = (xs: number[]) => (xs.length ? xs.reduce((s, v) => s + v, 0) / xs.length : null);

/** The analogue metrics of one engine buildup entry. */
export function metricsFromMeasurement(m: BuildupMeasurement): Required<Metrics> {
  const angles: number[] = [];
  const maxes: number[] = [];
  for (const c of m.cycles)
    for (const s of [c.left, c.right]) {
      if (s.flankAngleDeg != null) angles.push(s.flankAngleDeg);
      if (s.flankMaxDeg != null) maxes.push(s.flankMaxDeg);
    }
  return {
    heightM: m.heightM,
    baseWidthM: m.baseWidthM,
    aspectRatio: m.aspectRatio,
    areaM2: m.areaM2,
    volumeM3: m.volumeM3,
    topWidthM: m.cycles[m.cycles.length - 1]?.topWidthM ?? null,
    trajectoryDeg: m.trajectoryDeg,
    netBackstepM: m.netBackstepM,
    netAggradationM: m.netAggradationM,
    flankAngleDeg: mean(angles),
    flankMaxDeg: maxes.length ? Math.max(...maxes) : null,
    cycleCount: m.cycles.length,
  };
}

/** The value a metric takes in the Look-alikes space: log10 for metrics that span decades (null when not positive). */
export function metricSpaceValue(key: MetricKey, v: number | null | undefined): number | null {
  if (v == null || !Number.isFinite(v)) return null;
  const def = METRICS.find((m) => m.key === key)!;
  if (!def.log) return v;
  return v > 0 ? Math.log10(v) : null;
}

/** The metric vector stored with an analogue (METRICS order; null where missing). */
export function metricVector(m: Metrics): (number | null)[] {
  return METRICS.map((d) => metricSpaceValue(d.key, m[d.key]));
}
