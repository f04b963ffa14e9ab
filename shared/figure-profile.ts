/**
 * A depth profile (shared/schemas/analogues.ts `DepthProfile`) traced on a
 * published figure: the curator clicks two points of known distance on the
 * figure's horizontal scale and two of known depth (or two-way time) on its
 * vertical scale, then traces the base and each cycle top in image pixels.
 *
 * The figure's axes are taken as linear and aligned with the image (a
 * scanned figure rotated by more than a pixel or two over its width should
 * be straightened first). Time is converted with the one interval velocity
 * the curator states, z = v · t / 2 (t two-way, in seconds) — the same
 * constant-velocity conversion as a `constant` velocity model in the engine.
 * Feet are converted with the international foot, 0.3048 m exactly.
 *
 * The upper envelope is the shallowest traced surface at every x (the base
 * where no top covers x), the figure counterpart of the engine's envelope
 * (measurement spec §6) over what was traced.
 */
import type { DepthPoint, DepthProfile } from './schemas/analogues';

export type PixelPoint = [u: number, v: number];

/** Two clicked positions on one axis of the figure (px) and the values printed there. */
export interface AxisReference {
  /** Pixel coordinate along the axis (u for the horizontal scale, v for the vertical one). */
  px: [number, number];
  /** The values read at those two positions (distance, depth or TWT in the figure's unit). */
  value: [number, number];
}

export interface FigureScales {
  x: AxisReference;
  z: AxisReference;
  /** Unit of the horizontal values. */
  lengthUnit: 'm' | 'ft';
  /** What the vertical axis shows: depth (in `lengthUnit`) or two-way time in ms. */
  vertical: 'depth' | 'twt_ms';
  /** Interval velocity (m/s) for a time axis. */
  velocityMs?: number | null;
}

export interface FigureTrace {
  base: PixelPoint[];
  tops: PixelPoint[][];
}

export const FOOT_M = 0.3048;
const MAX_POINTS = 5000;

/** A problem with what was clicked or typed, named by its field (the same paths the form shows). */
export class FigureProfileError extends Error {
  constructor(
    readonly path: string,
    message: string,
  ) {
    super(`${path}: ${message}`);
  }
}

const finite = (v: number) => typeof v === 'number' && Number.isFinite(v);

function linear(ref: AxisReference, path: string): (p: number) => number {
  const [p0, p1] = ref.px;
  const [a0, a1] = ref.value;
  if (![p0, p1].every(finite)) throw new FigureProfileError(`${path}.px`, 'click two points on the scale');
  if (![a0, a1].every(finite)) throw new FigureProfileError(`${path}.value`, 'type the value at both points');
  if (Math.abs(p1 - p0) < 1) throw new FigureProfileError(`${path}.px`, 'the two points must be at least 1 px apart along the scale');
  if (a0 === a1) throw new FigureProfileError(`${path}.value`, 'the two values must differ');
  return (p) => a0 + ((p - p0) * (a1 - a0)) / (p1 - p0);
}

/** Pixel → metres for the figure's scales. */
export function figureConverter(s: FigureScales): (p: PixelPoint) => DepthPoint {
  const lx = linear(s.x, 'scales.x');
  const lz = linear(s.z, 'scales.z');
  const len = s.lengthUnit === 'ft' ? FOOT_M : 1;
  let zOf: (v: number) => number;
  if (s.vertical === 'twt_ms') {
    const vel = s.velocityMs;
    if (vel == null || !finite(vel) || vel < 1000 || vel > 8000) throw new FigureProfileError('scales.velocityMs', 'an interval velocity between 1000 and 8000 m/s is needed for a time axis');
    zOf = (v) => (vel * lz(v)) / 2000;
  } else {
    zOf = (v) => lz(v) * len;
  }
  return ([u, v]) => [lx(u) * len, zOf(v)];
}

const round = (v: number) => Math.round(v * 1000) / 1000;

/** Depth at x on a polyline (any direction), or null where it does not reach x. */
function depthAt(line: readonly DepthPoint[], x: number): number | null {
  let best: number | null = null;
  for (let i = 1; i < line.length; i++) {
    const [x0, z0] = line[i - 1];
    const [x1, z1] = line[i];
    const lo = Math.min(x0, x1);
    const hi = Math.max(x0, x1);
    if (x < lo || x > hi) continue;
    const z = x1 === x0 ? Math.min(z0, z1) : z0 + ((z1 - z0) * (x - x0)) / (x1 - x0);
    if (best === null || z < best) best = z;
  }
  return best;
}

/** The shallowest of `lines` at every vertex x of any of them, sorted by x. */
export function upperEnvelope(lines: readonly (readonly DepthPoint[])[]): DepthPoint[] {
  const xs = [...new Set(lines.flatMap((l) => l.map((p) => p[0])))].sort((a, b) => a - b);
  const out: DepthPoint[] = [];
  for (const x of xs) {
    let z: number | null = null;
    for (const l of lines) {
      const d = depthAt(l, x);
      if (d !== null && (z === null || d < z)) z = d;
    }
    if (z !== null) out.push([x, z]);
  }
  return out;
}

/** The traced figure as a depth profile in metres (base, tops oldest first, upper envelope). */
export function profileFromFigure(trace: FigureTrace, scales: FigureScales): DepthProfile {
  const toM = figureConverter(scales);
  const line = (pts: PixelPoint[], path: string): DepthPoint[] => {
    if (pts.length < 2) throw new FigureProfileError(path, 'trace at least 2 points');
    if (pts.length > MAX_POINTS) throw new FigureProfileError(path, `at most ${MAX_POINTS} points`);
    return pts.map((p) => {
      const [x, z] = toM(p);
      return [round(x), round(z)];
    });
  };
  const base = line(trace.base, 'trace.base');
  const tops = trace.tops.map((t, i) => line(t, `trace.tops.${i}`));
  const envelope = upperEnvelope([base, ...tops]).map(([x, z]) => [round(x), round(z)] as DepthPoint);
  if (envelope.length < 2) throw new FigureProfileError('trace.base', 'the traced surfaces span no distance');
  return { base, tops, envelope };
}
