/**
 * Vertical exaggeration (VE) of a displayed section: tan(apparent) = VE · tan(true)
 * — Groshong, *3-D Structural Geology* (2nd ed., 2006), eq. 6.3.
 *
 * Units: angles in degrees (0–90 below horizontal; the sign is kept), VE
 * dimensionless (> 0).
 */
import { DEG } from './geometry';

/** Apparent (displayed) dip for a true dip at vertical exaggeration `ve`. */
export function apparentFromTrue(trueDeg: number, ve: number): number {
  return Math.atan(ve * Math.tan(trueDeg / DEG)) * DEG;
}

/** True dip for an apparent (displayed) dip at vertical exaggeration `ve`. */
export function trueFromApparent(apparentDeg: number, ve: number): number {
  return Math.atan(Math.tan(apparentDeg / DEG) / ve) * DEG;
}
