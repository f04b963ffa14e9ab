/**
 * Edit tool: reshape traced polylines.
 *
 * drag a vertex          moveVertex, all moves of one drag share a key and
 *                        coalesce into one undo step; endGesture() on release
 * Alt- or Ctrl-click     insert a vertex on the nearest segment (insertVertex)
 * Delete / Backspace     delete the selected vertex (deleteVertex)
 *
 * Vertices of the selected polyline are picked first, then any other.
 */
import { actions, targetKey, type PolylineTarget } from '../actions';
import type { Pt } from '../geometry';
import type { SelectedElement } from '../model';
import { BaseTool, tidy } from './base';
import { hitTest, type Hit } from './hitTest';
import type { ToolKey, ToolPointer } from './types';

export function selectedPolyline(sel: { buildupId: string | null; cycleId: string | null; element: SelectedElement | null }): PolylineTarget | null {
  const el = sel.element;
  if (!sel.buildupId || !el) return null;
  if (el.kind === 'base') return { buildupId: sel.buildupId, kind: 'base' };
  if ((el.kind === 'top' || el.kind === 'flankLeft' || el.kind === 'flankRight') && sel.cycleId)
    return { buildupId: sel.buildupId, cycleId: sel.cycleId, kind: el.kind };
  return null;
}

const sameTarget = (a: PolylineTarget, b: PolylineTarget) => targetKey(a) === targetKey(b);

export class EditTool extends BaseTool {
  readonly id = 'edit' as const;
  private drag: { target: PolylineTarget; index: number; moved: boolean } | null = null;

  /** True while a vertex is being dragged. */
  get dragging(): boolean {
    return this.drag !== null;
  }

  private pick(p: Pt, scale: number, kinds: ('vertex' | 'segment')[]): Hit | null {
    const st = this.env.state();
    const sel = selectedPolyline(this.env.selection());
    if (sel) {
      const h = hitTest(st, p, this.radiusPx, scale, { kinds, polyline: (t) => sameTarget(t, sel) });
      if (h) return h;
    }
    return hitTest(st, p, this.radiusPx, scale, { kinds });
  }

  private selectVertex(target: PolylineTarget, index: number | undefined): void {
    const el: SelectedElement = index === undefined ? { kind: target.kind } : { kind: target.kind, vertex: index };
    this.env.select(target.buildupId, target.cycleId ?? null, el);
  }

  pointerDown(e: ToolPointer): boolean {
    if (e.alt || e.ctrl || e.meta) {
      const h = this.pick(e.image, e.scale, ['segment']);
      if (!h || h.kind !== 'segment') return false;
      const pt = tidy(h.point);
      if (!this.dispatch(actions.insertVertex(h.target, h.segmentIndex, pt))) return true;
      this.selectVertex(h.target, h.segmentIndex + 1);
      // Keep the new vertex under the pointer: a drag right after the insert moves it.
      this.drag = { target: h.target, index: h.segmentIndex + 1, moved: false };
      this.setPreview({ kind: 'none' });
      return true;
    }
    const h = this.pick(e.image, e.scale, ['vertex']);
    if (!h || h.kind !== 'vertex') return false;
    this.selectVertex(h.target, h.index);
    this.drag = { target: h.target, index: h.index, moved: false };
    this.setPreview({ kind: 'none' });
    return true;
  }

  pointerMove(e: ToolPointer): boolean {
    const d = this.drag;
    if (d) {
      const source = `line:${d.target.buildupId}/${d.target.cycleId ?? '-'}/${d.target.kind}`;
      const s = this.snapPoint(e.image, e.scale, (id, i) => id === source && i === d.index);
      const pt = s.hit ? s.point : tidy(s.point);
      if (this.dispatch(actions.moveVertex(d.target, d.index, pt))) d.moved = true;
      return true;
    }
    const modifier = !!(e.alt || e.ctrl || e.meta);
    const h = this.pick(e.image, e.scale, modifier ? ['segment'] : ['vertex', 'segment']);
    this.setPreview({ kind: 'hover', hit: h, insertAt: modifier && h?.kind === 'segment' ? h.point : null });
    return false;
  }

  pointerUp(_e: ToolPointer): boolean {
    const d = this.drag;
    if (!d) return false;
    this.drag = null;
    this.env.endGesture();
    return true;
  }

  leave(): void {
    if (!this.drag) this.setPreview({ kind: 'none' });
  }

  keyDown(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    if (e.key !== 'Delete' && e.key !== 'Backspace') return false;
    const sel = this.env.selection();
    const target = selectedPolyline(sel);
    const el = sel.element;
    if (!target || !el || !('vertex' in el) || el.vertex === undefined) return false;
    if (this.dispatch(actions.deleteVertex(target, el.vertex))) {
      const left = Math.max(0, el.vertex - 1);
      this.selectVertex(target, left);
    } else {
      this.setPreview({ kind: 'none', message: 'A line keeps at least 2 points: select the line and delete it with the Select tool.' });
    }
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
}
