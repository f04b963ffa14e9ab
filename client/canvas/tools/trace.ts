/**
 * Trace tool: draw the base, the selected cycle's top, or its left / right
 * flank as a polyline.
 *
 * click        add a vertex (snapped to a nearby vertex or polyline end)
 * double-click / Enter   finish: ONE action (setBase, setCycleTop, setFlank;
 *              addCycle when no cycle is selected for a top, createBuildup
 *              when there is no buildup yet)
 * Backspace    remove the last unfinished vertex
 * Esc          drop the unfinished trace without dispatching
 * 1 2 3 4      trace the base, top, left flank, right flank
 */
import { actions } from '../actions';
import { dist2, type Pt } from '../geometry';
import { emptyCycle, newId } from '../model';
import { BaseTool, tidy } from './base';
import { TRACE_TARGETS, type ToolKey, type ToolPointer, type TraceTarget } from './types';

/** Two clicks closer than this (screen px) count as one vertex (double-click). */
const SAME_CLICK_PX = 3;

export const TRACE_TARGET_LABEL: Record<TraceTarget, string> = {
  base: 'Base',
  top: 'Cycle top',
  flankLeft: 'Left flank',
  flankRight: 'Right flank',
};

export class TraceTool extends BaseTool {
  readonly id = 'trace' as const;
  protected points: Pt[] = [];
  protected hover: Pt | null = null;
  protected hoverSnap: import('../snapping').SnapHit | null = null;
  protected message: string | undefined;
  private _target: TraceTarget;

  constructor(env: ConstructorParameters<typeof BaseTool>[0], opts: { target?: TraceTarget } = {}) {
    super(env);
    this._target = opts.target ?? 'top';
    this.publish();
  }

  get target(): TraceTarget {
    return this._target;
  }

  /** Vertices placed so far (a copy). */
  get pending(): Pt[] {
    return this.points.slice();
  }

  setTarget(t: TraceTarget): void {
    if (!TRACE_TARGETS.includes(t)) throw new Error(`TraceTool.setTarget: target must be one of ${TRACE_TARGETS.join(', ')}`);
    this._target = t;
    this.message = undefined;
    this.publish();
  }

  protected cycleIndex(): number | null {
    if (this._target === 'base') return null;
    const b = this.targetBuildup(this.points[0]?.[0]);
    const sel = this.selectedCycle(b);
    return sel ? sel.index : b ? b.cycles.length : 0;
  }

  protected publish(): void {
    this.setPreview({
      kind: 'trace',
      target: this._target,
      points: this.points.slice(),
      hover: this.hover,
      snap: this.hoverSnap,
      cycleIndex: this.cycleIndex(),
      ...(this.message ? { message: this.message } : {}),
    });
  }

  pointerMove(e: ToolPointer): boolean {
    const s = this.snapPoint(e.image, e.scale);
    this.hover = s.point;
    this.hoverSnap = s.hit;
    this.publish();
    return false;
  }

  leave(): void {
    this.hover = null;
    this.hoverSnap = null;
    this.publish();
  }

  click(e: ToolPointer): boolean {
    const s = this.snapPoint(e.image, e.scale);
    const p = s.hit ? s.point : tidy(s.point);
    const last = this.points[this.points.length - 1];
    const same = SAME_CLICK_PX / e.scale;
    if (last && dist2(last, p) <= same * same) return true;
    this.points.push(p);
    this.message = undefined;
    this.hover = p;
    this.hoverSnap = s.hit;
    this.publish();
    return true;
  }

  doubleClick(_e: ToolPointer): boolean {
    if (!this.points.length) return false;
    this.finish();
    return true;
  }

  keyDown(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    switch (e.key) {
      case 'Enter':
        if (!this.points.length) return false;
        this.finish();
        return true;
      case 'Backspace':
        if (!this.points.length) return false;
        this.points.pop();
        this.message = undefined;
        this.publish();
        return true;
      case '1':
      case '2':
      case '3':
      case '4':
        this.setTarget(TRACE_TARGETS[Number(e.key) - 1]);
        return true;
      default:
        return false;
    }
  }

  /** Placed vertices, or a refusal message still showing. */
  protected hasUnfinished(): boolean {
    return this.points.length > 0 || !!this.message;
  }

  protected dropUnfinished(): void {
    this.points = [];
    this.message = undefined;
  }

  protected showIdle(): void {
    this.publish();
  }

  /**
   * Finish the trace: dispatch one action. Returns true when the document
   * changed; otherwise the vertices stay and `preview.message` says why.
   */
  finish(): boolean {
    const pts = this.points.slice();
    if (pts.length < 2) return this.fail('A trace needs at least 2 points. Click to add more, Esc to drop it.');
    const env = this.env;
    const b = this.targetBuildup(pts[0][0]);
    let ok: boolean;
    if (this._target === 'base') {
      if (!b) {
        const id = newId();
        const name = `Buildup ${env.state().buildups.length + 1}`;
        ok = this.dispatch(actions.createBuildup({ id, name, base: pts }));
        if (ok) env.select(id, null, { kind: 'base' });
      } else {
        ok = this.dispatch(actions.setBase(b.id, pts));
        if (ok) env.select(b.id, null, { kind: 'base' });
      }
    } else if (this._target === 'top') {
      const cycleId = newId();
      if (!b) {
        const id = newId();
        const name = `Buildup ${env.state().buildups.length + 1}`;
        ok = this.dispatch(actions.createBuildup({ id, name, cycles: [emptyCycle({ id: cycleId, top: pts })] }));
        if (ok) env.select(id, cycleId, { kind: 'top' });
      } else {
        const sel = this.selectedCycle(b);
        if (sel) {
          ok = this.dispatch(actions.setCycleTop(b.id, sel.cycle.id, pts));
          if (ok) env.select(b.id, sel.cycle.id, { kind: 'top' });
        } else {
          ok = this.dispatch(actions.addCycle(b.id, { id: cycleId, top: pts }));
          if (ok) env.select(b.id, cycleId, { kind: 'top' });
        }
      }
    } else {
      const sel = this.selectedCycle(b);
      if (!b || !sel) return this.fail('Select a cycle first (click its top with Select), then trace its flank.');
      const side = this._target === 'flankLeft' ? 'left' : 'right';
      ok = this.dispatch(actions.setFlank(b.id, sel.cycle.id, side, pts));
      if (ok) env.select(b.id, sel.cycle.id, { kind: this._target });
    }
    if (!ok) return this.fail('The trace was not applied (it matches what is there, or was refused).');
    this.points = [];
    this.message = undefined;
    this.publish();
    return true;
  }

  private fail(message: string): false {
    this.message = message;
    this.publish();
    return false;
  }
}
