/** Helpers shared by the measurement tests: load fixtures, map every point of an interpretation, convert depth geometry to TWT or pixels. */
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  depthToTwt,
  invertCalibration,
  upperEnvelope,
  envelopeAt,
  type Affine,
  type ResolvedVelocityModel,
  type VelocityModel,
  type Point,
} from '../../../shared/measure';

export const FIXTURES = join(dirname(fileURLToPath(import.meta.url)), '../../fixtures/measure');

// eslint-disable-next-line @typescript-eslint/no-explicit-any
export type Doc = any;

export function loadIn(name: string): Doc {
  return JSON.parse(readFileSync(join(FIXTURES, 'in', name), 'utf8'));
}

export const clone = <T>(v: T): T => JSON.parse(JSON.stringify(v));

/** Apply `f(point, x)` to every point of every buildup (base, tops, margins, flanks, terminations). */
export function mapPoints(doc: Doc, f: (p: Point, b: Doc) => Point): Doc {
  const out = clone(doc);
  for (const b of out.buildups) {
    const src = b;
    const m = (p: Point) => f(p, src);
    const pl = (l: Point[] | null | undefined) => (l ? l.map(m) : l);
    b.base = pl(b.base);
    for (const c of b.cycles) {
      c.top = pl(c.top);
      c.marginLeft = m(c.marginLeft);
      c.marginRight = m(c.marginRight);
      c.flankLeft = pl(c.flankLeft);
      c.flankRight = pl(c.flankRight);
    }
    for (const t of b.terminations ?? []) t.at = m(t.at);
  }
  return out;
}

/** Depth envelope of a depth-domain buildup's tops and flanks (input to the buildup model's inverse). */
export function depthEnvelopeOf(b: Doc) {
  const lines: Point[][] = [];
  for (const c of b.cycles) {
    lines.push(c.top);
    if (c.flankLeft) lines.push(c.flankLeft);
    if (c.flankRight) lines.push(c.flankRight);
  }
  return upperEnvelope(lines);
}

/**
 * Convert a depth-domain interpretation to TWT with the inverse of `model`
 * (vertex by vertex), and attach `velocity` (defaults to the model itself).
 */
export function depthDocToTwt(doc: Doc, model: ResolvedVelocityModel, velocity: VelocityModel = model): Doc {
  const envs = new Map<Doc, ReturnType<typeof upperEnvelope>>();
  const out = mapPoints(doc, ([x, z], b) => {
    let env = envs.get(b);
    if (!env) { env = depthEnvelopeOf(b); envs.set(b, env); }
    return [x, depthToTwt(model, z, x, model.kind === 'buildup' ? envelopeAt(env, x) : NaN)];
  });
  out.verticalDomain = 'twt_ms';
  out.velocity = velocity;
  return out;
}

/** Convert a world-coordinate interpretation to pixels through `affine`, with ties at the given world points. */
export function worldDocToPixels(doc: Doc, affine: Affine, tieWorld: Point[], mode: 'affine' | 'axes' = 'affine'): Doc {
  const out = mapPoints(doc, (p) => invertCalibration(affine, p));
  out.coordinates = 'pixels';
  const ties = tieWorld.map((w) => ({ px: invertCalibration(affine, w), world: w }));
  out.calibration = mode === 'affine' ? ties : { mode, ties };
  return out;
}

/** Compare numbers in nested values with a relative+absolute tolerance; returns the first difference or null. */
export function firstDifference(a: unknown, b: unknown, path = '', rel = 1e-9, abs = 1e-6): string | null {
  if (typeof a === 'number' && typeof b === 'number') {
    if (Number.isNaN(a) && Number.isNaN(b)) return null;
    return Math.abs(a - b) <= abs + rel * Math.max(Math.abs(a), Math.abs(b)) ? null : `${path}: ${a} ≠ ${b}`;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) return `${path}: length ${a.length} ≠ ${b.length}`;
    for (let i = 0; i < a.length; i++) {
      const d = firstDifference(a[i], b[i], `${path}[${i}]`, rel, abs);
      if (d) return d;
    }
    return null;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    const ka = Object.keys(a as object).sort();
    const kb = Object.keys(b as object).sort();
    if (ka.join() !== kb.join()) return `${path}: keys ${ka.join(',')} ≠ ${kb.join(',')}`;
    for (const k of ka) {
      const d = firstDifference((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], path ? `${path}.${k}` : k, rel, abs);
      if (d) return d;
    }
    return null;
  }
  return a === b ? null : `${path}: ${JSON.stringify(a)} ≠ ${JSON.stringify(b)}`;
}
