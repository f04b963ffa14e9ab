/**
 * Small geometry helpers for the interpretation canvas. Everything works in
 * image pixels (`u` right, `v` down) on plain `[u, v]` tuples.
 */

/** A point in image pixels: `[u, v]`. */
export type Pt = [number, number];

/** Axis-aligned box in image pixels. */
export interface BBox {
  minU: number;
  minV: number;
  maxU: number;
  maxV: number;
}

/** True when `p` is a 2-tuple of finite numbers. */
export function isPt(p: unknown): p is Pt {
  return (
    Array.isArray(p) &&
    p.length === 2 &&
    typeof p[0] === 'number' &&
    typeof p[1] === 'number' &&
    Number.isFinite(p[0]) &&
    Number.isFinite(p[1])
  );
}

/** Squared Euclidean distance between two points. */
export function dist2(a: Pt, b: Pt): number {
  const du = a[0] - b[0];
  const dv = a[1] - b[1];
  return du * du + dv * dv;
}

/** Bounding box of a list of points, or null when the list is empty. */
export function bboxOf(points: readonly Pt[], from = 0, to = points.length): BBox | null {
  if (to <= from) return null;
  let minU = Infinity;
  let minV = Infinity;
  let maxU = -Infinity;
  let maxV = -Infinity;
  for (let i = from; i < to; i++) {
    const p = points[i];
    if (p[0] < minU) minU = p[0];
    if (p[0] > maxU) maxU = p[0];
    if (p[1] < minV) minV = p[1];
    if (p[1] > maxV) maxV = p[1];
  }
  return { minU, minV, maxU, maxV };
}

/** Squared distance from `p` to the box (0 inside it). */
export function bboxDist2(b: BBox, p: Pt): number {
  const du = p[0] < b.minU ? b.minU - p[0] : p[0] > b.maxU ? p[0] - b.maxU : 0;
  const dv = p[1] < b.minV ? b.minV - p[1] : p[1] > b.maxV ? p[1] - b.maxV : 0;
  return du * du + dv * dv;
}

/** Closest point to `p` on segment `a`–`b`, and the parameter `t` in [0, 1]. */
export function closestOnSegment(p: Pt, a: Pt, b: Pt): { point: Pt; t: number } {
  const du = b[0] - a[0];
  const dv = b[1] - a[1];
  const len2 = du * du + dv * dv;
  if (len2 === 0) return { point: [a[0], a[1]], t: 0 };
  let t = ((p[0] - a[0]) * du + (p[1] - a[1]) * dv) / len2;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  return { point: [a[0] + t * du, a[1] + t * dv], t };
}

/**
 * The segment of a polyline nearest to `p` (for inserting a vertex where the
 * user clicked): `segmentIndex` i means the segment from vertex i to i + 1.
 * Null for polylines with fewer than 2 points.
 */
export function nearestSegment(
  points: readonly Pt[],
  p: Pt,
): { segmentIndex: number; point: Pt; distance: number } | null {
  if (points.length < 2) return null;
  let best: { segmentIndex: number; point: Pt; distance: number } | null = null;
  for (let i = 0; i < points.length - 1; i++) {
    const c = closestOnSegment(p, points[i], points[i + 1]);
    const d = Math.sqrt(dist2(p, c.point));
    if (!best || d < best.distance) best = { segmentIndex: i, point: c.point, distance: d };
  }
  return best;
}

/** Range of `u` covered by a polyline, or null when it is empty. */
export function uRange(points: readonly Pt[]): [number, number] | null {
  const b = bboxOf(points);
  return b ? [b.minU, b.maxU] : null;
}
