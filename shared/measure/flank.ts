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
import { orthogonalRegression, resampleByArcLength, steepestSegmentDeg, type Point } from './geometry';

export const FLANK_SAMPLES = 257;

export interface FlankAngles {
  flankAngleDeg: number | null;
  flankMaxDeg: number | null;
}

/** Flank angle and steepest segment of a flank given as x and z arrays; nulls when there is no flank. */
export function flankAngles(xs: ArrayLike<number> | null, zs: ArrayLike<number> | null): FlankAngles {
  if (!xs || !zs || xs.length < 2) return { flankAngleDeg: null, flankMaxDeg: null };
  const pts: Point[] = [];
  for (let i = 0; i < xs.length; i++) pts.push([xs[i], zs[i]]);
  const fit = orthogonalRegression(resampleByArcLength(pts, FLANK_SAMPLES));
  return { flankAngleDeg: fit ? fit.dipDeg : null, flankMaxDeg: steepestSegmentDeg(pts) };
}
