/**
 * The depth view of a TWT section: every image column resampled from two-way
 * time to depth with the engine's own conversion (`createDepthConverter` of
 * shared/measure: the section's affine calibration, then the velocity model's
 * mode values along a vertical ray, measurement-spec §3). Pure TypeScript:
 * the `section-depth` job (server) resamples the image with it, and the
 * browser maps the interpretation objects (kept in image pixels) onto the
 * depth image and pointer positions back.
 *
 * Coordinates:
 * - image pixels `[u, v]` (the stored unit; pixel row i covers v ∈ [i, i+1));
 * - depth-view pixels `[u, w]`: the same u, and w = (z − z0) / dz, so depth-view
 *   row j covers z ∈ [z0 + j·dz, z0 + (j+1)·dz).
 *
 * The basis (what the conversion depends on) is an engine depth context in
 * pixel coordinates: the calibration Ties, the velocity model and, for the
 * `buildup` model only, the measurable buildups whose upper envelope marks
 * where the carbonate velocity starts (as for the cursor readout and the
 * Ruler). The job stores the basis it used, so the browser maps with exactly
 * the conversion the tiles were made with.
 *
 * Choices (Cayline's own): the depth image keeps the image's width and row
 * count (dz = depth range / rows); z0 is the shallowest depth of the top row,
 * the bottom row reaches the deepest depth of the bottom row; depths a column
 * does not cover are painted with `FILL`. Within one source pixel the depth is
 * interpolated linearly between the pixel's edges (the conversion is smooth,
 * so the error is a tiny fraction of a pixel). Samples are taken between pixel
 * centres with linear interpolation; where a depth row squeezes more than one
 * source row, the source rows it covers are averaged (sampleSpan), so thin
 * reflectors are never skipped.
 */
import { createDepthConverter, type DepthConverter } from '../measure/index';
import { MeasureInputError } from '../measure/errors';

/** The engine depth context the view is built from (coordinates in image pixels, TWT section). */
export interface DepthViewBasis {
  verticalDomain: 'twt_ms';
  coordinates: 'pixels';
  calibration: { px: [number, number]; world: [number, number] }[];
  velocity: unknown;
  buildups?: unknown[];
}

/** The depth axis of the depth image: row j covers [z0 + j·dz, z0 + (j+1)·dz) metres. */
export interface DepthAxis {
  width: number;
  height: number;
  z0: number;
  dz: number;
}

/** Grey value painted where a column has no data at that depth (above its top or below its bottom). */
export const FILL = 255;

export class DepthViewError extends MeasureInputError {}

/** The engine's converter for a basis (throws MeasureInputError naming the bad field). */
export function basisConverter(basis: DepthViewBasis): DepthConverter {
  return createDepthConverter(basis);
}

/** Depth (m) at image pixel [u, v] through the engine. */
const zAt = (conv: DepthConverter, u: number, v: number) => conv.toDepth([u, v])[1];

/**
 * Depths at the pixel edges v = 0, 1, …, height of the column at `u` (image
 * px), into `out` (height + 1 values). Refuses a column where depth does not
 * grow downwards (a calibration with TWT growing upwards).
 */
export function columnEdgeDepths(conv: DepthConverter, u: number, height: number, out: Float64Array = new Float64Array(height + 1)): Float64Array {
  for (let k = 0; k <= height; k++) out[k] = zAt(conv, u, k);
  for (let k = 1; k <= height; k++) {
    if (!(out[k] > out[k - 1])) {
      throw new DepthViewError('calibration', `depth must grow downwards in the image, but at column u = ${u.toFixed(1)} it does not between rows ${k - 1} and ${k} (check the Ties' TWT values)`);
    }
  }
  return out;
}

/** Whether depth depends on v only (no shear in the calibration, no envelope): one column stands for all. */
export function columnsAlike(basis: DepthViewBasis, conv: DepthConverter, width: number, height: number): boolean {
  if (basis.buildups && basis.buildups.length) return false;
  // the affine map's t does not depend on u, and x does not depend on v: compare corners
  const probes: [number, number][] = [[0, 0], [0, height], [width, 0], [width, height]];
  const [a, b, c, d] = probes.map(([u, v]) => conv.toWorld([u, v]));
  const tol = 1e-9 * (1 + Math.abs(a[1]) + Math.abs(b[1]));
  return Math.abs(a[1] - c[1]) <= tol && Math.abs(b[1] - d[1]) <= tol;
}

/** The depth axis of a `width` × `height` image: shallowest top to deepest bottom over all columns, same row count. */
export function depthAxisFor(basis: DepthViewBasis, width: number, height: number): DepthAxis {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 1)) throw new DepthViewError('image', 'needs a width ≥ 1 and a height ≥ 2 pixels');
  const conv = basisConverter(basis);
  const alike = columnsAlike(basis, conv, width, height);
  const cols = alike ? [0.5] : columnCentres(width);
  let top = Infinity;
  let bottom = -Infinity;
  for (const u of cols) {
    const z0 = zAt(conv, u, 0);
    const z1 = zAt(conv, u, height);
    if (!(z1 > z0)) throw new DepthViewError('calibration', `depth must grow downwards in the image (column u = ${u.toFixed(1)}: ${z0.toFixed(1)} m at the top, ${z1.toFixed(1)} m at the bottom)`);
    if (z0 < top) top = z0;
    if (z1 > bottom) bottom = z1;
  }
  if (!Number.isFinite(top) || !Number.isFinite(bottom)) throw new DepthViewError('velocity', 'the conversion gives depths that are not finite');
  return { width, height, z0: top, dz: (bottom - top) / height };
}

function columnCentres(width: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < width; i++) out.push(i + 0.5);
  return out;
}

/**
 * For the column at `u`: the source row coordinate v (continuous image px) of
 * every depth-view row centre j + 0.5, j = 0 … axis.height − 1, into `out`;
 * NaN where the column has no data at that depth. `edges` are the column's
 * edge depths (columnEdgeDepths).
 */
export function sourceRowsOf(edges: Float64Array, axis: DepthAxis, out: Float64Array = new Float64Array(axis.height)): Float64Array {
  const n = edges.length - 1; // source rows
  let k = 0;
  for (let j = 0; j < axis.height; j++) {
    const z = axis.z0 + (j + 0.5) * axis.dz;
    if (z < edges[0] || z > edges[n]) {
      out[j] = NaN;
      continue;
    }
    while (k < n - 1 && edges[k + 1] <= z) k++;
    const span = edges[k + 1] - edges[k];
    out[j] = k + (span > 0 ? (z - edges[k]) / span : 0);
  }
  return out;
}

/**
 * Resample one column: `src(v)` gives the source value of pixel row v (0 …
 * height − 1, one channel); the value at a continuous v is interpolated
 * linearly between pixel centres (v − 0.5), clamped at the ends.
 */
export function sampleAt(rowCoord: number, height: number, src: (row: number) => number): number {
  if (rowCoord !== rowCoord) return FILL;
  const f = rowCoord - 0.5;
  if (f <= 0) return src(0);
  if (f >= height - 1) return src(height - 1);
  const i = Math.floor(f);
  const t = f - i;
  return src(i) * (1 - t) + src(i + 1) * t;
}

/**
 * The value of a depth-view pixel whose row centre comes from source row
 * coordinate `rowCoord` and which covers `span` source rows (the distance
 * between its neighbours' source rows, halved): where it covers more than one
 * source row (the depth row squeezes several TWT rows) the source pixels are
 * averaged over [rowCoord − span/2, rowCoord + span/2], weighted by overlap, so
 * a thin reflector is not skipped; otherwise as `sampleAt`.
 */
export function sampleSpan(rowCoord: number, span: number, height: number, src: (row: number) => number): number {
  if (rowCoord !== rowCoord) return FILL;
  if (!(span > 1)) return sampleAt(rowCoord, height, src);
  const a = Math.max(0, rowCoord - span / 2);
  const b = Math.min(height, rowCoord + span / 2);
  if (!(b > a)) return sampleAt(rowCoord, height, src);
  let sum = 0;
  for (let k = Math.floor(a); k < b; k++) {
    const w = Math.min(b, k + 1) - Math.max(a, k);
    if (w > 0) sum += w * src(k);
  }
  return sum / (b - a);
}

/** Source rows a depth row covers: half the distance between its neighbours' source rows (one-sided at the ends; 0 when unknown). */
export function spanAt(rows: Float64Array, j: number): number {
  const r = rows[j];
  if (r !== r) return 0;
  const p = j > 0 ? rows[j - 1] : NaN;
  const n = j + 1 < rows.length ? rows[j + 1] : NaN;
  if (p === p && n === n) return (n - p) / 2;
  if (n === n) return n - r;
  if (p === p) return r - p;
  return 0;
}

/** Image px ↔ depth-view px for one basis and axis (a pure mapping, the same in the job and the browser). */
export interface DepthViewMap {
  axis: DepthAxis;
  /** Image pixel [u, v] → depth-view pixel [u, w]. */
  toView(p: readonly number[]): [number, number];
  /** Depth-view pixel [u, w] → image pixel [u, v] (the inverse of toView, to 1e-6 px). */
  toImage(p: readonly number[]): [number, number];
  /** The engine's converter of the basis (image px → section coordinates / depth). */
  converter: DepthConverter;
  /** The same readout over depth-view pixels: toWorld → [x m, z m], toDepth → [x m, z m]. */
  viewConverter: DepthConverter;
}

export function createDepthViewMap(basis: DepthViewBasis, axis: DepthAxis): DepthViewMap {
  const conv = basisConverter(basis);
  const { z0, dz, height } = axis;
  if (!(dz > 0)) throw new DepthViewError('axis.dz', 'must be > 0');
  const toView = (p: readonly number[]): [number, number] => [p[0], (zAt(conv, p[0], p[1]) - z0) / dz];
  const toImage = (p: readonly number[]): [number, number] => {
    const u = p[0];
    const want = z0 + p[1] * dz;
    // depth grows with v (checked when the axis was made): bracket, then bisect / secant
    let lo = -height;
    let hi = 2 * height;
    let zlo = zAt(conv, u, lo);
    let zhi = zAt(conv, u, hi);
    for (let i = 0; i < 30 && zlo > want; i++) {
      hi = lo;
      zhi = zlo;
      lo -= 2 * height;
      zlo = zAt(conv, u, lo);
    }
    for (let i = 0; i < 30 && zhi < want; i++) {
      lo = hi;
      zlo = zhi;
      hi += 2 * height;
      zhi = zAt(conv, u, hi);
    }
    for (let i = 0; i < 200 && hi - lo > 1e-7; i++) {
      // regula falsi step, falling back to bisection when it stalls near an end
      let mid = zhi > zlo ? lo + ((want - zlo) / (zhi - zlo)) * (hi - lo) : (lo + hi) / 2;
      if (!(mid > lo + 1e-3 * (hi - lo) && mid < hi - 1e-3 * (hi - lo))) mid = (lo + hi) / 2;
      const zm = zAt(conv, u, mid);
      if (zm < want) {
        lo = mid;
        zlo = zm;
      } else {
        hi = mid;
        zhi = zm;
      }
    }
    return [u, (lo + hi) / 2];
  };
  const viewConverter: DepthConverter = {
    toWorld: (q) => viewConverter.toDepth(q),
    toDepth: (q) => {
      const img = toImage(q);
      return [conv.toWorld(img)[0], z0 + q[1] * dz];
    },
  };
  return { axis, toView, toImage, converter: conv, viewConverter };
}

/**
 * The source rows of every column of a `axis.width`-wide image, one column at
 * a time (`sourceRows(i)`): when depth depends on v only (columnsAlike) the
 * one profile is computed once and shared; otherwise each column is converted
 * through the engine. The job resamples pixel values with these rows; the unit
 * tests check them against the engine.
 */
export class ColumnResampler {
  private readonly conv: DepthConverter;
  private readonly alike: boolean;
  private shared: Float64Array | null = null;
  private readonly edges: Float64Array;
  private readonly rows: Float64Array;

  constructor(
    basis: DepthViewBasis,
    readonly axis: DepthAxis,
    readonly sourceHeight: number,
  ) {
    this.conv = basisConverter(basis);
    this.alike = columnsAlike(basis, this.conv, axis.width, sourceHeight);
    this.edges = new Float64Array(sourceHeight + 1);
    this.rows = new Float64Array(axis.height);
    if (this.alike) this.shared = sourceRowsOf(columnEdgeDepths(this.conv, 0.5, sourceHeight, this.edges), axis, new Float64Array(axis.height));
  }

  /** Source row coordinate (continuous v, NaN = no data) of every depth row of column i; valid until the next call. */
  sourceRows(i: number): Float64Array {
    if (this.shared) return this.shared;
    return sourceRowsOf(columnEdgeDepths(this.conv, i + 0.5, this.sourceHeight, this.edges), this.axis, this.rows);
  }

  /** Whether all columns share one profile. */
  get sharedColumns(): boolean {
    return this.alike;
  }
}
