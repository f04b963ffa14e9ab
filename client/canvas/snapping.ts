/**
 * Snapping for the interpretation canvas: pull a pointer position onto a
 * nearby vertex or polyline end.
 *
 * The radius is given in SCREEN pixels and converted to image pixels through
 * the current zoom (`scale` = screen pixels per image pixel), so the snap
 * feels the same at every zoom level.
 *
 * Speed: each polyline gets a small index (its bounding box plus the boxes of
 * runs of 32 consecutive vertices), cached per points array in a WeakMap.
 * State updates are immutable and share untouched arrays, so only edited
 * polylines are re-indexed. A query skips whole polylines and runs whose box
 * lies beyond the radius; with 20,000 vertices it inspects a few hundred
 * boxes and a handful of vertices.
 */
import { bboxDist2, bboxOf, dist2, type BBox, type Pt } from './geometry';
import type { PolylineTarget } from './actions';
import type { EditorState, Side } from './model';

/** What a snap source stands for, so the caller knows what it snapped to. */
export type SnapRef =
  | { kind: 'polyline'; target: PolylineTarget }
  | { kind: 'margin'; buildupId: string; cycleId: string; side: Side }
  | { kind: 'termination'; buildupId: string; terminationId: string }
  | { kind: 'other'; [k: string]: unknown };

/** A polyline (or a single point) that can be snapped to. Index 0 and the last vertex are its ends. */
export interface SnapSource {
  id: string;
  points: readonly Pt[];
  ref?: SnapRef;
}

export interface SnapHit {
  /** The snapped position (a copy of the vertex). */
  point: Pt;
  sourceId: string;
  ref?: SnapRef;
  /** Vertex index in the source. */
  index: number;
  /** True for the first or last vertex of the source. */
  isEnd: boolean;
  /** Distance in image pixels. */
  distance: number;
  /** Distance in screen pixels at the given scale. */
  screenDistance: number;
}

export interface SnapOptions {
  /** Skip vertices (e.g. the one being dragged). */
  exclude?: (sourceId: string, index: number) => boolean;
}

const CHUNK = 32;

interface LineIndex {
  box: BBox | null;
  chunks: BBox[];
}

const cache = new WeakMap<readonly Pt[], LineIndex>();

function indexOf(points: readonly Pt[]): LineIndex {
  let idx = cache.get(points);
  if (!idx) {
    const chunks: BBox[] = [];
    for (let i = 0; i < points.length; i += CHUNK) chunks.push(bboxOf(points, i, Math.min(i + CHUNK, points.length))!);
    idx = { box: bboxOf(points), chunks };
    cache.set(points, idx);
  }
  return idx;
}

/**
 * Nearest vertex within `radiusPx` screen pixels of `point` (image pixels),
 * preferring polyline ends over plain vertices at equal distance; null when
 * nothing lies within the radius. `scale` is screen pixels per image pixel.
 */
export function snap(
  point: Pt,
  candidates: readonly SnapSource[],
  radiusPx: number,
  scale: number,
  opts: SnapOptions = {},
): SnapHit | null {
  if (!(scale > 0) || !Number.isFinite(scale)) throw new Error('snap: scale must be a finite number > 0');
  if (!(radiusPx >= 0) || !Number.isFinite(radiusPx)) throw new Error('snap: radiusPx must be a finite number ≥ 0');
  const r = radiusPx / scale;
  const r2 = r * r;
  let bestD2 = Infinity;
  let bestEnd = false;
  let best: { src: SnapSource; index: number } | null = null;
  for (const src of candidates) {
    const pts = src.points;
    const n = pts.length;
    if (!n) continue;
    const idx = indexOf(pts);
    if (bboxDist2(idx.box!, point) > r2) continue;
    for (let c = 0; c < idx.chunks.length; c++) {
      const cd = bboxDist2(idx.chunks[c], point);
      if (cd > r2 || cd > bestD2) continue;
      const end = Math.min((c + 1) * CHUNK, n);
      for (let i = c * CHUNK; i < end; i++) {
        const d = dist2(point, pts[i]);
        if (d > r2 || d > bestD2) continue;
        const isEnd = i === 0 || i === n - 1;
        if (d === bestD2 && (bestEnd || !isEnd)) continue;
        if (opts.exclude?.(src.id, i)) continue;
        bestD2 = d;
        bestEnd = isEnd;
        best = { src, index: i };
      }
    }
  }
  if (!best) return null;
  const p = best.src.points[best.index];
  const distance = Math.sqrt(bestD2);
  const hit: SnapHit = {
    point: [p[0], p[1]],
    sourceId: best.src.id,
    index: best.index,
    isEnd: bestEnd,
    distance,
    screenDistance: distance * scale,
  };
  if (best.src.ref) hit.ref = best.src.ref;
  return hit;
}

/**
 * Snap sources for everything traced in the editor state: bases, tops,
 * flanks, Margin pins and Termination stamps. Ids are stable strings
 * (`line:<buildup>/<cycle|->/<kind>`, `margin:…`, `term:…`).
 */
export function snapSourcesFromState(state: EditorState): SnapSource[] {
  const out: SnapSource[] = [];
  for (const b of state.buildups) {
    const line = (target: PolylineTarget, points: readonly Pt[] | null) => {
      if (points && points.length)
        out.push({ id: `line:${b.id}/${target.cycleId ?? '-'}/${target.kind}`, points, ref: { kind: 'polyline', target } });
    };
    line({ buildupId: b.id, kind: 'base' }, b.base);
    for (const c of b.cycles) {
      line({ buildupId: b.id, cycleId: c.id, kind: 'top' }, c.top);
      line({ buildupId: b.id, cycleId: c.id, kind: 'flankLeft' }, c.flankLeft);
      line({ buildupId: b.id, cycleId: c.id, kind: 'flankRight' }, c.flankRight);
      for (const side of ['left', 'right'] as const) {
        const m = side === 'left' ? c.marginLeft : c.marginRight;
        if (m)
          out.push({
            id: `margin:${b.id}/${c.id}/${side}`,
            points: [m],
            ref: { kind: 'margin', buildupId: b.id, cycleId: c.id, side },
          });
      }
    }
    for (const t of b.terminations)
      out.push({ id: `term:${b.id}/${t.id}`, points: [t.at], ref: { kind: 'termination', buildupId: b.id, terminationId: t.id } });
  }
  return out;
}
