/**
 * The set of canvas tools with one active at a time, the single-key tool
 * shortcuts and the routing of pointer and key events to the active tool.
 * Plain TypeScript: the Vue side (useCanvasTools) wraps it in refs.
 */
import { EditTool } from './edit';
import { MarginPinTool } from './marginPin';
import { RulerTool, type RulerOptions } from './ruler';
import { SelectTool } from './select';
import { StampTool } from './stamp';
import { AssistedTraceTool } from '../assist/assistedTrace';
import { TOOL_IDS, type ToolController, type ToolEnv, type ToolId, type ToolKey, type ToolPointer, type ToolPreview } from './types';

/** Single-key tool shortcuts (our own choice of keys). */
export const TOOL_KEYS: Readonly<Record<ToolId, string>> = Object.freeze({
  select: 'q',
  edit: 'w',
  trace: 'l',
  marginPin: 'n',
  stamp: 'j',
  ruler: 'u',
});

/** Key of the Note pin mode (outside the Toolbox: placing a pin changes no geometry, so every member may). */
export const NOTE_PIN_KEY = 'k';

/** Key that opens and closes the forward Model drawer (client/components/model/ModelDrawer.vue). */
export const MODEL_KEY = 'm';

/** Key switching the picture between TWT and the depth view (TWT sections only). */
export const DEPTH_VIEW_KEY = 'd';

export const TOOL_LABEL: Readonly<Record<ToolId, string>> = Object.freeze({
  select: 'Select',
  edit: 'Edit vertices',
  trace: 'Trace',
  marginPin: 'Margin pin',
  stamp: 'Termination stamp',
  ruler: 'Ruler',
});

export interface ShortcutEntry {
  keys: string[];
  what: string;
}

export interface ShortcutGroup {
  title: string;
  entries: ShortcutEntry[];
}

/** Everything the help overlay lists (the keys the canvas really handles). */
export const SHORTCUT_GROUPS: readonly ShortcutGroup[] = Object.freeze([
  {
    title: 'Tools',
    entries: TOOL_IDS.map((id) => ({ keys: [TOOL_KEYS[id].toUpperCase()], what: TOOL_LABEL[id] })),
  },
  {
    title: 'Trace',
    entries: [
      { keys: ['1', '2', '3', '4'], what: 'Trace the base · cycle top · left flank · right flank' },
      { keys: ['Click'], what: 'Add a vertex (snaps to nearby vertices and line ends)' },
      { keys: ['Double-click', 'Enter'], what: 'Finish the trace' },
      { keys: ['Backspace'], what: 'Remove the last unfinished vertex' },
      { keys: ['Esc'], what: 'Drop the unfinished trace' },
      { keys: ['G'], what: 'Follow mode: the segment to the cursor follows the event; click commits it' },
      { keys: ['X'], what: 'Auto-extend: one click follows the event both ways (one undo step)' },
      { keys: ['P'], what: 'Phase followed: peak · trough · zero crossing' },
      { keys: ['H'], what: 'Snap the selected line onto the event (±4 px)' },
    ],
  },
  {
    title: 'Edit vertices',
    entries: [
      { keys: ['Drag'], what: 'Move a vertex (one undo step per drag)' },
      { keys: ['Alt+Click', 'Ctrl+Click'], what: 'Insert a vertex on a line' },
      { keys: ['Delete', 'Backspace'], what: 'Delete the selected vertex' },
    ],
  },
  {
    title: 'Margin pin',
    entries: [
      { keys: ['1', '2', '3'], what: 'Side: nearer end of the top · left · right' },
      { keys: ['Shift+Click'], what: 'Pin the other side than the nearer end' },
      { keys: ['Drag'], what: 'Slide a pin along its top' },
    ],
  },
  {
    title: 'Termination stamp',
    entries: [
      { keys: ['1', '2', '3', '4'], what: 'Onlap · downlap · toplap · truncation' },
      { keys: ['Click'], what: 'Place a stamp' },
      { keys: ['Drag'], what: 'Move a stamp' },
    ],
  },
  {
    title: 'Ruler and selection',
    entries: [
      { keys: ['Click', 'Click'], what: 'Ruler: distance and true angle in depth' },
      { keys: ['Esc'], what: 'Clear the Ruler / the selection' },
      { keys: ['Delete', 'Backspace'], what: 'Select tool: delete the selected object' },
    ],
  },
  {
    title: 'Everywhere',
    entries: [
      { keys: ['Ctrl+Z'], what: 'Undo' },
      { keys: ['Ctrl+Shift+Z', 'Ctrl+Y'], what: 'Redo' },
      { keys: ['K'], what: 'Place a Note pin (click an object or a point; Esc cancels)' },
      { keys: ['M'], what: 'Open or close the forward Model of the selected buildup' },
      { keys: ['D'], what: 'Switch the picture between TWT and the depth view' },
      { keys: ['?'], what: 'Show or hide this list' },
      { keys: ['Space+Drag', 'Middle drag'], what: 'Pan' },
      { keys: ['Wheel', '+', '−'], what: 'Zoom' },
      { keys: ['F', '0'], what: 'Fit the section' },
    ],
  },
]);

export interface ToolboxOptions {
  ruler?: RulerOptions;
  initial?: ToolId;
}

export type Tools = {
  select: SelectTool;
  edit: EditTool;
  trace: AssistedTraceTool;
  marginPin: MarginPinTool;
  stamp: StampTool;
  ruler: RulerTool;
};

export class Toolbox {
  readonly tools: Tools;
  private _active: ToolId;
  private listeners = new Set<() => void>();

  constructor(env: ToolEnv, opts: ToolboxOptions = {}) {
    this.tools = {
      select: new SelectTool(env),
      edit: new EditTool(env),
      trace: new AssistedTraceTool(env),
      marginPin: new MarginPinTool(env),
      stamp: new StampTool(env),
      ruler: new RulerTool(env, opts.ruler),
    };
    this._active = opts.initial ?? 'select';
    for (const t of Object.values(this.tools) as ToolController[]) t.onPreview(() => t.id === this._active && this.emit());
  }

  get activeId(): ToolId {
    return this._active;
  }

  get active(): ToolController {
    return this.tools[this._active];
  }

  get preview(): ToolPreview {
    return this.active.preview;
  }

  /** Subscribe to tool switches and preview changes of the active tool. */
  onChange(fn: () => void): () => void {
    this.listeners.add(fn);
    return () => this.listeners.delete(fn);
  }

  private emit(): void {
    for (const fn of this.listeners) fn();
  }

  /** Switch tools; the old tool drops anything unfinished (no dispatch). */
  setTool(id: ToolId): void {
    if (!TOOL_IDS.includes(id)) throw new Error(`Toolbox.setTool: tool must be one of ${TOOL_IDS.join(', ')}`);
    if (id === this._active) return;
    this.active.cancel();
    this._active = id;
    this.emit();
  }

  pointerDown(e: ToolPointer): boolean {
    return this.active.pointerDown(e);
  }
  pointerMove(e: ToolPointer): boolean {
    return this.active.pointerMove(e);
  }
  pointerUp(e: ToolPointer): boolean {
    return this.active.pointerUp(e);
  }
  click(e: ToolPointer): boolean {
    return this.active.click(e);
  }
  doubleClick(e: ToolPointer): boolean {
    return this.active.doubleClick(e);
  }
  leave(): void {
    this.active.leave();
  }

  /**
   * Esc first cancels the active tool's unfinished work (the same `cancel()`
   * a tool switch runs); then the active tool's own keys (sub-keys, Enter,
   * Esc with nothing unfinished, e.g. Select clearing the selection), then
   * the tool letters.
   */
  keyDown(e: ToolKey): boolean {
    if (e.key === 'Escape' && !e.ctrl && !e.meta && !e.alt && this.active.cancel()) return true;
    if (this.active.keyDown(e)) return true;
    if (e.ctrl || e.meta || e.alt) return false;
    const k = e.key.toLowerCase();
    const id = TOOL_IDS.find((t) => TOOL_KEYS[t] === k);
    if (!id) return false;
    this.setTool(id);
    return true;
  }
}
