/**
 * Common plumbing of the tool controllers: preview publishing, the pick
 * radius, cached snap sources and "which buildup / cycle does this go to".
 */
import type { Action } from '../actions';
import type { EditorBuildup, EditorCycle, EditorState, Pt } from '../model';
import { snap, snapSourcesFromState, type SnapHit, type SnapSource } from '../snapping';
import type { ToolController, ToolEnv, ToolId, ToolKey, ToolPointer, ToolPreview } from './types';

export const DEFAULT_RADIUS_PX = 10;

const sourcesCache = new WeakMap<EditorState, SnapSource[]>();

/** Snap sources of a state, built once per state object. */
export function snapSourcesOf(state: EditorState): SnapSource[] {
  let s = sourcesCache.get(state);
  if (!s) {
    s = snapSourcesFromState(state);
    sourcesCache.set(state, s);
  }
  return s;
}

export abstract class BaseTool implements ToolController {
  abstract readonly id: ToolId;
  private listeners = new Set<(p: ToolPreview) => void>();
  private _preview: ToolPreview = { kind: 'none' };

  constructor(protected readonly env: ToolEnv) {}

  get preview(): ToolPreview {
    return this._preview;
  }

  protected setPreview(p: ToolPreview): void {
    this._preview = p;
    for (const fn of this.listeners) fn(p);
  }

  onPreview(fn: (p: ToolPreview) => void): () => void {
    this.listeners.add(fn);
    return () => this.listeners.delete(fn);
  }

  protected get radiusPx(): number {
    return this.env.radiusPx ?? DEFAULT_RADIUS_PX;
  }

  protected dispatch(action: Action): boolean {
    return this.env.dispatch(action);
  }

  /** Snap `p` to a nearby vertex or polyline end; returns the point to use and the hit. */
  protected snapPoint(p: Pt, scale: number, exclude?: (sourceId: string, index: number) => boolean): { point: Pt; hit: SnapHit | null } {
    const hit = snap(p, snapSourcesOf(this.env.state()), this.radiusPx, scale, exclude ? { exclude } : {});
    return hit ? { point: hit.point, hit } : { point: [p[0], p[1]], hit: null };
  }

  /**
   * The buildup a new object goes to: the selected one, else the one whose
   * base or tops span `u` (nearest by u-extent), else the only one.
   */
  protected targetBuildup(u?: number): EditorBuildup | null {
    const st = this.env.state();
    const sel = this.env.selection();
    if (sel.buildupId) {
      const b = st.buildups.find((x) => x.id === sel.buildupId);
      if (b) return b;
    }
    if (st.buildups.length === 1) return st.buildups[0];
    if (u === undefined || !st.buildups.length) return null;
    let best: EditorBuildup | null = null;
    let bestD = Infinity;
    for (const b of st.buildups) {
      const pts = [...b.base, ...b.cycles.flatMap((c) => c.top)];
      if (!pts.length) continue;
      let lo = Infinity, hi = -Infinity;
      for (const p of pts) {
        if (p[0] < lo) lo = p[0];
        if (p[0] > hi) hi = p[0];
      }
      const d = u < lo ? lo - u : u > hi ? u - hi : 0;
      if (d < bestD) {
        bestD = d;
        best = b;
      }
    }
    return best;
  }

  /** The selected cycle of buildup `b` with its 0-based position, or null. */
  protected selectedCycle(b: EditorBuildup | null): { cycle: EditorCycle; index: number } | null {
    const sel = this.env.selection();
    if (!b || sel.buildupId !== b.id || !sel.cycleId) return null;
    const index = b.cycles.findIndex((c) => c.id === sel.cycleId);
    return index < 0 ? null : { cycle: b.cycles[index], index };
  }

  pointerDown(_e: ToolPointer): boolean {
    return false;
  }
  pointerMove(_e: ToolPointer): boolean {
    return false;
  }
  pointerUp(_e: ToolPointer): boolean {
    return false;
  }
  click(_e: ToolPointer): boolean {
    return false;
  }
  doubleClick(_e: ToolPointer): boolean {
    return false;
  }
  leave(): void {}
  keyDown(_e: ToolKey): boolean {
    return false;
  }
  /**
   * Abandon anything unfinished without dispatching (Esc and tool switches
   * both come here through the Toolbox). Tools say what "unfinished" is with
   * `hasUnfinished()` / `dropUnfinished()` and what they show when idle with
   * `showIdle()`; they do not override `cancel()` itself.
   */
  cancel(): boolean {
    const had = this.hasUnfinished();
    this.dropUnfinished();
    this.showIdle();
    return had;
  }
  /** True while the tool holds something `cancel()` would drop. */
  protected hasUnfinished(): boolean {
    return false;
  }
  /** Forget the unfinished work (no dispatch). */
  protected dropUnfinished(): void {}
  /** The preview once nothing is unfinished. */
  protected showIdle(): void {
    this.setPreview({ kind: 'none' });
  }
}

/** A copy of a point rounded to 1/100 px (keeps stored geometry tidy). */
export function tidy(p: Pt): Pt {
  return [Math.round(p[0] * 100) / 100, Math.round(p[1] * 100) / 100];
}

/**
 * A tool that places an object with a click and moves an existing one with a
 * drag (Margin pin, Termination stamp). The click that ends a drag must not
 * also place a new object, so a finished drag swallows the next click.
 */
export abstract class DragOrPlaceTool<D> extends BaseTool {
  protected drag: D | null = null;
  private swallowClick = false;

  /** Call from pointerDown when the press grabbed an existing object (or with null when it did not). */
  protected beginDrag(d: D | null): boolean {
    this.swallowClick = false;
    this.drag = d;
    return d !== null;
  }

  pointerUp(_e: ToolPointer): boolean {
    if (!this.drag) return false;
    this.drag = null;
    this.swallowClick = true;
    this.env.endGesture();
    return true;
  }

  protected hasUnfinished(): boolean {
    return this.drag !== null;
  }

  /** A drag cut short keeps what it moved so far (already dispatched) and ends its gesture. */
  protected dropUnfinished(): void {
    if (!this.drag) return;
    this.drag = null;
    this.env.endGesture();
  }

  /** True (once) when this click only ends a drag. */
  protected clickEndsDrag(): boolean {
    if (!this.swallowClick) return false;
    this.swallowClick = false;
    return true;
  }
}

