/**
 * Margin pin tool: place the selected cycle's left or right Margin pin (its
 * break of slope) on the cycle's top.
 *
 * click          set the pin (setMargin), snapped onto the top: to a top
 *                vertex within the radius, otherwise the nearest point on it
 * which side     mode 'nearer' (default): the side whose end of the top is
 *                nearer the click along u; Shift-click takes the other side;
 *                modes 'left' / 'right' fix the side (keys 1, 2, 3)
 * drag a pin     move it along its top (one undo step per drag)
 */
import { actions } from '../actions';
import { dist2, type Pt } from '../geometry';
import type { EditorBuildup, EditorCycle, Side } from '../model';
import { DragOrPlaceTool, tidy } from './base';
import { hitTest, nearestOnPolyline } from './hitTest';
import { MARGIN_SIDE_MODES, type MarginSideMode, type ToolKey, type ToolPointer } from './types';

export const MARGIN_MODE_LABEL: Record<MarginSideMode, string> = {
  nearer: 'Nearer end',
  left: 'Left',
  right: 'Right',
};

/** Side of the top's end nearer to `u` (left = the end with the smaller u). */
export function nearerSide(top: readonly Pt[], u: number): Side {
  let lo = Infinity, hi = -Infinity;
  for (const p of top) {
    if (p[0] < lo) lo = p[0];
    if (p[0] > hi) hi = p[0];
  }
  return Math.abs(u - lo) <= Math.abs(hi - u) ? 'left' : 'right';
}

/** `p` placed on the polyline: a vertex within `r` image px, else the nearest point. */
export function onPolyline(top: readonly Pt[], p: Pt, r: number): Pt | null {
  if (!top.length) return null;
  let best: Pt | null = null;
  let bestD2 = r * r;
  for (const q of top) {
    const d2 = dist2(q, p);
    if (d2 <= bestD2) {
      bestD2 = d2;
      best = q;
    }
  }
  if (best) return [best[0], best[1]];
  const near = nearestOnPolyline(top, p, Infinity);
  return near ? tidy(near.point) : null;
}

export class MarginPinTool extends DragOrPlaceTool<{ buildupId: string; cycleId: string; side: Side; moved: boolean }> {
  readonly id = 'marginPin' as const;
  private _mode: MarginSideMode = 'nearer';

  get mode(): MarginSideMode {
    return this._mode;
  }

  setMode(m: MarginSideMode): void {
    if (!MARGIN_SIDE_MODES.includes(m)) throw new Error(`MarginPinTool.setMode: mode must be one of ${MARGIN_SIDE_MODES.join(', ')}`);
    this._mode = m;
    this.setPreview({ kind: 'none' });
  }

  private sideFor(top: readonly Pt[], u: number, shift: boolean | undefined): Side {
    if (this._mode !== 'nearer') return this._mode;
    const s = nearerSide(top, u);
    return shift ? (s === 'left' ? 'right' : 'left') : s;
  }

  private current(u: number): { b: EditorBuildup; c: EditorCycle; index: number } | { message: string } {
    const b = this.targetBuildup(u);
    const sel = this.selectedCycle(b);
    if (!b || !sel) return { message: 'Select a cycle first (click its top with Select), then pin its margins.' };
    if (sel.cycle.top.length < 2) return { message: 'Trace this cycle’s top first: Margin pins sit on it.' };
    return { b, c: sel.cycle, index: sel.index };
  }

  pointerMove(e: ToolPointer): boolean {
    const d = this.drag;
    if (d) {
      const b = this.env.state().buildups.find((x) => x.id === d.buildupId);
      const c = b?.cycles.find((x) => x.id === d.cycleId);
      if (!c) return true;
      const at = onPolyline(c.top, e.image, this.radiusPx / e.scale);
      if (at && this.dispatch(actions.setMargin(d.buildupId, d.cycleId, d.side, at))) d.moved = true;
      return true;
    }
    const cur = this.current(e.image[0]);
    if ('message' in cur) {
      this.setPreview({ kind: 'margin', at: null, side: null, cycleIndex: null, message: cur.message });
      return false;
    }
    const at = onPolyline(cur.c.top, e.image, this.radiusPx / e.scale);
    this.setPreview({ kind: 'margin', at, side: at ? this.sideFor(cur.c.top, at[0], e.shift) : null, cycleIndex: cur.index });
    return false;
  }

  leave(): void {
    if (!this.drag) this.setPreview({ kind: 'none' });
  }

  pointerDown(e: ToolPointer): boolean {
    const h = hitTest(this.env.state(), e.image, this.radiusPx, e.scale, { kinds: ['margin'] });
    if (h?.kind !== 'margin') return this.beginDrag(null);
    this.env.select(h.buildupId, h.cycleId, { kind: h.side === 'left' ? 'marginLeft' : 'marginRight' });
    return this.beginDrag({ buildupId: h.buildupId, cycleId: h.cycleId, side: h.side, moved: false });
  }

  click(e: ToolPointer): boolean {
    if (this.clickEndsDrag()) return true;
    const cur = this.current(e.image[0]);
    if ('message' in cur) {
      this.setPreview({ kind: 'margin', at: null, side: null, cycleIndex: null, message: cur.message });
      return true;
    }
    const at = onPolyline(cur.c.top, e.image, this.radiusPx / e.scale)!;
    const side = this.sideFor(cur.c.top, at[0], e.shift);
    this.dispatch(actions.setMargin(cur.b.id, cur.c.id, side, at));
    // A later click on the same pin is a new undo step, not part of this one.
    this.env.endGesture();
    this.env.select(cur.b.id, cur.c.id, { kind: side === 'left' ? 'marginLeft' : 'marginRight' });
    return true;
  }

  keyDown(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    const i = ['1', '2', '3'].indexOf(e.key);
    if (i < 0) return false;
    this.setMode(MARGIN_SIDE_MODES[i]);
    return true;
  }
}
