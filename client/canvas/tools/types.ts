/**
 * Shared shapes of the interpretation canvas's tool controllers.
 *
 * A tool controller is a small state machine in plain TypeScript. It is fed
 * pointer and keyboard events in IMAGE PIXELS (plus the current zoom scale,
 * screen px per image px, for snapping radii), changes the document only by
 * handing named actions (client/canvas/actions.ts) to `env.dispatch`, and
 * publishes a transient `preview` (rubber band, hover ghost, Ruler) for the
 * overlay to draw. It never touches Konva or the DOM.
 */
import type { Action } from '../actions';
import type { EditorState, Pt, SelectedElement, Selection, Side, TerminationType } from '../model';
import type { SnapHit } from '../snapping';
import type { RulerReading } from '../../../shared/measure/index';

/** The Cayline canvas tools (house names). */
export const TOOL_IDS = ['select', 'edit', 'trace', 'marginPin', 'stamp', 'ruler'] as const;
export type ToolId = (typeof TOOL_IDS)[number];

/** What the Trace tool draws. */
export const TRACE_TARGETS = ['base', 'top', 'flankLeft', 'flankRight'] as const;
export type TraceTarget = (typeof TRACE_TARGETS)[number];

/** Which Margin pin a click sets: the side nearer the click along the top, or a fixed side. */
export const MARGIN_SIDE_MODES = ['nearer', 'left', 'right'] as const;
export type MarginSideMode = (typeof MARGIN_SIDE_MODES)[number];

/** A pointer event in image pixels. */
export interface ToolPointer {
  /** `[u, v]` image pixels. */
  image: Pt;
  /** Screen pixels per image pixel at the moment of the event. */
  scale: number;
  shift?: boolean;
  alt?: boolean;
  ctrl?: boolean;
  meta?: boolean;
}

/** A key press (KeyboardEvent-like). */
export interface ToolKey {
  key: string;
  shift?: boolean;
  alt?: boolean;
  ctrl?: boolean;
  meta?: boolean;
}

/** What the tools need from the editor (the store or a test double). */
export interface ToolEnv {
  state(): EditorState;
  selection(): Selection;
  /** Run an action; true when the state changed (false when refused or a no-op). */
  dispatch(action: Action): boolean;
  select(buildupId: string | null, cycleId?: string | null, element?: SelectedElement | null): void;
  /** End of a drag gesture (seal coalescing). */
  endGesture(): void;
  /** Snap / pick radius in SCREEN pixels (default 10). */
  radiusPx?: number;
}

/** The transient picture a tool wants drawn. */
export type ToolPreview =
  | { kind: 'none'; message?: string }
  | {
      kind: 'trace';
      target: TraceTarget;
      /** Vertices placed so far. */
      points: Pt[];
      /** Where the next vertex would go (snapped), or null when the pointer is away. */
      hover: Pt | null;
      snap: SnapHit | null;
      /** Colour hint: the 0-based cycle position the trace belongs to (null for the base). */
      cycleIndex: number | null;
      message?: string;
    }
  | { kind: 'margin'; at: Pt | null; side: Side | null; cycleIndex: number | null; message?: string }
  | { kind: 'stamp'; at: Pt | null; type: TerminationType; snap: SnapHit | null; message?: string }
  | { kind: 'ruler'; a: Pt | null; b: Pt | null; fixed: boolean; reading: RulerReading | null; message?: string }
  | { kind: 'hover'; hit: import('./hitTest').Hit | null; insertAt: Pt | null; message?: string };

/** A tool controller. Every handler returns true when it used the event. */
export interface ToolController {
  readonly id: ToolId;
  readonly preview: ToolPreview;
  /** Left button pressed. True = the tool takes this drag (the stage must not pan). */
  pointerDown(e: ToolPointer): boolean;
  pointerMove(e: ToolPointer): boolean;
  pointerUp(e: ToolPointer): boolean;
  /** A press and release without dragging. */
  click(e: ToolPointer): boolean;
  doubleClick(e: ToolPointer): boolean;
  /** Pointer left the canvas. */
  leave(): void;
  keyDown(e: ToolKey): boolean;
  /**
   * Abandon anything unfinished without dispatching. The one path for Esc
   * (Toolbox.keyDown) and for switching tools (Toolbox.setTool); true when
   * something was dropped (then Esc is used up).
   */
  cancel(): boolean;
  /** Called with the new preview whenever it changes. */
  onPreview(fn: (p: ToolPreview) => void): () => void;
}
