/**
 * Depth profiles of analogues drawn as small SVG plots. Pure: the component
 * only binds the strings these return.
 */
import type { DepthPoint, DepthProfile } from '../../../shared/schemas/analogues';

export interface ProfileFrame {
  /** SVG point lists ("x,y x,y …") of the base, each top (oldest first) and the envelope. */
  base: string;
  tops: string[];
  envelope: string;
  /** Vertical exaggeration of the drawing (1 = true scale). */
  exaggeration: number;
  xMin: number;
  xMax: number;
  zMin: number;
  zMax: number;
}

/**
 * Fit a depth profile (x along the section, z depth down, metres) into a box
 * of `width` × `height` pixels with `pad` around it. Both axes share one scale
 * (true shape) unless the buildup would be flatter than `minFill` of the box
 * height; then depth is exaggerated to fill it and the factor is reported.
 */
export function frameProfile(profile: DepthProfile, width: number, height: number, pad = 8, minFill = 0.5): ProfileFrame {
  const all: DepthPoint[] = [...profile.base, ...profile.envelope, ...profile.tops.flat()];
  let xMin = Infinity;
  let xMax = -Infinity;
  let zMin = Infinity;
  let zMax = -Infinity;
  for (const [x, z] of all) {
    if (x < xMin) xMin = x;
    if (x > xMax) xMax = x;
    if (z < zMin) zMin = z;
    if (z > zMax) zMax = z;
  }
  const w = Math.max(1, width - 2 * pad);
  const h = Math.max(1, height - 2 * pad);
  const dx = xMax - xMin || 1;
  const dz = zMax - zMin || 1;
  const sx = w / dx;
  let sz = Math.min(sx, h / dz);
  if ((dz * sz) / h < minFill) sz = (h * minFill) / dz;
  sz = Math.min(sz, h / dz);
  const exaggeration = sz / sx;
  const top = pad + (h - dz * sz) / 2;
  const pts = (line: DepthPoint[]) =>
    line.map(([x, z]) => `${round(pad + (x - xMin) * sx)},${round(top + (z - zMin) * sz)}`).join(' ');
  return { base: pts(profile.base), tops: profile.tops.map(pts), envelope: pts(profile.envelope), exaggeration, xMin, xMax, zMin, zMax };
}

/**
 * A normalised shape (heights 0…1 at equally spaced x 0…1, as the Look-alikes
 * compare them) as an SVG point list in a `width` × `height` box, height up.
 */
export function shapePoints(shape: readonly number[], width: number, height: number, pad = 6): string {
  if (shape.length < 2) return '';
  const w = width - 2 * pad;
  const h = height - 2 * pad;
  return shape.map((v, i) => `${round(pad + (w * i) / (shape.length - 1))},${round(pad + h * (1 - clamp01(v)))}`).join(' ');
}

/** The largest gap between two normalised shapes (0…1), a plain-words companion to the distance. */
export function largestGap(a: readonly number[], b: readonly number[]): number {
  const n = Math.min(a.length, b.length);
  let g = 0;
  for (let i = 0; i < n; i++) g = Math.max(g, Math.abs(a[i] - b[i]));
  return g;
}

function clamp01(v: number): number {
  return Number.isFinite(v) ? Math.max(0, Math.min(1, v)) : 0;
}

function round(v: number): number {
  return Math.round(v * 10) / 10;
}
