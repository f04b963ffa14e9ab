/**
 * Select tool: pick an object, delete it.
 *
 * click              select the nearest object within the radius: Margin
 *                    pin or Termination stamp, else a vertex, else a line
 *                    (store.select); empty space clears the selection
 * Delete / Backspace remove the selected object through an action: a vertex
 *                    (deleteVertex), a whole line (removePolyline), a Margin
 *                    pin (setMargin … null), a stamp (deleteTermination)
 * Esc                clear the selection
 */
import { actions } from '../actions';
import type { SelectedElement } from '../model';
import { BaseTool } from './base';
import { selectedPolyline } from './edit';
import { hitTest, type Hit } from './hitTest';
import type { ToolKey, ToolPointer } from './types';

/** The selection that stands for a hit. */
export function selectionOfHit(h: Hit): { buildupId: string; cycleId: string | null; element: SelectedElement } {
  switch (h.kind) {
    case 'margin':
      return { buildupId: h.buildupId, cycleId: h.cycleId, element: { kind: h.side === 'left' ? 'marginLeft' : 'marginRight' } };
    case 'termination':
      return { buildupId: h.buildupId, cycleId: null, element: { kind: 'termination', terminationId: h.terminationId } };
    case 'vertex':
      return { buildupId: h.target.buildupId, cycleId: h.target.cycleId ?? null, element: { kind: h.target.kind, vertex: h.index } };
    case 'segment':
      return { buildupId: h.target.buildupId, cycleId: h.target.cycleId ?? null, element: { kind: h.target.kind } };
  }
}

export class SelectTool extends BaseTool {
  readonly id = 'select' as const;

  /** What a click at this point would pick. */
  pick(e: ToolPointer): Hit | null {
    return hitTest(this.env.state(), e.image, this.radiusPx, e.scale);
  }

  click(e: ToolPointer): boolean {
    const h = this.pick(e);
    if (!h) {
      this.env.select(null);
      return false;
    }
    const s = selectionOfHit(h);
    this.env.select(s.buildupId, s.cycleId, s.element);
    return true;
  }

  pointerMove(e: ToolPointer): boolean {
    this.setPreview({ kind: 'hover', hit: this.pick(e), insertAt: null });
    return false;
  }

  leave(): void {
    this.setPreview({ kind: 'none' });
  }

  keyDown(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    const sel = this.env.selection();
    if (e.key === 'Escape') {
      if (!sel.buildupId) return false;
      this.env.select(null);
      return true;
    }
    if (e.key !== 'Delete' && e.key !== 'Backspace') return false;
    const el = sel.element;
    if (!sel.buildupId || !el) return false;
    const b = sel.buildupId;
    switch (el.kind) {
      case 'termination':
        this.dispatch(actions.deleteTermination(b, el.terminationId));
        this.env.select(b);
        return true;
      case 'marginLeft':
      case 'marginRight':
        this.dispatch(actions.setMargin(b, sel.cycleId!, el.kind === 'marginLeft' ? 'left' : 'right', null));
        this.env.endGesture();
        this.env.select(b, sel.cycleId);
        return true;
      default: {
        const target = selectedPolyline(sel)!;
        if (el.vertex !== undefined) {
          if (this.dispatch(actions.deleteVertex(target, el.vertex))) this.env.select(b, sel.cycleId, { kind: el.kind });
          else this.setPreview({ kind: 'none', message: 'A line keeps at least 2 points: select the whole line (click a segment) to delete it.' });
          return true;
        }
        this.dispatch(actions.removePolyline(target));
        this.env.select(b, sel.cycleId);
        return true;
      }
    }
  }
}
