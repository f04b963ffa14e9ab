/**
 * Input preparation: validated interpretation → section coordinates (x m,
 * y TWT ms or depth m) ordered for measurement, with the buildup's TWT
 * envelope when the `buildup` velocity model needs it; then conversion of
 * that geometry to the depth domain (x m, z m down) for one velocity set.
 *
 * Horizontal positions never change with the velocity (vertical-ray
 * conversion), so everything that depends on x only (orderings, the envelope
 * sweep plan, envelope TWT at each vertex) is made once here and reused by
 * every Monte Carlo draw.
 *
 * Choices: tops and the base are ordered by x (right-to-left traces are
 * reversed, overhangs flattened); flanks keep their traced order (their
 * regression and arc length do not depend on direction); margin pins keep
 * their own vertical position (they are not snapped to the top).
 */
import type { Interpretation, BuildupInput, DepthContext } from '../schemas/interpretation';
import { applyCalibration, fitCalibration, type Affine, type CalibrationFit, type CalibrationMode, type Tie } from './calibration';
import { envelopeAt, evaluateEnvelope, piecesOf, planEnvelope, type Envelope, type EnvelopePlan } from './envelope';
import { MeasureInputError } from './errors';
import type { Point } from './geometry';
import { linearLawProblem, makeTwtToDepth, type ResolvedVelocityModel, type VelocityModel } from './velocity';

export interface Surface {
  path: string;
  xs: Float64Array;
  ys: Float64Array;
  /** TWT envelope at each vertex (buildup velocity model only), NaN outside it. */
  te: Float64Array | null;
}

export interface PointIn {
  path: string;
  x: number;
  y: number;
  te: number;
}

export interface PreparedBuildup {
  index: number;
  path: string;
  name: string;
  input: BuildupInput;
  base: Surface;
  tops: Surface[];
  flanksL: (Surface | null)[];
  flanksR: (Surface | null)[];
  marginsL: PointIn[];
  marginsR: PointIn[];
  terminations: (PointIn & { type: string })[];
  /** Envelope sources: the tops, then the flanks that were traced. */
  sources: Surface[];
  plan: EnvelopePlan;
  envelopeTwt: Envelope | null;
}

export interface PreparedInterpretation {
  verticalDomain: 'twt_ms' | 'depth_m';
  coordinates: 'world' | 'pixels';
  calibration: CalibrationFit | null;
  /** The velocity model in use (null in the depth domain, where none is needed). */
  velocity: VelocityModel | null;
  toWorld: (p: readonly number[]) => [number, number];
  buildups: PreparedBuildup[];
}

type CalibrationIn = Interpretation['calibration'];

/** Fit the calibration of an interpretation (null for world coordinates). */
export function calibrationOf(coordinates: string, calibration: CalibrationIn): CalibrationFit | null {
  if (coordinates !== 'pixels' || !calibration) return null;
  const ties = (Array.isArray(calibration) ? calibration : calibration.ties) as Tie[];
  const mode: CalibrationMode = Array.isArray(calibration) ? 'affine' : calibration.mode;
  return fitCalibration(ties, mode);
}

/**
 * A surface in section coordinates from input points through `toXY`
 * (identity or calibration). Tops and bases (`order`) are put in increasing
 * x like `orderByX`: reversed when traced right to left, then stably sorted.
 */
function surface(path: string, pts: readonly (readonly number[])[], affine: Affine | null, order: boolean): Surface {
  const n = pts.length;
  let xs = new Float64Array(n);
  let ys = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = pts[i][0];
    const v = pts[i][1];
    if (affine) {
      xs[i] = affine.a * u + affine.b * v + affine.c;
      ys[i] = affine.d * u + affine.e * v + affine.f;
    } else {
      xs[i] = u;
      ys[i] = v;
    }
  }
  if (order && n > 1) {
    if (xs[0] > xs[n - 1]) { xs.reverse(); ys.reverse(); }
    let sorted = true;
    for (let i = 1; i < n; i++) if (xs[i] < xs[i - 1]) { sorted = false; break; }
    if (!sorted) {
      const idx = Array.from({ length: n }, (_, i) => i).sort((p, q) => xs[p] - xs[q] || p - q);
      xs = Float64Array.from(idx, (i) => xs[i]);
      ys = Float64Array.from(idx, (i) => ys[i]);
    }
  }
  return { path, xs, ys, te: null };
}

function prepareBuildup(b: BuildupInput, bi: number, toWorld: (p: readonly number[]) => [number, number], affine: Affine | null, needEnvelope: boolean): PreparedBuildup {
  const path = `buildups[${bi}]`;
  const base = surface(`${path}.base`, b.base, affine, true);
  if (!(base.xs[base.xs.length - 1] > base.xs[0])) throw new MeasureInputError(`${path}.base`, 'needs an x-extent (all its points share one x)');
  const tops = b.cycles.map((c, ci) => surface(`${path}.cycles[${ci}].top`, c.top, affine, true));
  const flanksL = b.cycles.map((c, ci) => (c.flankLeft ? surface(`${path}.cycles[${ci}].flankLeft`, c.flankLeft, affine, false) : null));
  const flanksR = b.cycles.map((c, ci) => (c.flankRight ? surface(`${path}.cycles[${ci}].flankRight`, c.flankRight, affine, false) : null));
  const pt = (p: readonly number[], pp: string): PointIn => {
    const [x, y] = toWorld(p);
    return { path: pp, x, y, te: NaN };
  };
  const marginsL = b.cycles.map((c, ci) => pt(c.marginLeft, `${path}.cycles[${ci}].marginLeft`));
  const marginsR = b.cycles.map((c, ci) => pt(c.marginRight, `${path}.cycles[${ci}].marginRight`));
  marginsL.forEach((l, ci) => {
    const r = marginsR[ci];
    if (!(r.x > l.x)) throw new MeasureInputError(r.path, `must lie to the right of marginLeft (x ${r.x} is not greater than ${l.x})`);
  });
  const terminations = b.terminations.map((t, ti) => ({ ...pt(t.at, `${path}.terminations[${ti}].at`), type: t.type }));
  const sources = [...tops, ...flanksL.filter((f): f is Surface => !!f), ...flanksR.filter((f): f is Surface => !!f)];
  const plan = planEnvelope(piecesOf(sources), (s) => sources[s].xs, sources.length);
  let envelopeTwt: Envelope | null = null;
  if (needEnvelope) {
    envelopeTwt = evaluateEnvelope(plan, sources.map((s) => s.ys));
    const env = envelopeTwt;
    const fill = (s: Surface | null) => {
      if (!s) return;
      const te = new Float64Array(s.xs.length);
      for (let i = 0; i < te.length; i++) te[i] = envelopeAt(env, s.xs[i]);
      s.te = te;
    };
    fill(base);
    tops.forEach(fill);
    flanksL.forEach(fill);
    flanksR.forEach(fill);
    for (const p of [...marginsL, ...marginsR, ...terminations]) p.te = envelopeAt(env, p.x);
  }
  return {
    index: bi,
    path,
    name: b.name && b.name.length ? b.name : `Buildup ${bi + 1}`,
    input: b,
    base,
    tops,
    flanksL,
    flanksR,
    marginsL,
    marginsR,
    terminations,
    sources,
    plan,
    envelopeTwt,
  };
}

/** Prepare a validated interpretation for measurement. Throws MeasureInputError / CalibrationError. */
export function prepare(it: Interpretation | (DepthContext & { buildups: BuildupInput[] })): PreparedInterpretation {
  const calibration = calibrationOf(it.coordinates, it.calibration);
  const toWorld = calibration
    ? (p: readonly number[]) => applyCalibration(calibration.affine, p)
    : (p: readonly number[]) => [p[0], p[1]] as [number, number];
  const velocity = it.verticalDomain === 'twt_ms' ? ((it.velocity ?? null) as VelocityModel | null) : null;
  const needEnvelope = velocity?.kind === 'buildup';
  const buildups = it.buildups.map((b, bi) => prepareBuildup(b, bi, toWorld, calibration?.affine ?? null, needEnvelope));
  if (velocity?.kind === 'linear') {
    // the exponential law must give finite, physical depths over the input's whole TWT range
    let tMax = -Infinity;
    for (const b of buildups) {
      for (const s of [b.base, ...b.sources]) for (let i = 0; i < s.ys.length; i++) if (s.ys[i] > tMax) tMax = s.ys[i];
      for (const p of [...b.marginsL, ...b.marginsR, ...b.terminations]) if (p.y > tMax) tMax = p.y;
    }
    const problem = linearLawProblem(velocity.v0, velocity.k, tMax);
    if (problem) throw new MeasureInputError('velocity.k', problem);
  }
  return { verticalDomain: it.verticalDomain, coordinates: it.coordinates, calibration, velocity, toWorld, buildups };
}

/** A vertical converter (y, envelope TWT) → depth for one velocity set; identity in the depth domain. */
export type Converter = (y: number, te: number) => number;

export function converterFor(p: PreparedInterpretation, resolved: ResolvedVelocityModel | null): Converter {
  if (p.verticalDomain === 'depth_m' || !resolved) return (y) => y;
  return makeTwtToDepth(resolved);
}

export interface DepthLine {
  xs: Float64Array;
  zs: Float64Array;
}

/** Depth of every vertex of a surface; writes into `out` when given (reused buffers in Monte Carlo). */
export function depthOf(s: Surface, conv: Converter, out?: Float64Array): Float64Array {
  const n = s.ys.length;
  const z = out && out.length === n ? out : new Float64Array(n);
  const te = s.te;
  if (te) for (let i = 0; i < n; i++) z[i] = conv(s.ys[i], te[i]);
  else for (let i = 0; i < n; i++) z[i] = conv(s.ys[i], NaN);
  return z;
}

export interface DepthBuildup {
  base: DepthLine;
  tops: DepthLine[];
  flanksL: (DepthLine | null)[];
  flanksR: (DepthLine | null)[];
  marginsL: Point[];
  marginsR: Point[];
  terminations: { type: string; at: Point; path: string }[];
  /** Depths of the envelope sources, in plan order. */
  sourcesZ: Float64Array[];
}

/** Convert one prepared buildup to the depth domain. */
export function toDepth(b: PreparedBuildup, conv: Converter): DepthBuildup {
  const zOf = new Map<Surface, Float64Array>();
  const line = (s: Surface): DepthLine => {
    const zs = depthOf(s, conv);
    zOf.set(s, zs);
    return { xs: s.xs, zs };
  };
  const base = line(b.base);
  const tops = b.tops.map(line);
  const flanksL = b.flanksL.map((f) => (f ? line(f) : null));
  const flanksR = b.flanksR.map((f) => (f ? line(f) : null));
  const pt = (p: PointIn): Point => [p.x, conv(p.y, p.te)];
  return {
    base,
    tops,
    flanksL,
    flanksR,
    marginsL: b.marginsL.map(pt),
    marginsR: b.marginsR.map(pt),
    terminations: b.terminations.map((t) => ({ type: t.type, at: pt(t), path: t.path })),
    sourcesZ: b.sources.map((s) => zOf.get(s)!),
  };
}
