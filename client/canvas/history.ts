/**
 * Undo/redo for the interpretation canvas.
 *
 * A history entry keeps, for each buildup an action changed, the buildup
 * object before and after (`null` = absent), plus the buildup order before
 * and after when the set or order of buildups changed. Because actions share
 * untouched parts (structural sharing), a snapshot of a 10-cycle ×
 * 2,000-vertex buildup after a vertex move costs one new polyline array, one
 * cycles array and two small objects; everything else is shared.
 *
 * Server metadata (`version`, `serverId`) is not part of undo: undo and redo
 * keep the current values of those fields, so a save in between does not roll
 * the optimistic-locking version back.
 *
 * Everything here is pure: functions take a `Doc` (`{ state, history }`) and
 * return a new one.
 */
import type { Action } from './actions';
import type { EditorBuildup, EditorState } from './model';

export interface BuildupChange {
  id: string;
  before: EditorBuildup | null;
  after: EditorBuildup | null;
}

export interface HistoryEntry {
  name: string;
  key?: string;
  changes: BuildupChange[];
  /** Ids in order, only when the set or order of buildups changed. */
  orderBefore?: string[];
  orderAfter?: string[];
}

export interface History {
  /** Oldest first; the last entry is undone first. */
  past: HistoryEntry[];
  /** Most recently undone last; the last entry is redone first. */
  future: HistoryEntry[];
  /** When true the next keyed action starts a new entry instead of coalescing. */
  sealed: boolean;
  /** Maximum number of entries kept in `past`. */
  limit: number;
}

export interface Doc {
  state: EditorState;
  history: History;
}

export function createHistory(limit = 200): History {
  return { past: [], future: [], sealed: true, limit };
}

export function createDoc(state: EditorState = { buildups: [] }, limit?: number): Doc {
  return { state, history: createHistory(limit) };
}

export const canUndo = (h: History) => h.past.length > 0;
export const canRedo = (h: History) => h.future.length > 0;

/** End the current gesture: the next keyed action starts a new entry. */
export function seal(h: History): History {
  return h.sealed ? h : { ...h, sealed: true };
}

const ids = (s: EditorState) => s.buildups.map((b) => b.id);

function sameIds(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** The changes between two states (by reference), or null when they are equal. */
export function diffStates(prev: EditorState, next: EditorState): Omit<HistoryEntry, 'name' | 'key'> | null {
  if (prev === next || prev.buildups === next.buildups) return null;
  const prevById = new Map(prev.buildups.map((b) => [b.id, b]));
  const nextById = new Map(next.buildups.map((b) => [b.id, b]));
  const changes: BuildupChange[] = [];
  for (const b of next.buildups) {
    const before = prevById.get(b.id) ?? null;
    if (before !== b) changes.push({ id: b.id, before, after: b });
  }
  for (const b of prev.buildups) if (!nextById.has(b.id)) changes.push({ id: b.id, before: b, after: null });
  const ob = ids(prev);
  const oa = ids(next);
  const orderChanged = !sameIds(ob, oa);
  if (!changes.length && !orderChanged) return null;
  return orderChanged ? { changes, orderBefore: ob, orderAfter: oa } : { changes };
}

/** Merge a later entry into an earlier one (same gesture). */
function merge(first: HistoryEntry, later: Omit<HistoryEntry, 'name' | 'key'>): HistoryEntry {
  const byId = new Map(first.changes.map((c) => [c.id, { ...c }]));
  for (const c of later.changes) {
    const existing = byId.get(c.id);
    if (existing) existing.after = c.after;
    else byId.set(c.id, { ...c });
  }
  const changes = [...byId.values()];
  // An entry without order fields left the order as it was, so the order
  // before `first` (or after `later`) can be read off the other entry.
  const orderBefore = first.orderBefore ?? later.orderBefore;
  const orderAfter = later.orderAfter ?? first.orderAfter;
  const out: HistoryEntry = { name: first.name, changes };
  if (first.key !== undefined) out.key = first.key;
  if (orderBefore && orderAfter && !sameIds(orderBefore, orderAfter)) {
    out.orderBefore = orderBefore;
    out.orderAfter = orderAfter;
  }
  return out;
}

/** Record the step `prev → next` made by `action` (no-op for unrecorded actions). */
export function record(h: History, action: Pick<Action, 'name' | 'key' | 'recordHistory'>, prev: EditorState, next: EditorState): History {
  if (!action.recordHistory) return h;
  const diff = diffStates(prev, next);
  if (!diff) return h;
  const last = h.past[h.past.length - 1];
  if (!h.sealed && action.key !== undefined && last && last.key === action.key) {
    return { ...h, past: [...h.past.slice(0, -1), merge(last, diff)], future: [], sealed: false };
  }
  const entry: HistoryEntry = { name: action.name, ...diff };
  if (action.key !== undefined) entry.key = action.key;
  const past = h.past.length >= h.limit ? [...h.past.slice(h.past.length - h.limit + 1), entry] : [...h.past, entry];
  return { ...h, past, future: [], sealed: action.key === undefined };
}

/** Keep the current server metadata on a restored snapshot. */
function withMeta(snapshot: EditorBuildup, current: EditorBuildup | undefined): EditorBuildup {
  if (!current) return snapshot;
  if (snapshot.version === current.version && snapshot.serverId === current.serverId) return snapshot;
  const out: EditorBuildup = { ...snapshot, version: current.version };
  if (current.serverId !== undefined) out.serverId = current.serverId;
  else delete out.serverId;
  return out;
}

function applySide(state: EditorState, entry: HistoryEntry, side: 'before' | 'after'): EditorState {
  const byId = new Map(state.buildups.map((b) => [b.id, b]));
  for (const c of entry.changes) {
    const snap = c[side];
    if (snap === null) byId.delete(c.id);
    else byId.set(c.id, withMeta(snap, byId.get(c.id)));
  }
  const order = (side === 'before' ? entry.orderBefore : entry.orderAfter) ?? ids(state);
  const buildups = order.map((id) => {
    const b = byId.get(id);
    if (!b) throw new Error(`history: buildup "${id}" missing while applying "${entry.name}" (state changed outside history)`);
    return b;
  });
  return { ...state, buildups };
}

/** Run an action and record it. Returns the same doc when nothing changed. */
export function dispatch(doc: Doc, action: Action): Doc {
  const next = action.perform(doc.state);
  if (next === doc.state) return doc;
  return { state: next, history: record(doc.history, action, doc.state, next) };
}

export function undo(doc: Doc): Doc {
  const { past, future } = doc.history;
  if (!past.length) return doc;
  const entry = past[past.length - 1];
  return {
    state: applySide(doc.state, entry, 'before'),
    history: { ...doc.history, past: past.slice(0, -1), future: [...future, entry], sealed: true },
  };
}

export function redo(doc: Doc): Doc {
  const { past, future } = doc.history;
  if (!future.length) return doc;
  const entry = future[future.length - 1];
  return {
    state: applySide(doc.state, entry, 'after'),
    history: { ...doc.history, past: [...past, entry], future: future.slice(0, -1), sealed: true },
  };
}

// ---------------------------------------------------------------------------
// save tracking (for autosave)

/** Same content, ignoring server metadata (`version`, `serverId`); cheap thanks to shared references. */
export function sameContent(a: EditorBuildup, b: EditorBuildup): boolean {
  if (a === b) return true;
  if (a.id !== b.id || a.name !== b.name || a.topIsDrowningSurface !== b.topIsDrowningSurface) return false;
  if (!sameValue(a.base, b.base) || !sameValue(a.terminations, b.terminations)) return false;
  return sameValue(a.cycles, b.cycles);
}

function sameValue(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return false;
  if (Array.isArray(a) !== Array.isArray(b)) return false;
  if (Array.isArray(a)) {
    const bb = b as unknown[];
    if (a.length !== bb.length) return false;
    for (let i = 0; i < a.length; i++) if (!sameValue(a[i], bb[i])) return false;
    return true;
  }
  const ka = Object.keys(a);
  const kb = Object.keys(b);
  if (ka.length !== kb.length) return false;
  for (const k of ka) if (!sameValue((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k])) return false;
  return true;
}

/** Saved snapshot per buildup id (what the server holds). */
export type SavedMap = ReadonlyMap<string, EditorBuildup>;

/** Ids of buildups that are new or differ from their saved snapshot. */
export function dirtyIds(saved: SavedMap, state: EditorState): string[] {
  const out: string[] = [];
  for (const b of state.buildups) {
    const s = saved.get(b.id);
    if (!s || !sameContent(s, b)) out.push(b.id);
  }
  return out;
}

/** Saved buildups that are no longer in the state (to delete on the server). */
export function removedBuildups(saved: SavedMap, state: EditorState): { id: string; serverId?: number }[] {
  const present = new Set(state.buildups.map((b) => b.id));
  const out: { id: string; serverId?: number }[] = [];
  for (const [id, b] of saved) if (!present.has(id)) out.push(b.serverId === undefined ? { id } : { id, serverId: b.serverId });
  return out;
}
