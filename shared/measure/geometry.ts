/**
 * Plane geometry helpers for section profiles.
 *
 * Units: whatever the caller's points carry (metres in the depth domain; any
 * consistent unit works). `x` to the right, `z` down. Angles in degrees.
 *
 * Sources: shoelace formula and polygon centroid (standard analytic geometry,
 * e.g. Bourke, "Calculating the area and centroid of a polygon", 1988);
 * orthogonal (total least squares) regression through the principal axis of
 * the point cloud (Pearson 1901, "On lines and planes of closest fit").
 */

export type Point = [number, number];

/**
 * Order a polyline by increasing x: reversed when traced right-to-left, then
 * stably sorted, so points sharing an x (a vertical segment) keep their traced
 * order. A polyline that folds back (an overhang) is thereby flattened into a
 * function of x — the engine treats tops and bases as functions of x.
 */
export function orderByX(points: readonly (readonly [number, number])[]): Point[] {
  const pts = points.map((p) => [p[0], p[1]] as Point);
  if (pts.length > 1 && pts[0][0] > pts[pts.length - 1][0]) pts.reverse();
  let sorted = true;
  for (let i = 1; i < pts.length; i++) if (pts[i][0] < pts[i - 1][0]) { sorted = false; break; }
  if (!sorted) {
    const idx = pts.map((_, i) => i);
    idx.sort((a, b) => pts[a][0] - pts[b][0] || a - b);
    return idx.map((i) => pts[i]);
  }
  return pts;
}

/**
 * Index `i` of the segment [xs[i], xs[i+1]] used to evaluate `x` in a
 * non-decreasing array `xs` (binary search, O(log n)): the last `i` with
 * `xs[i] <= x`, clamped to [0, n-2]. At a vertical step (equal xs) the value
 * after the step is used (right-hand limit).
 */
export function segmentIndex(xs: ArrayLike<number>, x: number): number {
  const n = xs.length;
  if (n < 2) return 0;
  let lo = 0;
  let hi = n - 1;
  if (x < xs[0]) return 0;
  if (x >= xs[n - 1]) {
    // last segment that ends at xs[n-1]
    return n - 2;
  }
  // invariant: xs[lo] <= x < xs[hi]
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid;
    else hi = mid;
  }
  return lo;
}

/**
 * Linear interpolation of z at `x` along a polyline given by non-decreasing
 * `xs` and `zs`; outside the x-range the nearest end value is returned.
 * At a vertical step the value after the step is returned.
 */
export function interpolateAt(xs: ArrayLike<number>, zs: ArrayLike<number>, x: number): number {
  const n = xs.length;
  if (n === 0) return NaN;
  if (x <= xs[0]) {
    // leftmost: the last vertex at xs[0] when x equals it (value after a step), else the end value
    if (x < xs[0]) return zs[0];
    let i = 0;
    while (i + 1 < n && xs[i + 1] === xs[0]) i++;
    return zs[i];
  }
  if (x >= xs[n - 1]) return zs[n - 1];
  const i = segmentIndex(xs, x);
  const x0 = xs[i];
  const x1 = xs[i + 1];
  if (x1 === x0) return zs[i + 1];
  const w = (x - x0) / (x1 - x0);
  return zs[i] + w * (zs[i + 1] - zs[i]);
}

/** `interpolateAt` on a polyline of points already ordered by x. */
export function interpolatePolyline(points: readonly Point[], x: number): number {
  return interpolateAt(points.map((p) => p[0]), points.map((p) => p[1]), x);
}

/** Signed shoelace area (positive when the vertices run counter-clockwise in an x-right, y-up frame). */
export function signedArea(points: readonly Point[]): number {
  const n = points.length;
  if (n < 3) return 0;
  // shift to the first vertex to limit cancellation with large coordinates
  const ox = points[0][0];
  const oy = points[0][1];
  let s = 0;
  for (let i = 0; i < n; i++) {
    const a = points[i];
    const b = points[(i + 1) % n];
    s += (a[0] - ox) * (b[1] - oy) - (b[0] - ox) * (a[1] - oy);
  }
  return s / 2;
}

/** Unsigned polygon area by the shoelace formula. */
export function shoelaceArea(points: readonly Point[]): number {
  return Math.abs(signedArea(points));
}

/** Area centroid of a simple polygon (shoelace-weighted). Returns NaNs for a degenerate polygon. */
export function polygonCentroid(points: readonly Point[]): Point {
  const n = points.length;
  const ox = points[0][0];
  const oy = points[0][1];
  let a = 0;
  let cx = 0;
  let cy = 0;
  for (let i = 0; i < n; i++) {
    const x0 = points[i][0] - ox;
    const y0 = points[i][1] - oy;
    const x1 = points[(i + 1) % n][0] - ox;
    const y1 = points[(i + 1) % n][1] - oy;
    const cr = x0 * y1 - x1 * y0;
    a += cr;
    cx += (x0 + x1) * cr;
    cy += (y0 + y1) * cr;
  }
  a /= 2;
  return [ox + cx / (6 * a), oy + cy / (6 * a)];
}

/** Total length of a polyline. */
export function polylineLength(points: readonly Point[]): number {
  let s = 0;
  for (let i = 1; i < points.length; i++) s += Math.hypot(points[i][0] - points[i - 1][0], points[i][1] - points[i - 1][1]);
  return s;
}

/**
 * Resample a polyline at `count` points equally spaced in arc length, both
 * ends included (count ≥ 2). O(n + count). Zero-length polylines return
 * `count` copies of the first point.
 */
export function resampleByArcLength(points: readonly Point[], count: number): Point[] {
  const n = points.length;
  const m = Math.max(2, Math.floor(count));
  const cum = new Float64Array(n);
  for (let i = 1; i < n; i++) cum[i] = cum[i - 1] + Math.hypot(points[i][0] - points[i - 1][0], points[i][1] - points[i - 1][1]);
  const total = cum[n - 1];
  const out: Point[] = [];
  if (!(total > 0)) {
    for (let k = 0; k < m; k++) out.push([points[0][0], points[0][1]]);
    return out;
  }
  let seg = 0;
  for (let k = 0; k < m; k++) {
    const s = k === m - 1 ? total : (total * k) / (m - 1);
    while (seg < n - 2 && cum[seg + 1] < s) seg++;
    const len = cum[seg + 1] - cum[seg];
    const w = len > 0 ? (s - cum[seg]) / len : 0;
    const a = points[seg];
    const b = points[seg + 1];
    out.push([a[0] + w * (b[0] - a[0]), a[1] + w * (b[1] - a[1])]);
  }
  return out;
}

export interface LineFit {
  /** Mean of the points. */
  centroid: Point;
  /** Direction of the fitted line, degrees from +x in (-90, 90] (z down, so positive = descending to the right). */
  directionDeg: number;
  /** Angle of the line below the horizontal, 0–90 degrees, regardless of facing. */
  dipDeg: number;
}

/**
 * Orthogonal (total least squares) regression line: the major axis of the
 * points' covariance, which minimises perpendicular distances and so treats
 * x and z alike (a vertical flank gives 90°, which ordinary regression of z
 * on x cannot). Returns null for fewer than 2 distinct points.
 */
export function orthogonalRegression(points: readonly Point[]): LineFit | null {
  const n = points.length;
  if (n < 2) return null;
  let mx = 0;
  let mz = 0;
  for (const p of points) { mx += p[0]; mz += p[1]; }
  mx /= n; mz /= n;
  let sxx = 0;
  let szz = 0;
  let sxz = 0;
  for (const p of points) {
    const dx = p[0] - mx;
    const dz = p[1] - mz;
    sxx += dx * dx; szz += dz * dz; sxz += dx * dz;
  }
  if (!(sxx + szz > 0)) return null;
  // major axis angle: tan(2θ) = 2 sxz / (sxx − szz)
  let theta = 0.5 * Math.atan2(2 * sxz, sxx - szz) * (180 / Math.PI);
  if (theta <= -90) theta += 180;
  if (theta > 90) theta -= 180;
  const dip = Math.min(90, Math.abs(theta));
  return { centroid: [mx, mz], directionDeg: theta, dipDeg: dip };
}

/** Angle below horizontal (0–90°) of the steepest non-degenerate segment; null if none. */
export function steepestSegmentDeg(points: readonly Point[]): number | null {
  let best: number | null = null;
  for (let i = 1; i < points.length; i++) {
    const dx = Math.abs(points[i][0] - points[i - 1][0]);
    const dz = Math.abs(points[i][1] - points[i - 1][1]);
    if (dx === 0 && dz === 0) continue;
    const a = Math.atan2(dz, dx) * (180 / Math.PI);
    if (best === null || a > best) best = a;
  }
  return best;
}

/**
 * Split a polyline into runs that are strictly monotone in x, each returned
 * as vertex indices ordered by increasing x. Vertical or zero-length segments
 * end a run (they have no width to contribute to a function of x).
 */
export function monotoneRuns(xs: ArrayLike<number>): number[][] {
  const runs: number[][] = [];
  const n = xs.length;
  let start = 0;
  let dir = 0;
  const close = (end: number) => {
    if (end > start) {
      const r: number[] = [];
      for (let i = start; i <= end; i++) r.push(i);
      if (dir < 0) r.reverse();
      runs.push(r);
    }
  };
  for (let i = 1; i < n; i++) {
    const d = Math.sign(xs[i] - xs[i - 1]);
    if (d === 0) {
      close(i - 1);
      start = i;
      dir = 0;
      continue;
    }
    if (dir === 0) { dir = d; continue; }
    if (d !== dir) {
      close(i - 1);
      start = i - 1;
      dir = d;
    }
  }
  close(n - 1);
  return runs;
}

/** Degrees ↔ radians. */
export const DEG = 180 / Math.PI;
