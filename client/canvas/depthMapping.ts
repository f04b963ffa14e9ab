/**
 * Drawing the interpretation in the depth view: the records stay in image
 * pixels (the store, the tools, the server never see anything else); the
 * overlays get copies whose points are mapped to depth-view pixels with the
 * depth view's pure map (shared/depth-view createDepthViewMap). Copies are
 * cached per record and map, so an untouched buildup keeps the very same
 * mapped arrays (and Konva redraws nothing) while another one is edited.
 */
import type { EditorBuildup, EditorCycle, Pt } from './model';

export type PointMap = (p: readonly number[]) => [number, number];

const buildupCache = new WeakMap<PointMap, WeakMap<EditorBuildup, EditorBuildup>>();
const lineCache = new WeakMap<PointMap, WeakMap<readonly Pt[], Pt[]>>();

function line(map: PointMap, pts: readonly Pt[]): Pt[] {
  let byLine = lineCache.get(map);
  if (!byLine) lineCache.set(map, (byLine = new WeakMap()));
  let out = byLine.get(pts);
  if (!out) {
    out = pts.map((p) => map(p) as Pt);
    byLine.set(pts, out);
  }
  return out;
}

const pt = (map: PointMap, p: Pt | null): Pt | null => (p ? (map(p) as Pt) : null);

/** A buildup with every point mapped (same ids, names and order). */
export function mapBuildup(map: PointMap, b: EditorBuildup): EditorBuildup {
  let byBuildup = buildupCache.get(map);
  if (!byBuildup) buildupCache.set(map, (byBuildup = new WeakMap()));
  let out = byBuildup.get(b);
  if (!out) {
    out = {
      ...b,
      base: line(map, b.base),
      cycles: b.cycles.map(
        (c): EditorCycle => ({
          ...c,
          top: line(map, c.top),
          marginLeft: pt(map, c.marginLeft),
          marginRight: pt(map, c.marginRight),
          flankLeft: c.flankLeft ? line(map, c.flankLeft) : null,
          flankRight: c.flankRight ? line(map, c.flankRight) : null,
        }),
      ),
      terminations: b.terminations.map((t) => ({ ...t, at: map(t.at) as Pt })),
    };
    byBuildup.set(b, out);
  }
  return out;
}

export function mapBuildups(map: PointMap | null, bs: readonly EditorBuildup[]): readonly EditorBuildup[] {
  return map ? bs.map((b) => mapBuildup(map, b)) : bs;
}

const isPoint = (v: unknown): v is [number, number] => Array.isArray(v) && v.length === 2 && typeof v[0] === 'number' && typeof v[1] === 'number';

/** Keys of a tool preview that hold numbers, not positions. */
const NOT_POSITIONS = new Set(['reading', 'message', 'kind', 'target', 'type', 'cycleIndex', 'side', 'fixed', 'index', 'vertex']);

/**
 * A tool preview (or any plain object) with every position mapped: a
 * `[number, number]` pair, or a list of them, anywhere in it (rubber band,
 * snap rings, ghosts, Ruler ends, follow previews); readings and labels kept.
 */
export function mapPositions<T>(map: PointMap | null, value: T): T {
  if (!map) return value;
  const walk = (v: unknown): unknown => {
    if (isPoint(v)) return map(v);
    if (Array.isArray(v)) return v.map(walk);
    if (v && typeof v === 'object') {
      const out: Record<string, unknown> = {};
      for (const [k, x] of Object.entries(v)) out[k] = NOT_POSITIONS.has(k) ? x : walk(x);
      return out;
    }
    return v;
  };
  return walk(value) as T;
}
