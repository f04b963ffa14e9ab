/**
 * Editor state of the interpretation canvas for the open section.
 *
 * A thin Pinia wrapper over client/canvas (actions.ts, history.ts, model.ts),
 * where the logic lives and is unit-tested. The document is held in a
 * shallowRef and replaced on every change, so records stay plain (no deep
 * proxies over thousands of vertices) and reference equality keeps working.
 * Konva components read `buildups` / `selection` and only call `dispatch`.
 */
import { defineStore } from 'pinia';
import { computed, ref, shallowRef } from 'vue';
import { ActionError, actions, type Action } from '../canvas/actions';
import * as H from '../canvas/history';
import {
  EMPTY_SELECTION,
  ModelError,
  fromGeometry,
  reconcileSelection,
  type BuildupRecord,
  type EditorBuildup,
  type SelectedElement,
  type Selection,
} from '../canvas/model';

/** Canvas tools (house names). */
export const TOOL_NAMES = [
  'select',
  'pan',
  'traceBase',
  'traceTop',
  'traceFlank',
  'marginPin',
  'terminationStamp',
  'notePin',
  'ruler',
] as const;
export type ToolName = (typeof TOOL_NAMES)[number];

export const useInterpretationStore = defineStore('interpretation', () => {
  const doc = shallowRef<H.Doc>(H.createDoc());
  /** What the server holds, per buildup id (for autosave). */
  const saved = shallowRef<Map<string, EditorBuildup>>(new Map());
  const selection = shallowRef<Selection>(EMPTY_SELECTION);
  const activeTool = ref<ToolName>('select');
  /** The last refused action (bad argument, vertex deletion below 2 points…). */
  const lastError = shallowRef<ActionError | null>(null);

  const buildups = computed(() => doc.value.state.buildups);
  const canUndo = computed(() => H.canUndo(doc.value.history));
  const canRedo = computed(() => H.canRedo(doc.value.history));
  /** New or changed buildups that need saving. */
  const dirtyBuildupIds = computed(() => H.dirtyIds(saved.value, doc.value.state));
  /** Saved buildups that were deleted locally and must be deleted on the server. */
  const removedBuildups = computed(() => H.removedBuildups(saved.value, doc.value.state));
  /** Changes only when the server's copy changes (a load, a save, a delete): `serverId:version` of every saved buildup. */
  const savedKey = computed(() => [...saved.value.values()].map((b) => `${b.serverId ?? '-'}:${b.version}`).sort().join(','));

  function buildupById(id: string): EditorBuildup | undefined {
    return doc.value.state.buildups.find((b) => b.id === id);
  }

  function setDoc(next: H.Doc): boolean {
    if (next === doc.value) return false;
    doc.value = next;
    selection.value = reconcileSelection(selection.value, next.state);
    return true;
  }

  /**
   * Run an action. Returns true when the state changed. An ActionError is
   * kept in `lastError` and reported as `false`; other errors propagate.
   */
  function dispatch(action: Action): boolean {
    try {
      const changed = setDoc(H.dispatch(doc.value, action));
      lastError.value = null;
      return changed;
    } catch (e) {
      if (e instanceof ActionError) {
        lastError.value = e;
        return false;
      }
      throw e;
    }
  }

  const undo = () => setDoc(H.undo(doc.value));
  const redo = () => setDoc(H.redo(doc.value));

  /** End of a drag: the next move of the same vertex/pin starts a new undo step. */
  function endGesture(): void {
    const h = H.seal(doc.value.history);
    if (h !== doc.value.history) doc.value = { ...doc.value, history: h };
  }

  /** Load the section's buildups from server records; clears history and selection. */
  function load(records: readonly (BuildupRecord | unknown)[]): void {
    const list = records.map((r, i) => {
      try {
        return fromGeometry(r);
      } catch (e) {
        if (e instanceof ModelError) throw new ModelError(`records[${i}]${e.path ? '.' + e.path : ''}`, e.message.slice(e.path.length + 2));
        throw e;
      }
    });
    const empty = H.createDoc();
    const next = H.dispatch(empty, actions.replaceAll(list));
    doc.value = { state: next.state, history: empty.history };
    saved.value = new Map(list.map((b) => [b.id, b]));
    selection.value = EMPTY_SELECTION;
    lastError.value = null;
  }

  /**
   * A save of `buildupId` succeeded with the new `version` (and `serverId`
   * after a create). Pass the `snapshot` that was sent when edits may have
   * happened during the request. For a buildup deleted locally, forgets it.
   */
  function markSaved(buildupId: string, version: number, opts: { serverId?: number; snapshot?: EditorBuildup } = {}): void {
    const current = buildupById(buildupId);
    const map = new Map(saved.value);
    if (!current) {
      map.delete(buildupId);
      saved.value = map;
      return;
    }
    const meta = opts.serverId === undefined ? { version } : { version, serverId: opts.serverId };
    const next = H.dispatch(doc.value, actions.setServerMeta(buildupId, meta));
    doc.value = next;
    const patched = buildupById(buildupId)!;
    const basis = opts.snapshot && opts.snapshot !== current ? opts.snapshot : null;
    map.set(buildupId, basis ? { ...basis, version, serverId: patched.serverId } : patched);
    saved.value = map;
  }

  function select(buildupId: string | null, cycleId: string | null = null, element: SelectedElement | null = null): void {
    selection.value = reconcileSelection({ buildupId, cycleId, element }, doc.value.state);
  }

  function setTool(tool: ToolName): void {
    if (!TOOL_NAMES.includes(tool)) throw new Error(`setTool: tool must be one of ${TOOL_NAMES.join(', ')}`);
    activeTool.value = tool;
  }

  return {
    doc,
    buildups,
    selection,
    activeTool,
    lastError,
    canUndo,
    canRedo,
    dirtyBuildupIds,
    removedBuildups,
    savedKey,
    buildupById,
    dispatch,
    undo,
    redo,
    endGesture,
    load,
    markSaved,
    select,
    setTool,
  };
});
