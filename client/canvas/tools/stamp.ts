/**
 * Termination stamp tool: mark where reflections terminate.
 *
 * 1 2 3 4        choose onlap, downlap, toplap, truncation
 * click          place a stamp of that type (addTermination), snapped to a
 *                nearby vertex; it goes to the selected buildup (or the one
 *                whose extent covers the click)
 * drag a stamp   move it (moveTermination; one undo step per drag)
 */
import { actions } from '../actions';
import { TERMINATION_TYPES, newId, type TerminationType } from '../model';
import { DragOrPlaceTool, tidy } from './base';
import { hitTest } from './hitTest';
import type { ToolKey, ToolPointer } from './types';

export const TERMINATION_LABEL: Record<TerminationType, string> = {
  onlap: 'Onlap',
  downlap: 'Downlap',
  toplap: 'Toplap',
  truncation: 'Truncation',
};

export class StampTool extends DragOrPlaceTool<{ buildupId: string; terminationId: string; moved: boolean }> {
  readonly id = 'stamp' as const;
  private _type: TerminationType = 'onlap';

  get type(): TerminationType {
    return this._type;
  }

  setType(t: TerminationType): void {
    if (!TERMINATION_TYPES.includes(t)) throw new Error(`StampTool.setType: type must be one of ${TERMINATION_TYPES.join(', ')}`);
    this._type = t;
    const p = this.preview;
    this.setPreview(p.kind === 'stamp' ? { ...p, type: t } : { kind: 'stamp', at: null, type: t, snap: null });
  }

  pointerDown(e: ToolPointer): boolean {
    const h = hitTest(this.env.state(), e.image, this.radiusPx, e.scale, { kinds: ['termination'] });
    if (h?.kind !== 'termination') return this.beginDrag(null);
    this.env.select(h.buildupId, null, { kind: 'termination', terminationId: h.terminationId });
    this.beginDrag({ buildupId: h.buildupId, terminationId: h.terminationId, moved: false });
    this.setPreview({ kind: 'stamp', at: null, type: this._type, snap: null });
    return true;
  }

  pointerMove(e: ToolPointer): boolean {
    const d = this.drag;
    const tid = d?.terminationId;
    const s = this.snapPoint(e.image, e.scale, tid ? (id) => id === `term:${d!.buildupId}/${tid}` : undefined);
    const at = s.hit ? s.point : tidy(s.point);
    if (d) {
      if (this.dispatch(actions.moveTermination(d.buildupId, d.terminationId, at))) d.moved = true;
      return true;
    }
    this.setPreview({ kind: 'stamp', at, type: this._type, snap: s.hit });
    return false;
  }

  click(e: ToolPointer): boolean {
    if (this.clickEndsDrag()) return true;
    const s = this.snapPoint(e.image, e.scale);
    const at = s.hit ? s.point : tidy(s.point);
    const b = this.targetBuildup(at[0]);
    if (!b) {
      this.setPreview({ kind: 'stamp', at, type: this._type, snap: s.hit, message: 'Trace a buildup’s base or a top first: stamps belong to a buildup.' });
      return true;
    }
    const id = newId();
    if (this.dispatch(actions.addTermination(b.id, this._type, at, id)))
      this.env.select(b.id, null, { kind: 'termination', terminationId: id });
    return true;
  }

  leave(): void {
    if (!this.drag) this.setPreview({ kind: 'none' });
  }

  keyDown(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    const i = ['1', '2', '3', '4'].indexOf(e.key);
    if (i < 0) return false;
    this.setType(TERMINATION_TYPES[i]);
    return true;
  }
}
