/**
 * Flank angles (measurement-spec §5): the angle below horizontal (0–90°) of
 * the orthogonal-regression line through the flank polyline resampled at
 * equal arc length, and the steepest single segment.
 *
 * Units: x, z in metres (depth domain), angles in degrees. Orthogonal
 * regression: Pearson (1901), "On lines and planes of closest fit".
 *
 * Choice: the flank is resampled at FLANK_SAMPLES points equally spaced along
 * its length (ends included), so densely traced stretches do not outweigh
 * sparsely traced ones; 257 points keep the result within a few hundredths of
 * a degree of the continuous (infinitely fine) limit for traced flanks.
 */
import { DEG, orthogonalRegression, resampleByArcLength, steepestSegmentDeg, type Point } from './geometry';

export const FLANK_SAMPLES = 257;

let scratchCum = new Float64Array(1024);
const scratchX = new Float64Array(FLANK_SAMPLES);
const scratchZ = new Float64Array(FLANK_SAMPLES);

export interface FlankAngles {
  flankAngleDeg: number | null;
  flankMaxDeg: number | null;
}

/**
 * Flank angle and steepest segment of a flank given as x and z arrays; nulls
 * when there is no flank. Works on the arrays directly (no point objects):
 * the Monte Carlo calls it for every flank of every draw.
 */
export function flankAngles(xs: ArrayLike<number> | null, zs: ArrayLike<number> | null): FlankAngles {
  if (!xs || !zs || xs.length < 2) return { flankAngleDeg: null, flankMaxDeg: null };
  const n = xs.length;
  // cumulative arc length and steepest segment (scratch buffers reused between calls: no observable state)
  if (scratchCum.length < n) scratchCum = new Float64Array(Math.max(n, 2 * scratchCum.length));
  const cum = scratchCum;
  cum[0] = 0;
  // steepest segment as the largest |dz|/|dx| (compared by cross-multiplication, one atan2 at the end)
  let bdx = 0;
  let bdz = -1;
  for (let i = 1; i < n; i++) {
    const dx = xs[i] - xs[i - 1];
    const dz = zs[i] - zs[i - 1];
    const len = Math.sqrt(dx * dx + dz * dz);
    cum[i] = cum[i - 1] + len;
    if (len > 0) {
      const ax = dx < 0 ? -dx : dx;
      const az = dz < 0 ? -dz : dz;
      if (bdz < 0 || az * bdx > bdz * ax) { bdx = ax; bdz = az; }
    }
  }
  const steep = Math.atan2(bdz, bdx);
  const total = cum[n - 1];
  if (!(total > 0)) return { flankAngleDeg: null, flankMaxDeg: null };
  resampleEqualArc(xs, zs, cum, n, total, scratchX, scratchZ);
  return { flankAngleDeg: majorAxisDipDeg(scratchX, scratchZ), flankMaxDeg: steep * DEG };
}

/**
 * Resample a polyline at FLANK_SAMPLES points equally spaced along its arc
 * length (ends included) into `sx`, `sz`, given its cumulative arc length
 * `cum` (cum[0] = 0, non-decreasing) and `total` = cum[n − 1] > 0. Each
 * sample lies on the first segment j whose end reaches it (cum[j + 1] ≥ s).
 * With `hint` (one segment per sample, updated in place), the search starts
 * from the segment the sample fell on last time — the Monte Carlo's flanks
 * move little between draws — and finds the same segment as the forward scan.
 */
export function resampleEqualArc(
  xs: ArrayLike<number>,
  zs: ArrayLike<number>,
  cum: ArrayLike<number>,
  n: number,
  total: number,
  sx: Float64Array,
  sz: Float64Array,
  hint?: Int32Array,
): void {
  const m = FLANK_SAMPLES;
  const last = n - 2;
  let seg = 0;
  // two copies of the loop, so the forward scan stays free of the hint's branches (it runs for every flank of every direct draw)
  if (!hint) {
    for (let k = 0; k < m; k++) {
      const s = k === m - 1 ? total : (total * k) / (m - 1);
      while (seg < last && cum[seg + 1] < s) seg++;
      const len = cum[seg + 1] - cum[seg];
      const t = len > 0 ? (s - cum[seg]) / len : 0;
      sx[k] = xs[seg] + t * (xs[seg + 1] - xs[seg]);
      sz[k] = zs[seg] + t * (zs[seg + 1] - zs[seg]);
    }
    return;
  }
  for (let k = 0; k < m; k++) {
    const s = k === m - 1 ? total : (total * k) / (m - 1);
    seg = segmentOf(cum, s, seg, last, hint[k]);
    hint[k] = seg;
    const len = cum[seg + 1] - cum[seg];
    const t = len > 0 ? (s - cum[seg]) / len : 0;
    sx[k] = xs[seg] + t * (xs[seg + 1] - xs[seg]);
    sz[k] = zs[seg] + t * (zs[seg + 1] - zs[seg]);
  }
}

/**
 * Angle below horizontal (0–90°) of the major axis of the points' covariance
 * (orthogonal regression, Pearson 1901), two passes: means, then moments.
 */
export function majorAxisDipDeg(sx: ArrayLike<number>, sz: ArrayLike<number>, m = FLANK_SAMPLES): number {
  let mx = 0;
  let mz = 0;
  for (let k = 0; k < m; k++) {
    mx += sx[k];
    mz += sz[k];
  }
  mx /= m;
  mz /= m;
  let sxx = 0, szz = 0, sxz = 0;
  for (let k = 0; k < m; k++) {
    const dx = sx[k] - mx;
    const dz = sz[k] - mz;
    sxx += dx * dx; szz += dz * dz; sxz += dx * dz;
  }
  // major axis of the covariance (orthogonal regression), folded to 0–90° below horizontal
  const theta = Math.abs(0.5 * Math.atan2(2 * sxz, sxx - szz)) * DEG;
  return theta > 90 ? 180 - theta : theta;
}

/**
 * The segment a sample at arc length s falls on: the smallest j in
 * [lo, last] with j = last or cum[j + 1] ≥ s (the one the forward scan
 * stops at; the condition is monotone in j because cum is non-decreasing).
 * Starts from a guess and walks a few steps, then bisects.
 */
function segmentOf(cum: ArrayLike<number>, s: number, lo: number, last: number, guess: number): number {
  let j = guess < lo ? lo : guess > last ? last : guess;
  if (j < last && cum[j + 1] < s) {
    // condition false at j: move up
    for (let step = 0; step < 8; step++) {
      j++;
      if (j === last || cum[j + 1] >= s) return j;
    }
    let a = j + 1; // false below a
    let b = last; // true at b
    while (a < b) {
      const mid = (a + b) >> 1;
      if (cum[mid + 1] < s) a = mid + 1;
      else b = mid;
    }
    return b;
  }
  // condition true at j: move down while it holds at j − 1
  for (let step = 0; step < 8; step++) {
    if (j === lo || cum[j] < s) return j;
    j--;
  }
  if (j === lo || cum[j] < s) return j;
  let a = lo; // search [lo, j] for the first true
  let b = j;
  while (a < b) {
    const mid = (a + b) >> 1;
    if (mid === last || cum[mid + 1] >= s) b = mid;
    else a = mid + 1;
  }
  return b;
}

/** The same angle through the general helpers (kept for cross-checking the fast path in tests). */
export function flankAnglesReference(points: readonly Point[]): FlankAngles {
  const fit = orthogonalRegression(resampleByArcLength(points, FLANK_SAMPLES));
  return { flankAngleDeg: fit ? fit.dipDeg : null, flankMaxDeg: steepestSegmentDeg(points) };
}
