/**
 * Thinning of a followed path before it becomes vertices: Douglas–Peucker
 * (Douglas & Peucker 1973) through turf's `simplify` (high-quality mode, so
 * no radial pre-pass), with the tolerance in image pixels.
 */
import { lineString, simplify } from '@turf/turf';
import type { Pt } from './path';

/** Default tolerance of the thinning, image px: well under the 2 px a trace may differ from the event. */
export const THIN_TOLERANCE_PX = 0.5;

/** Douglas–Peucker thinning; the first and last points are kept. Fewer than 3 points come back as they are. */
export function thinPath(points: readonly Pt[], tolerancePx = THIN_TOLERANCE_PX): Pt[] {
  if (!(tolerancePx >= 0) || !Number.isFinite(tolerancePx)) throw new Error('thinPath: tolerancePx must be a finite number ≥ 0');
  if (points.length < 3) return points.map((p) => [p[0], p[1]]);
  const line = lineString(points.map((p) => [p[0], p[1]]));
  const out = simplify(line, { tolerance: tolerancePx, highQuality: true, mutate: false });
  return out.geometry.coordinates.map((c) => [c[0], c[1]] as Pt);
}

/** Round to 1/100 px, as the editor stores vertices. */
export function tidyPath(points: readonly Pt[]): Pt[] {
  return points.map((p) => [Math.round(p[0] * 100) / 100, Math.round(p[1] * 100) / 100]);
}
