/**
 * Phase scores: how much a pixel looks like the chosen phase of an event,
 * 0 (not at all), about 1 for a strong example (capped at SCORE_CAP), computed from a patch of signed
 * amplitudes (AmplitudeSource.readPatch). The least-cost path uses
 * `1 − score` as its cost.
 *
 * - peak: positive amplitude, divided by the patch's 95th percentile of |a|
 *   (a robust normaliser, so the score does not depend on the display clip);
 * - trough: the same for negative amplitude;
 * - zero: a zero crossing with the amplitude falling downward (peak above,
 *   trough below): the vertical slope −∂a/∂v (normalised the same way) times
 *   max(0, 1 − |a| / |∂a/∂v|), which falls off linearly with the distance in
 *   pixels from the crossing.
 *
 * The percentile choice is Cayline's own (common practice for robust
 * amplitude scaling is a high percentile of |a| rather than the maximum).
 */
import type { Phase } from './source';

/**
 * Scores are not clipped at 1 (a clip would make the crest of a strong
 * wavelet flat, and the path could wander across it); they are capped at
 * this value so one spike cannot buy a detour.
 */
export const SCORE_CAP = 2;

/**
 * The q-quantile (0…1) of |values| ignoring NaN, to within 1/4096 of the
 * largest |value| (a histogram: linear time, no sort); `fallback` when there
 * are none or it is 0.
 */
export function absQuantile(values: ArrayLike<number>, q: number, fallback = 1): number {
  let max = 0;
  let n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v !== v) continue;
    n++;
    const a = v < 0 ? -v : v;
    if (a > max) max = a;
  }
  if (!n || !(max > 1e-9)) return fallback;
  const BINS = 4096;
  const hist = new Uint32Array(BINS + 1);
  const k = BINS / max;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v !== v) continue;
    hist[Math.floor((v < 0 ? -v : v) * k)]++;
  }
  const rank = Math.min(n - 1, Math.max(0, Math.round(q * (n - 1))));
  let seen = 0;
  for (let b = 0; b <= BINS; b++) {
    seen += hist[b];
    if (seen > rank) {
      const r = Math.min(max, (b + 0.5) / k);
      return r > 1e-9 ? r : fallback;
    }
  }
  return max;
}

/** Normaliser of a patch: 95th percentile of |a|. */
export function patchReference(patch: ArrayLike<number>): number {
  return absQuantile(patch, 0.95, 1);
}

/**
 * Phase score of pixel (x, y) of a `w`-wide patch (row-major), given the
 * normaliser `ref`. NaN pixels score 0.
 */
export function phaseScoreAt(patch: ArrayLike<number>, w: number, h: number, x: number, y: number, phase: Phase, ref: number): number {
  const a = patch[y * w + x];
  if (a !== a) return 0;
  if (phase === 'peak') return a > 0 ? Math.min(SCORE_CAP, a / ref) : 0;
  if (phase === 'trough') return a < 0 ? Math.min(SCORE_CAP, -a / ref) : 0;
  const up = y > 0 ? patch[(y - 1) * w + x] : NaN;
  const dn = y < h - 1 ? patch[(y + 1) * w + x] : NaN;
  if (up !== up || dn !== dn) return 0;
  const d = (dn - up) / 2;
  if (!(d < 0)) return 0;
  const near = 1 - Math.abs(a) / -d;
  if (near <= 0) return 0;
  // A clean wavelet's steepest slope is about a third of its peak per pixel at
  // typical sampling; scale so a strong crossing reaches ~1 (Cayline's own choice).
  return Math.min(SCORE_CAP, (-d * 3) / ref) * near;
}

/** Phase scores of a whole patch (row-major, same shape). */
export function phaseScores(patch: Float32Array, w: number, h: number, phase: Phase, ref = patchReference(patch)): Float32Array {
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) out[y * w + x] = phaseScoreAt(patch, w, h, x, y, phase, ref);
  return out;
}

/**
 * Sub-pixel position (in pixels, relative to `y`) of the phase along a
 * vertical profile around sample `y`: a parabola through the three
 * amplitudes for peak and trough, linear interpolation to the zero for zero.
 * Returns 0 when the neighbours are missing or the fit is flat; clamped to ±0.5.
 */
export function subpixelOffset(col: (y: number) => number, y: number, phase: Phase): number {
  const a0 = col(y - 1);
  const a1 = col(y);
  const a2 = col(y + 1);
  if (a0 !== a0 || a1 !== a1 || a2 !== a2) return 0;
  let off = 0;
  if (phase === 'zero') {
    // the crossing lies between y and the neighbour of opposite sign
    if (a1 === 0) return 0;
    const other = a1 > 0 ? a2 : a0;
    const dir = a1 > 0 ? 1 : -1;
    if (Math.sign(other) === Math.sign(a1)) return 0;
    off = (dir * a1) / (a1 - other);
  } else {
    const s = phase === 'peak' ? 1 : -1;
    const denom = s * (a0 - 2 * a1 + a2);
    if (!(denom < 0)) return 0;
    off = (0.5 * s * (a0 - a2)) / denom;
  }
  return Math.max(-0.5, Math.min(0.5, off));
}

/**
 * Position (row units, relative to the image row index) of the phase's crest
 * around row `y`: when the crest is clipped (a run of equal values, as on a
 * display-clipped grey image) the middle of the run, otherwise the
 * sub-pixel offset. The wavelet is symmetric, so the middle of a clipped
 * plateau is where the unclipped crest was.
 */
export function crestPosition(col: (y: number) => number, y: number, phase: Phase): number {
  if (phase !== 'zero') {
    const a = col(y);
    if (a === a) {
      const eq = (b: number) => b === b && Math.abs(b - a) <= 1e-6;
      let lo = y;
      let hi = y;
      while (hi - lo < 64 && eq(col(lo - 1))) lo--;
      while (hi - lo < 64 && eq(col(hi + 1))) hi++;
      if (hi > lo) return (lo + hi) / 2;
    }
  }
  return y + subpixelOffset(col, y, phase);
}
