/**
 * Where a Note pin sits. A pin is anchored either to a point of the section
 * image (`[u, v]` pixels) or to an object of a buildup interpretation; an
 * object pin's position is derived from the object, so it follows every edit:
 *
 * - the buildup: its crest (the shallowest point, smallest v, of its youngest
 *   traced top; without tops, the middle of its base);
 * - a cycle top or a flank: the point halfway along the polyline (arc length);
 * - a Margin pin or a Termination stamp: its own point.
 *
 * The same functions run on the stored geometry (server: the last known
 * position is kept when a buildup is saved) and on the editor records
 * (browser: the pin moves while the object is dragged).
 */
import { storedCycleId, storedTerminationId, type BuildupGeometry, type EditorBuildup, type Pt } from '../editor/model';

export const NOTE_OBJECT_KINDS = ['buildup', 'top', 'marginLeft', 'marginRight', 'flankLeft', 'flankRight', 'termination'] as const;
export type NoteObjectKind = (typeof NOTE_OBJECT_KINDS)[number];

/** What an object anchor names (ids are the stored/editor ids of cycles and stamps). */
export interface NoteObjectRef {
  buildupId: number;
  object: NoteObjectKind;
  /** For top, margins and flanks. */
  cycleId?: string;
  /** For a Termination stamp. */
  terminationId?: string;
}

/** Point halfway along a polyline by arc length (its only point for one point; null when empty). */
export function midAlong(pts: readonly Pt[] | null | undefined): Pt | null {
  if (!pts || !pts.length) return null;
  if (pts.length === 1) return [pts[0][0], pts[0][1]];
  let total = 0;
  for (let i = 1; i < pts.length; i++) total += Math.hypot(pts[i][0] - pts[i - 1][0], pts[i][1] - pts[i - 1][1]);
  if (total === 0) return [pts[0][0], pts[0][1]];
  let left = total / 2;
  for (let i = 1; i < pts.length; i++) {
    const a = pts[i - 1];
    const b = pts[i];
    const d = Math.hypot(b[0] - a[0], b[1] - a[1]);
    if (d >= left && d > 0) {
      const f = left / d;
      return [a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1])];
    }
    left -= d;
  }
  const last = pts[pts.length - 1];
  return [last[0], last[1]];
}

/** The shallowest point (smallest v; the first of equals) of a polyline. */
function crestOf(pts: readonly Pt[]): Pt {
  let best = pts[0];
  for (const p of pts) if (p[1] < best[1]) best = p;
  return [best[0], best[1]];
}

/** A buildup's parts in one neutral shape (stored geometry or editor record). */
interface Parts {
  base: readonly Pt[];
  cycles: { id: string; top: readonly Pt[]; marginLeft: Pt | null; marginRight: Pt | null; flankLeft: readonly Pt[] | null; flankRight: readonly Pt[] | null }[];
  terminations: { id: string; at: Pt }[];
}

function partsOfGeometry(g: BuildupGeometry): Parts {
  return {
    base: g.base,
    cycles: [...g.cycles]
      .sort((a, b) => a.index - b.index)
      .map((c) => ({ id: storedCycleId(c), top: c.top, marginLeft: c.marginLeft ?? null, marginRight: c.marginRight ?? null, flankLeft: c.flankLeft ?? null, flankRight: c.flankRight ?? null })),
    terminations: g.terminations.map((t, i) => ({ id: storedTerminationId(t, i), at: t.at })),
  };
}

function partsOfEditor(b: EditorBuildup): Parts {
  return { base: b.base, cycles: b.cycles, terminations: b.terminations };
}

function positionIn(p: Parts, ref: Omit<NoteObjectRef, 'buildupId'>): Pt | null {
  switch (ref.object) {
    case 'buildup': {
      for (let i = p.cycles.length - 1; i >= 0; i--) if (p.cycles[i].top.length) return crestOf(p.cycles[i].top);
      return midAlong(p.base);
    }
    case 'termination': {
      const t = p.terminations.find((x) => x.id === ref.terminationId);
      return t ? [t.at[0], t.at[1]] : null;
    }
    default: {
      const c = p.cycles.find((x) => x.id === ref.cycleId);
      if (!c) return null;
      if (ref.object === 'marginLeft' || ref.object === 'marginRight') {
        const m = c[ref.object];
        return m ? [m[0], m[1]] : null;
      }
      return midAlong(c[ref.object]);
    }
  }
}

/** Position of the object in a buildup's stored geometry, or null when the object is gone. */
export function anchorPositionInGeometry(g: BuildupGeometry, ref: Omit<NoteObjectRef, 'buildupId'>): Pt | null {
  return positionIn(partsOfGeometry(g), ref);
}

/** Position of the object in an editor buildup, or null when the object is gone (or not drawn yet). */
export function anchorPositionInEditor(b: EditorBuildup, ref: Omit<NoteObjectRef, 'buildupId'>): Pt | null {
  return positionIn(partsOfEditor(b), ref);
}

/** A person-readable name of the anchored object, e.g. "left Margin pin of cycle 2". */
export function describeObject(ref: Omit<NoteObjectRef, 'buildupId'>, cycleNumber?: number | null): string {
  const of = cycleNumber ? ` of cycle ${cycleNumber}` : '';
  switch (ref.object) {
    case 'buildup':
      return 'buildup';
    case 'top':
      return `top${of}`;
    case 'marginLeft':
      return `left Margin pin${of}`;
    case 'marginRight':
      return `right Margin pin${of}`;
    case 'flankLeft':
      return `left flank${of}`;
    case 'flankRight':
      return `right flank${of}`;
    case 'termination':
      return 'Termination stamp';
  }
}
