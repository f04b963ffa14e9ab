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
  // resample at FLANK_SAMPLES equally spaced points and accumulate moments
  const m = FLANK_SAMPLES;
  const sx = scratchX;
  const sz = scratchZ;
  let seg = 0;
  let mx = 0;
  let mz = 0;
  for (let k = 0; k < m; k++) {
    const s = k === m - 1 ? total : (total * k) / (m - 1);
    while (seg < n - 2 && cum[seg + 1] < s) seg++;
    const len = cum[seg + 1] - cum[seg];
    const t = len > 0 ? (s - cum[seg]) / len : 0;
    sx[k] = xs[seg] + t * (xs[seg + 1] - xs[seg]);
    sz[k] = zs[seg] + t * (zs[seg + 1] - zs[seg]);
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
  return { flankAngleDeg: theta > 90 ? 180 - theta : theta, flankMaxDeg: steep * DEG };
}

/** The same angle through the general helpers (kept for cross-checking the fast path in tests). */
export function flankAnglesReference(points: readonly Point[]): FlankAngles {
  const fit = orthogonalRegression(resampleByArcLength(points, FLANK_SAMPLES));
  return { flankAngleDeg: fit ? fit.dipDeg : null, flankMaxDeg: steepestSegmentDeg(points) };
}
