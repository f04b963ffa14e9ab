/**
 * Picking on the interpretation canvas: the object nearest to a point within
 * a radius, in image pixels. Margin pins and Termination stamps win over
 * vertices, vertices over plain segments, so small markers stay clickable on
 * top of dense polylines.
 *
 * Segment search uses per-polyline boxes of runs of 32 segments cached per
 * points array (the state shares untouched arrays), so a pick in 80,000
 * segments inspects a few boxes and a handful of segments.
 */
import type { PolylineKind, PolylineTarget } from '../actions';
import { bboxDist2, closestOnSegment, dist2, type BBox, type Pt } from '../geometry';
import type { EditorState, Side } from '../model';

export type Hit =
  | { kind: 'margin'; buildupId: string; cycleId: string; side: Side; point: Pt; distance: number }
  | { kind: 'termination'; buildupId: string; terminationId: string; point: Pt; distance: number }
  | { kind: 'vertex'; target: PolylineTarget; index: number; point: Pt; distance: number }
  | { kind: 'segment'; target: PolylineTarget; segmentIndex: number; point: Pt; distance: number };

export type HitKind = Hit['kind'];

export interface HitOptions {
  /** Kinds to consider (default: all). */
  kinds?: readonly HitKind[];
  /** Consider only polylines this returns true for (vertices and segments). */
  polyline?: (t: PolylineTarget) => boolean;
}

const CHUNK = 32;
const segIndex = new WeakMap<readonly Pt[], BBox[]>();

/** Boxes of segments [c·32, (c+1)·32): each covers vertices c·32 … (c+1)·32 inclusive. */
function segmentChunks(pts: readonly Pt[]): BBox[] {
  let boxes = segIndex.get(pts);
  if (boxes) return boxes;
  boxes = [];
  for (let s = 0; s < pts.length - 1; s += CHUNK) {
    const end = Math.min(s + CHUNK, pts.length - 1);
    let minU = Infinity, minV = Infinity, maxU = -Infinity, maxV = -Infinity;
    for (let i = s; i <= end; i++) {
      const p = pts[i];
      if (p[0] < minU) minU = p[0];
      if (p[0] > maxU) maxU = p[0];
      if (p[1] < minV) minV = p[1];
      if (p[1] > maxV) maxV = p[1];
    }
    boxes.push({ minU, minV, maxU, maxV });
  }
  segIndex.set(pts, boxes);
  return boxes;
}

/** Every polyline of the state with its target (base, tops, flanks). */
export function* polylinesOf(state: EditorState): Generator<{ target: PolylineTarget; points: readonly Pt[] }> {
  for (const b of state.buildups) {
    if (b.base.length) yield { target: { buildupId: b.id, kind: 'base' }, points: b.base };
    for (const c of b.cycles) {
      for (const kind of ['top', 'flankLeft', 'flankRight'] as const) {
        const pts = c[kind];
        if (pts && pts.length) yield { target: { buildupId: b.id, cycleId: c.id, kind }, points: pts };
      }
    }
  }
}

/** The nearest point on a polyline within `r` image px (segmentIndex -1 for a one-point line). */
export function nearestOnPolyline(
  pts: readonly Pt[],
  p: Pt,
  r: number,
): { segmentIndex: number; point: Pt; distance: number } | null {
  if (pts.length < 2) {
    if (pts.length === 1 && dist2(pts[0], p) <= r * r) return { segmentIndex: -1, point: [pts[0][0], pts[0][1]], distance: Math.sqrt(dist2(pts[0], p)) };
    return null;
  }
  const r2 = r * r;
  let best: { segmentIndex: number; point: Pt; distance: number } | null = null;
  let bestD2 = r2;
  const boxes = segmentChunks(pts);
  for (let c = 0; c < boxes.length; c++) {
    if (bboxDist2(boxes[c], p) > bestD2) continue;
    const end = Math.min((c + 1) * CHUNK, pts.length - 1);
    for (let i = c * CHUNK; i < end; i++) {
      const q = closestOnSegment(p, pts[i], pts[i + 1]);
      const d2 = dist2(p, q.point);
      if (d2 <= bestD2) {
        bestD2 = d2;
        best = { segmentIndex: i, point: q.point, distance: Math.sqrt(d2) };
      }
    }
  }
  return best;
}

/**
 * The object nearest to `p` within `radiusPx` screen pixels at zoom `scale`
 * (screen px per image px), or null.
 */
export function hitTest(state: EditorState, p: Pt, radiusPx: number, scale: number, opts: HitOptions = {}): Hit | null {
  if (!(scale > 0) || !Number.isFinite(scale)) throw new Error('hitTest: scale must be a finite number > 0');
  const r = radiusPx / scale;
  const r2 = r * r;
  const want = (k: HitKind) => !opts.kinds || opts.kinds.includes(k);

  // 1. Margin pins and Termination stamps.
  let marker: Hit | null = null;
  let markerD2 = r2;
  for (const b of state.buildups) {
    if (want('margin'))
      for (const c of b.cycles)
        for (const side of ['left', 'right'] as const) {
          const m = side === 'left' ? c.marginLeft : c.marginRight;
          if (!m) continue;
          const d2 = dist2(m, p);
          if (d2 <= markerD2) {
            markerD2 = d2;
            marker = { kind: 'margin', buildupId: b.id, cycleId: c.id, side, point: [m[0], m[1]], distance: Math.sqrt(d2) };
          }
        }
    if (want('termination'))
      for (const t of b.terminations) {
        const d2 = dist2(t.at, p);
        if (d2 <= markerD2) {
          markerD2 = d2;
          marker = { kind: 'termination', buildupId: b.id, terminationId: t.id, point: [t.at[0], t.at[1]], distance: Math.sqrt(d2) };
        }
      }
  }
  if (marker) return marker;

  // 2. Vertices, then 3. segments (one pass over the polylines).
  let vertex: Hit | null = null;
  let vertexD2 = r2;
  let seg: Hit | null = null;
  let segD = r;
  const wantV = want('vertex');
  const wantS = want('segment');
  if (!wantV && !wantS) return null;
  for (const { target, points } of polylinesOf(state)) {
    if (opts.polyline && !opts.polyline(target)) continue;
    const near = nearestOnPolyline(points, p, r);
    if (!near) continue;
    if (wantV) {
      // The nearest vertex lies at one end of the nearest segment, or elsewhere within r:
      // check the vertices of the chunk boxes near p.
      const boxes = segmentChunks(points);
      for (let c = 0; c < Math.max(1, boxes.length); c++) {
        if (boxes.length && bboxDist2(boxes[c], p) > vertexD2) continue;
        const end = Math.min((c + 1) * CHUNK, points.length - 1);
        for (let i = c * CHUNK; i <= end; i++) {
          const d2 = dist2(points[i], p);
          // Strictly nearer wins; at a tie keep the earlier find.
          if (d2 < vertexD2 || (d2 === vertexD2 && !vertex)) {
            vertexD2 = d2;
            vertex = { kind: 'vertex', target, index: i, point: [points[i][0], points[i][1]], distance: Math.sqrt(d2) };
          }
        }
      }
    }
    if (wantS && near.segmentIndex >= 0 && near.distance <= segD) {
      segD = near.distance;
      seg = { kind: 'segment', target, segmentIndex: near.segmentIndex, point: near.point, distance: near.distance };
    }
  }
  return vertex ?? seg;
}

/** Polyline kind → the label used in messages. */
export const POLYLINE_LABEL: Record<PolylineKind, string> = {
  base: 'base',
  top: 'cycle top',
  flankLeft: 'left flank',
  flankRight: 'right flank',
};
