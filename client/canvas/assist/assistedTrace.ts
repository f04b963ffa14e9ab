/**
 * The Trace tool with trace assist (the Toolbox's `trace` tool).
 *
 * Modes (the tool strip's toggles and keys, handled only while tracing):
 * - click  (default) every click is one vertex, as before;
 * - follow (G) the segment from the last vertex to the cursor follows the
 *   event: a least-cost path computed in the Web Worker, previewed as the
 *   mouse moves (latest wins; stale answers are dropped), committed by a
 *   click as ordinary vertices (thinned, Douglas–Peucker 0.5 px). Backspace
 *   takes back the whole last segment; Enter / double-click finish the trace
 *   as ONE action, as before;
 * - extend (X) one click follows the event left and right until it breaks
 *   and puts the whole line in as ONE action (named `autoExtend`; one undo
 *   removes it). The stop points are then offered as candidate Termination
 *   stamps with a proposed type; a click on a candidate places it
 *   (`addTermination`), nothing is placed without that click.
 * - H snaps the selected line's vertices vertically (±4 px) onto the phase,
 *   ONE action named `snapToEvent`.
 * - P cycles the phase followed: peak → trough → zero crossing.
 *
 * Without a backend (no tiles yet) follow and extend fall back to clicks.
 */
import { actions, getPolyline, type Action, type PolylineTarget } from '../actions';
import { dist2, type Pt } from '../geometry';
import type { TerminationType } from '../model';
import { TraceTool } from '../tools/trace';
import type { ToolKey, ToolPointer } from '../tools/types';
import { PHASES, type Phase } from '../../../shared/trace-assist/source';
import { latest, type AssistBackend } from './backend';
import type { AssistResult } from './protocol';

export const TRACE_MODES = ['click', 'follow', 'extend'] as const;
export type TraceMode = (typeof TRACE_MODES)[number];

/** Keys of the assist, inside the Trace tool (Cayline's own choice; none is a tool letter). */
export const ASSIST_KEYS = Object.freeze({ follow: 'g', extend: 'x', snap: 'h', phase: 'p' });

export const PHASE_LABEL: Record<Phase, string> = { peak: 'Peak', trough: 'Trough', zero: 'Zero crossing' };
export const MODE_LABEL: Record<TraceMode, string> = { click: 'Click vertices', follow: 'Follow the event', extend: 'Auto-extend from one click' };

export interface CandidateStamp {
  at: Pt;
  type: TerminationType;
  side: 'left' | 'right';
  /** False when no bounding surface was found and the type is a guess from the event's dip. */
  confident: boolean;
}

/** What the assist adds to the Trace tool's preview. */
export interface AssistExtras {
  mode: TraceMode;
  phase: Phase;
  /** The followed path from the last vertex to the cursor (follow mode), or null. */
  follow: Pt[] | null;
  candidates: CandidateStamp[];
  busy: boolean;
  /** True when a backend is attached (follow / extend can work). */
  assist: boolean;
}

/** A candidate counts as clicked within this many screen px. */
const CANDIDATE_PX = 12;

export class AssistedTraceTool extends TraceTool {
  private backend: AssistBackend | null = null;
  private previews: ReturnType<typeof latest> | null = null;
  private _mode: TraceMode = 'click';
  private _phase: Phase = 'peak';
  private follow: Pt[] | null = null;
  private followFor: Pt | null = null;
  /** Vertices added per click, for Backspace. */
  private segments: number[] = [];
  private candidates: CandidateStamp[] = [];
  private candidateBuildup: string | null = null;
  private running = 0;
  private jobs = new Set<Promise<unknown>>();
  private renameNext: string | null = null;
  private assistMessage: string | undefined;

  get mode(): TraceMode {
    return this._mode;
  }
  get phase(): Phase {
    return this._phase;
  }
  get hasAssist(): boolean {
    return this.backend !== null;
  }

  /** Attach (or detach with null) the backend of the open section. */
  setAssist(backend: AssistBackend | null): void {
    this.previews?.cancel();
    this.backend = backend;
    this.previews = backend ? latest(backend) : null;
    this.follow = null;
    this.followFor = null;
    this.publish();
  }

  setMode(m: TraceMode): void {
    if (!TRACE_MODES.includes(m)) throw new Error(`AssistedTraceTool.setMode: mode must be one of ${TRACE_MODES.join(', ')}`);
    this._mode = m;
    this.follow = null;
    this.followFor = null;
    this.previews?.cancel();
    this.assistMessage = undefined;
    this.publish();
  }

  setPhase(p: Phase): void {
    if (!PHASES.includes(p)) throw new Error(`AssistedTraceTool.setPhase: phase must be one of ${PHASES.join(', ')}`);
    this._phase = p;
    this.follow = null;
    this.followFor = null;
    this.publish();
  }

  /** Resolves when every running assist task has finished (tests, e2e hooks). */
  async whenIdle(): Promise<void> {
    while (this.jobs.size) await Promise.allSettled([...this.jobs]);
  }

  private track<T>(p: Promise<T>): Promise<T> {
    this.running++;
    this.jobs.add(p);
    this.publish();
    const done = () => {
      this.jobs.delete(p);
      this.running--;
      this.publish();
    };
    p.then(done, done);
    return p;
  }

  protected dispatch(action: Action): boolean {
    const a = this.renameNext ? { ...action, name: this.renameNext } : action;
    return super.dispatch(a);
  }

  protected publish(): void {
    const extras: AssistExtras = {
      mode: this._mode,
      phase: this._phase,
      follow: this.follow,
      candidates: this.candidates,
      busy: this.running > 0,
      assist: this.backend !== null,
    };
    const message = this.message ?? this.assistMessage;
    this.setPreview({
      kind: 'trace',
      target: this.target,
      points: this.points.slice(),
      hover: this.hover,
      snap: this.hoverSnap,
      cycleIndex: this.cycleIndex(),
      ...(message ? { message } : {}),
      ...extras,
    });
  }

  pointerMove(e: ToolPointer): boolean {
    super.pointerMove(e);
    if (this._mode === 'follow' && this.points.length && this.previews && this.hover) {
      const from = this.points[this.points.length - 1];
      const to: Pt = [this.hover[0], this.hover[1]];
      void this.previews.run({ kind: 'path', from, to, phase: this._phase }).then((r) => {
        if (!r || r.kind !== 'path') return;
        // still the same segment start (a click may have committed meanwhile)
        const last = this.points[this.points.length - 1];
        if (!last || last[0] !== from[0] || last[1] !== from[1]) return;
        this.follow = r.points;
        this.followFor = to;
        this.publish();
      });
    }
    return false;
  }

  leave(): void {
    this.follow = null;
    this.followFor = null;
    this.previews?.cancel();
    super.leave();
  }

  click(e: ToolPointer): boolean {
    if (this._mode === 'extend' && this.backend) return this.extendClick(e);
    if (this._mode === 'follow' && this.backend && this.points.length) return this.followClick(e);
    const before = this.points.length;
    const used = super.click(e);
    if (this.points.length > before) this.segments.push(this.points.length - before);
    return used;
  }

  private followClick(e: ToolPointer): boolean {
    const s = this.snapPoint(e.image, e.scale);
    const to: Pt = s.point;
    const from = this.points[this.points.length - 1];
    const near = 0.5 / e.scale;
    if (this.follow && this.followFor && dist2(this.followFor, to) <= near * near) {
      this.commitSegment(from, this.follow);
      return true;
    }
    this.previews?.cancel();
    const job = this.backend!.run({ kind: 'path', from, to, phase: this._phase });
    void this.track(job).then(
      (r) => {
        const last = this.points[this.points.length - 1];
        if (r.kind === 'path' && last && last[0] === from[0] && last[1] === from[1]) this.commitSegment(from, r.points);
      },
      (err: unknown) => this.failAssist(err),
    );
    return true;
  }

  private commitSegment(from: Pt, path: Pt[]): void {
    const add = path.slice(1).filter((p, i, a) => i === 0 || p[0] !== a[i - 1][0] || p[1] !== a[i - 1][1]);
    if (!add.length) return;
    if (add[0][0] === from[0] && add[0][1] === from[1]) add.shift();
    this.points.push(...add);
    this.segments.push(add.length);
    this.follow = null;
    this.followFor = null;
    this.message = undefined;
    this.publish();
  }

  private extendClick(e: ToolPointer): boolean {
    const r = CANDIDATE_PX / e.scale;
    const hit = this.candidates.findIndex((c) => dist2(c.at, e.image) <= r * r);
    if (hit >= 0) {
      const c = this.candidates[hit];
      const bid = this.candidateBuildup ?? this.targetBuildup(c.at[0])?.id ?? null;
      if (!bid) return this.failAssist(new Error('The auto-extended line has no buildup to stamp.'));
      if (this.dispatch(actions.addTermination(bid, c.type, c.at))) {
        this.candidates = this.candidates.filter((_, i) => i !== hit);
        this.publish();
      }
      return true;
    }
    const seed: Pt = [e.image[0], e.image[1]];
    const job = this.backend!.run({ kind: 'extend', seed, phase: this._phase });
    void this.track(job).then(
      (res) => this.applyExtend(res),
      (err: unknown) => this.failAssist(err),
    );
    return true;
  }

  private applyExtend(res: AssistResult): void {
    if (res.kind !== 'extend') return;
    if (res.points.length < 2) {
      this.failAssist(new Error('No event to follow there: click on a continuous reflector.'));
      return;
    }
    this.points = res.points.slice();
    this.segments = [];
    this.renameNext = 'autoExtend';
    let ok = false;
    try {
      ok = this.finish();
    } finally {
      this.renameNext = null;
    }
    if (!ok) return;
    this.candidateBuildup = this.env.selection().buildupId;
    this.candidates = res.stops
      .filter((s) => s.proposal !== null)
      .map((s) => ({ at: [Math.round(s.at[0] * 100) / 100, Math.round(s.at[1] * 100) / 100] as Pt, type: s.proposal!, side: s.side, confident: s.confident }));
    this.assistMessage = this.candidates.length
      ? 'Click a proposed Termination stamp to place it; Esc dismisses them.'
      : undefined;
    this.publish();
  }

  private failAssist(err: unknown): true {
    if (err instanceof DOMException && err.name === 'AbortError') return true;
    this.assistMessage = err instanceof Error ? err.message : String(err);
    this.publish();
    return true;
  }

  /** Snap the selected line onto the phase: one `snapToEvent` action. False when nothing suitable is selected. */
  snapSelected(): boolean {
    const sel = this.env.selection();
    const el = sel.element;
    if (!this.backend || !sel.buildupId || !el || !['base', 'top', 'flankLeft', 'flankRight'].includes(el.kind)) {
      this.failAssist(new Error('Select a traced line first (Select tool), then press H to snap it to the event.'));
      return false;
    }
    const target: PolylineTarget = { buildupId: sel.buildupId, kind: el.kind as PolylineTarget['kind'], ...(el.kind === 'base' ? {} : { cycleId: sel.cycleId ?? undefined }) };
    const pts = getPolyline(this.env.state(), target);
    if (!pts || pts.length < 1) return false;
    const job = this.backend.run({ kind: 'snap', points: pts, phase: this._phase });
    void this.track(job).then(
      (r) => {
        if (r.kind !== 'snap') return;
        const cur = getPolyline(this.env.state(), target);
        if (cur !== pts) return; // changed meanwhile: do not overwrite
        const a = target.kind === 'base'
          ? actions.setBase(target.buildupId, r.points)
          : target.kind === 'top'
            ? actions.setCycleTop(target.buildupId, target.cycleId!, r.points)
            : actions.setFlank(target.buildupId, target.cycleId!, target.kind === 'flankLeft' ? 'left' : 'right', r.points);
        this.renameNext = 'snapToEvent';
        try {
          this.dispatch(a);
        } finally {
          this.renameNext = null;
        }
        this.assistMessage = r.moved ? undefined : 'Nothing to snap: no vertex has the event within 4 px.';
        this.publish();
      },
      (err: unknown) => this.failAssist(err),
    );
    return true;
  }

  keyDown(e: ToolKey): boolean {
    if (!e.ctrl && !e.meta && !e.alt) {
      const k = e.key.toLowerCase();
      if (k === ASSIST_KEYS.follow) {
        this.setMode(this._mode === 'follow' ? 'click' : 'follow');
        return true;
      }
      if (k === ASSIST_KEYS.extend) {
        this.setMode(this._mode === 'extend' ? 'click' : 'extend');
        return true;
      }
      if (k === ASSIST_KEYS.phase) {
        this.setPhase(PHASES[(PHASES.indexOf(this._phase) + 1) % PHASES.length]);
        return true;
      }
      if (k === ASSIST_KEYS.snap && !this.points.length) {
        this.snapSelected();
        return true;
      }
      if (e.key === 'Backspace' && this.points.length && this.segments.length) {
        const n = this.segments.pop()!;
        this.points.splice(Math.max(0, this.points.length - n), n);
        if (!this.points.length) this.segments = [];
        this.follow = null;
        this.followFor = null;
        this.message = undefined;
        this.publish();
        return true;
      }
    }
    return super.keyDown(e);
  }

  finish(): boolean {
    const ok = super.finish();
    if (ok) this.segments = [];
    return ok;
  }

  protected hasUnfinished(): boolean {
    return super.hasUnfinished() || this.candidates.length > 0 || !!this.assistMessage;
  }

  protected dropUnfinished(): void {
    super.dropUnfinished();
    this.segments = [];
    this.follow = null;
    this.followFor = null;
    this.candidates = [];
    this.candidateBuildup = null;
    this.assistMessage = undefined;
    this.previews?.cancel();
  }
}
