/**
 * Calibration: image pixels (u right, v down) → section coordinates (x metres
 * along the line, y TWT ms or depth m), measurement-spec §2.
 *
 * Affine mode fits `x = a·u + b·v + c`, `y = d·u + e·v + f` by ordinary least
 * squares (normal equations on centred coordinates; Gauss, see e.g. Golub &
 * Van Loan, *Matrix Computations*, ch. 5). Axes mode fixes `b = d = 0` and
 * fits x from u alone and y from v alone.
 *
 * Convention (axes mode): every tie carries both a pixel and a world point;
 * x is fitted from the ties' u and y from their v, so at least two distinct u
 * and two distinct v are needed (two ties placed diagonally are enough).
 *
 * Residuals: `residualWorld = world − fitted` (metres / ms), and `residualPx`
 * is the pixel distance between the tie's pixel and the pixel that its world
 * point maps back to through the inverse map.
 */
import { CalibrationError } from './errors';

export type CalibrationMode = 'affine' | 'axes';

export interface Tie {
  px: [number, number];
  world: [number, number];
}

export interface Affine {
  a: number; b: number; c: number;
  d: number; e: number; f: number;
}

export interface TieResidual {
  px: [number, number];
  world: [number, number];
  fitted: [number, number];
  residualWorld: [number, number];
  residualPx: number;
}

export interface CalibrationFit {
  mode: CalibrationMode;
  affine: Affine;
  residuals: TieResidual[];
  rmsPx: number;
  rmsWorld: { x: number; y: number };
}

/** Map a pixel [u, v] to section coordinates [x, y]. */
export function applyCalibration(m: Affine, p: readonly [number, number] | readonly number[]): [number, number] {
  return [m.a * p[0] + m.b * p[1] + m.c, m.d * p[0] + m.e * p[1] + m.f];
}

/** Map section coordinates [x, y] back to a pixel [u, v]. Throws CalibrationError for a singular map. */
export function invertCalibration(m: Affine, q: readonly [number, number] | readonly number[]): [number, number] {
  const det = m.a * m.e - m.b * m.d;
  if (!(Math.abs(det) > 0) || !Number.isFinite(det)) throw new CalibrationError('the calibration map is singular and cannot be inverted');
  const x = q[0] - m.c;
  const y = q[1] - m.f;
  return [(m.e * x - m.b * y) / det, (-m.d * x + m.a * y) / det];
}

/** Least squares fit of the pixel → section map from ties. */
export function fitCalibration(ties: readonly Tie[], mode: CalibrationMode = 'affine'): CalibrationFit {
  if (!Array.isArray(ties)) throw new CalibrationError('expected a list of ties');
  ties.forEach((t, i) => {
    const ok = t && Array.isArray(t.px) && Array.isArray(t.world) && [...t.px, ...t.world].length === 4 && [...t.px, ...t.world].every(Number.isFinite);
    if (!ok) throw new CalibrationError('each tie needs finite px [u, v] and world [x, y]', `calibration[${i}]`);
  });
  const n = ties.length;
  let mu = 0, mv = 0, mx = 0, my = 0;
  for (const t of ties) { mu += t.px[0]; mv += t.px[1]; mx += t.world[0]; my += t.world[1]; }
  mu /= n || 1; mv /= n || 1; mx /= n || 1; my /= n || 1;
  let suu = 0, svv = 0, suv = 0, sux = 0, svx = 0, suy = 0, svy = 0;
  for (const t of ties) {
    const u = t.px[0] - mu, v = t.px[1] - mv, x = t.world[0] - mx, y = t.world[1] - my;
    suu += u * u; svv += v * v; suv += u * v; sux += u * x; svx += v * x; suy += u * y; svy += v * y;
  }
  let affine: Affine;
  if (mode === 'axes') {
    if (n < 2) throw new CalibrationError(`axes mode needs at least 2 ties, got ${n}`);
    const scale = Math.max(...ties.map((t) => Math.abs(t.px[0]) + Math.abs(t.px[1])), 1);
    if (!(suu > 1e-18 * scale * scale)) throw new CalibrationError('axes mode needs ties at 2 or more distinct u (pixel columns) to fit x');
    if (!(svv > 1e-18 * scale * scale)) throw new CalibrationError('axes mode needs ties at 2 or more distinct v (pixel rows) to fit y');
    const a = sux / suu;
    const e = svy / svv;
    affine = { a, b: 0, c: mx - a * mu, d: 0, e, f: my - e * mv };
  } else if (mode === 'affine') {
    if (n < 3) throw new CalibrationError(`an affine calibration needs at least 3 ties, got ${n}`);
    const det = suu * svv - suv * suv;
    // collinear when the pixel scatter has (almost) no second dimension
    if (!(det > 1e-12 * (suu + svv) * (suu + svv))) throw new CalibrationError('the ties are collinear (or coincide): place at least 3 ties that are not on one line');
    const a = (svv * sux - suv * svx) / det;
    const b = (suu * svx - suv * sux) / det;
    const d = (svv * suy - suv * svy) / det;
    const e = (suu * svy - suv * suy) / det;
    affine = { a, b, c: mx - a * mu - b * mv, d, e, f: my - d * mu - e * mv };
  } else {
    throw new CalibrationError(`unknown calibration mode "${String(mode)}" (use "affine" or "axes")`, 'calibration.mode');
  }
  const det = affine.a * affine.e - affine.b * affine.d;
  if (!(Math.abs(det) > 0) || !Number.isFinite(det)) throw new CalibrationError('the ties give a singular map (all world points on one line?)');
  let sp = 0, sx = 0, sy = 0;
  const residuals: TieResidual[] = ties.map((t) => {
    const fitted = applyCalibration(affine, t.px);
    const back = invertCalibration(affine, t.world);
    const dx = t.world[0] - fitted[0];
    const dy = t.world[1] - fitted[1];
    const rp = Math.hypot(t.px[0] - back[0], t.px[1] - back[1]);
    sp += rp * rp; sx += dx * dx; sy += dy * dy;
    return { px: [t.px[0], t.px[1]], world: [t.world[0], t.world[1]], fitted, residualWorld: [dx, dy], residualPx: rp };
  });
  return { mode, affine, residuals, rmsPx: Math.sqrt(sp / n), rmsWorld: { x: Math.sqrt(sx / n), y: Math.sqrt(sy / n) } };
}
