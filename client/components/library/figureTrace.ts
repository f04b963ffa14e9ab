/**
 * State of the figure tracer (FigureProfileTracer.vue) as plain data with
 * pure steps, so every action is undoable and testable: the two scale
 * references (two clicked points each) and the traced lines (base, tops
 * oldest first), all in figure pixels.
 */
import type { PixelPoint } from '../../../shared/figure-profile';

/** What the next click sets: a scale point or a vertex of a line. */
export type TraceTarget = { kind: 'scale'; axis: 'x' | 'z' } | { kind: 'base' } | { kind: 'top'; index: number };

export interface FigureTraceState {
  /** Clicked scale points (u for x, v for z), up to two each. */
  scale: { x: number[]; z: number[] };
  base: PixelPoint[];
  tops: PixelPoint[][];
}

export const emptyTrace = (): FigureTraceState => ({ scale: { x: [], z: [] }, base: [], tops: [] });

const copy = (s: FigureTraceState): FigureTraceState => ({
  scale: { x: [...s.scale.x], z: [...s.scale.z] },
  base: s.base.map((p) => [p[0], p[1]] as PixelPoint),
  tops: s.tops.map((t) => t.map((p) => [p[0], p[1]] as PixelPoint)),
});

/** The state after a click at `p` with `target` chosen. A third scale click starts that scale over. */
export function addPoint(s: FigureTraceState, target: TraceTarget, p: PixelPoint): FigureTraceState {
  const n = copy(s);
  if (target.kind === 'scale') {
    const list = n.scale[target.axis];
    const value = target.axis === 'x' ? p[0] : p[1];
    if (list.length >= 2) list.splice(0, list.length);
    list.push(value);
  } else if (target.kind === 'base') n.base.push(p);
  else {
    while (n.tops.length <= target.index) n.tops.push([]);
    n.tops[target.index].push(p);
  }
  return n;
}

/** A new, empty top after the last one; returns the state and the new top's index. */
export function addTop(s: FigureTraceState): { state: FigureTraceState; index: number } {
  const n = copy(s);
  n.tops.push([]);
  return { state: n, index: n.tops.length - 1 };
}

/** Remove top `index` (the later tops move down one). */
export function removeTop(s: FigureTraceState, index: number): FigureTraceState {
  const n = copy(s);
  n.tops.splice(index, 1);
  return n;
}

/** Tops with fewer than two points are not part of the profile. */
export function usableTops(s: FigureTraceState): PixelPoint[][] {
  return s.tops.filter((t) => t.length >= 2);
}

/** A bounded undo/redo history of states. */
export class TraceHistory {
  private past: FigureTraceState[] = [];
  private future: FigureTraceState[] = [];
  constructor(
    public current: FigureTraceState = emptyTrace(),
    private readonly limit = 200,
  ) {}
  push(next: FigureTraceState) {
    this.past.push(this.current);
    if (this.past.length > this.limit) this.past.shift();
    this.future = [];
    this.current = next;
  }
  undo(): boolean {
    const prev = this.past.pop();
    if (!prev) return false;
    this.future.push(this.current);
    this.current = prev;
    return true;
  }
  redo(): boolean {
    const next = this.future.pop();
    if (!next) return false;
    this.past.push(this.current);
    this.current = next;
    return true;
  }
  get canUndo() {
    return this.past.length > 0;
  }
  get canRedo() {
    return this.future.length > 0;
  }
}
