// Over 500 lines on purpose: the one registry of every named editor action (history, tools, the Ledger and tests all dispatch from this single table).
/**
 * The action registry of the interpretation canvas.
 *
 * Every change to the editor state is a named action
 * `{ name, perform(state) → nextState, recordHistory, key? }`. `perform` is
 * pure: it never mutates its input, and it shares every untouched buildup,
 * cycle and polyline with the previous state (structural sharing), so history
 * can keep cheap snapshots and reference equality means "unchanged". An
 * action that changes nothing returns the very same state object.
 *
 * Action creators validate their arguments eagerly where they can and throw
 * ActionError (naming the action and the field path) from `perform` when the
 * state does not fit (unknown id, index out of range, a vertex deletion that
 * would leave fewer than 2 points).
 *
 * Coalescing: actions with the same `key` dispatched one after the other are
 * merged into one history entry (a vertex drag, a Margin pin drag). Call
 * `seal()` on the history (the store's `endGesture()`) at the end of a
 * gesture to start a fresh entry for the next one.
 */
import { isPt, type Pt } from './geometry';
import {
  TERMINATION_TYPES,
  emptyBuildup,
  emptyCycle,
  newId,
  type EditorBuildup,
  type EditorCycle,
  type EditorState,
  type EditorTermination,
  type Side,
  type TerminationType,
} from './model';

export interface Action {
  name: string;
  perform(state: EditorState): EditorState;
  recordHistory: boolean;
  key?: string;
}

/** A polyline in the editor state. `cycleId` is required for everything but the base. */
export type PolylineKind = 'base' | 'top' | 'flankLeft' | 'flankRight';
export interface PolylineTarget {
  buildupId: string;
  cycleId?: string;
  kind: PolylineKind;
}

export class ActionError extends Error {
  constructor(
    readonly action: string,
    readonly path: string,
    message: string,
  ) {
    super(`${action}: ${path}: ${message}`);
    this.name = 'ActionError';
  }
}

export const EMPTY_STATE: EditorState = Object.freeze({ buildups: [] }) as unknown as EditorState;

// ---------------------------------------------------------------------------
// validation and lookup helpers

function checkPt(action: string, path: string, p: unknown): Pt {
  if (!isPt(p)) throw new ActionError(action, path, 'must be a finite [u, v] point');
  return p;
}

function checkLine(action: string, path: string, pts: unknown): Pt[] {
  if (!Array.isArray(pts)) throw new ActionError(action, path, 'must be a list of [u, v] points');
  pts.forEach((p, i) => checkPt(action, `${path}[${i}]`, p));
  return pts as Pt[];
}

function checkSide(action: string, side: unknown): Side {
  if (side !== 'left' && side !== 'right') throw new ActionError(action, 'side', 'must be "left" or "right"');
  return side;
}

function checkTerminationType(action: string, type: unknown): TerminationType {
  if (!TERMINATION_TYPES.includes(type as TerminationType))
    throw new ActionError(action, 'type', `must be one of ${TERMINATION_TYPES.join(', ')}`);
  return type as TerminationType;
}

function checkName(action: string, name: unknown): string {
  if (typeof name !== 'string' || !name.trim()) throw new ActionError(action, 'name', 'is required');
  if (name.trim().length > 120) throw new ActionError(action, 'name', 'must be at most 120 characters');
  return name.trim();
}

function checkTarget(action: string, t: PolylineTarget): PolylineTarget {
  if (!t || typeof t.buildupId !== 'string') throw new ActionError(action, 'target.buildupId', 'is required');
  if (!['base', 'top', 'flankLeft', 'flankRight'].includes(t.kind))
    throw new ActionError(action, 'target.kind', 'must be base, top, flankLeft or flankRight');
  if (t.kind !== 'base' && typeof t.cycleId !== 'string')
    throw new ActionError(action, 'target.cycleId', `is required for a ${t.kind}`);
  return t;
}

const samePt = (a: Pt | null, b: Pt | null) => a === b || (!!a && !!b && a[0] === b[0] && a[1] === b[1]);

function sameLine(a: readonly Pt[] | null, b: readonly Pt[] | null): boolean {
  if (a === b) return true;
  if (!a || !b || a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!samePt(a[i], b[i])) return false;
  return true;
}

function updateBuildup(
  state: EditorState,
  action: string,
  buildupId: string,
  fn: (b: EditorBuildup) => EditorBuildup,
): EditorState {
  const i = state.buildups.findIndex((b) => b.id === buildupId);
  if (i < 0) throw new ActionError(action, 'buildupId', `no buildup "${buildupId}"`);
  const prev = state.buildups[i];
  const next = fn(prev);
  if (next === prev) return state;
  const buildups = state.buildups.slice();
  buildups[i] = next;
  return { ...state, buildups };
}

function updateCycle(
  state: EditorState,
  action: string,
  buildupId: string,
  cycleId: string,
  fn: (c: EditorCycle) => EditorCycle,
): EditorState {
  return updateBuildup(state, action, buildupId, (b) => {
    const i = b.cycles.findIndex((c) => c.id === cycleId);
    if (i < 0) throw new ActionError(action, 'cycleId', `no cycle "${cycleId}" in buildup "${buildupId}"`);
    const prev = b.cycles[i];
    const next = fn(prev);
    if (next === prev) return b;
    const cycles = b.cycles.slice();
    cycles[i] = next;
    return { ...b, cycles };
  });
}

function updateTermination(
  state: EditorState,
  action: string,
  buildupId: string,
  terminationId: string,
  fn: (t: EditorTermination) => EditorTermination | null,
): EditorState {
  return updateBuildup(state, action, buildupId, (b) => {
    const i = b.terminations.findIndex((t) => t.id === terminationId);
    if (i < 0) throw new ActionError(action, 'terminationId', `no termination "${terminationId}" in buildup "${buildupId}"`);
    const prev = b.terminations[i];
    const next = fn(prev);
    if (next === prev) return b;
    const terminations = b.terminations.slice();
    if (next === null) terminations.splice(i, 1);
    else terminations[i] = next;
    return { ...b, terminations };
  });
}

/** Read the polyline a target addresses (null for an absent flank). */
export function getPolyline(state: EditorState, target: PolylineTarget): Pt[] | null {
  const b = state.buildups.find((x) => x.id === target.buildupId);
  if (!b) return null;
  if (target.kind === 'base') return b.base;
  const c = b.cycles.find((x) => x.id === target.cycleId);
  return c ? c[target.kind] : null;
}

/** Replace the polyline a target addresses; `fn` gets the current one ([] for an absent flank). */
function updatePolyline(
  state: EditorState,
  action: string,
  target: PolylineTarget,
  fn: (pts: Pt[]) => Pt[] | null,
): EditorState {
  checkTarget(action, target);
  if (target.kind === 'base') {
    return updateBuildup(state, action, target.buildupId, (b) => {
      const next = fn(b.base) ?? [];
      return next === b.base ? b : { ...b, base: next };
    });
  }
  const kind = target.kind;
  return updateCycle(state, action, target.buildupId, target.cycleId!, (c) => {
    const cur = c[kind];
    const next = fn(cur ?? []);
    if (next === cur || (next === null && cur === null)) return c;
    if (kind === 'top') return { ...c, top: next ?? [] };
    return { ...c, [kind]: next };
  });
}

/** A string that names a polyline; used in coalescing keys. */
export function targetKey(t: PolylineTarget): string {
  return `${t.buildupId}/${t.cycleId ?? '-'}/${t.kind}`;
}

// ---------------------------------------------------------------------------
// action creators

export type CycleInit = Partial<EditorCycle>;
export type BuildupInit = Partial<EditorBuildup> & { name: string };

function makeCycle(action: string, init: CycleInit = {}): EditorCycle {
  const c = emptyCycle(init);
  checkLine(action, 'cycle.top', c.top);
  if (c.marginLeft !== null) checkPt(action, 'cycle.marginLeft', c.marginLeft);
  if (c.marginRight !== null) checkPt(action, 'cycle.marginRight', c.marginRight);
  if (c.flankLeft !== null) checkLine(action, 'cycle.flankLeft', c.flankLeft);
  if (c.flankRight !== null) checkLine(action, 'cycle.flankRight', c.flankRight);
  return c;
}

function insertCycleAt(action: string, buildupId: string, at: number | 'end', init?: CycleInit): Action {
  const cycle = makeCycle(action, init);
  return {
    name: action,
    recordHistory: true,
    perform: (s) =>
      updateBuildup(s, action, buildupId, (b) => {
        if (b.cycles.some((c) => c.id === cycle.id)) throw new ActionError(action, 'cycle.id', `cycle "${cycle.id}" exists`);
        const pos = at === 'end' ? b.cycles.length : at;
        if (!Number.isInteger(pos) || pos < 0 || pos > b.cycles.length)
          throw new ActionError(action, 'at', `must be an integer from 0 to ${b.cycles.length}`);
        const cycles = b.cycles.slice();
        cycles.splice(pos, 0, cycle);
        return { ...b, cycles };
      }),
  };
}

export const actions = {
  /** Add a buildup (appended to the list). */
  createBuildup(init: BuildupInit): Action {
    const name = checkName('createBuildup', init?.name);
    const b = emptyBuildup({ ...init, name });
    checkLine('createBuildup', 'base', b.base);
    return {
      name: 'createBuildup',
      recordHistory: true,
      perform: (s) => {
        if (s.buildups.some((x) => x.id === b.id)) throw new ActionError('createBuildup', 'id', `buildup "${b.id}" exists`);
        return { ...s, buildups: [...s.buildups, b] };
      },
    };
  },

  renameBuildup(buildupId: string, name: string): Action {
    const n = checkName('renameBuildup', name);
    return {
      name: 'renameBuildup',
      recordHistory: true,
      perform: (s) => updateBuildup(s, 'renameBuildup', buildupId, (b) => (b.name === n ? b : { ...b, name: n })),
    };
  },

  deleteBuildup(buildupId: string): Action {
    return {
      name: 'deleteBuildup',
      recordHistory: true,
      perform: (s) => {
        if (!s.buildups.some((b) => b.id === buildupId))
          throw new ActionError('deleteBuildup', 'buildupId', `no buildup "${buildupId}"`);
        return { ...s, buildups: s.buildups.filter((b) => b.id !== buildupId) };
      },
    };
  },

  /** Trace the base (any number of points while editing; [] clears it). */
  setBase(buildupId: string, pts: Pt[]): Action {
    checkLine('setBase', 'pts', pts);
    return {
      name: 'setBase',
      recordHistory: true,
      perform: (s) =>
        updateBuildup(s, 'setBase', buildupId, (b) => (sameLine(b.base, pts) ? b : { ...b, base: pts })),
    };
  },

  /** Append a cycle as the youngest. */
  addCycle(buildupId: string, init?: CycleInit): Action {
    return insertCycleAt('addCycle', buildupId, 'end', init);
  },

  /** Insert a cycle at position `at` (0 = oldest, cycles.length = youngest). */
  insertCycle(buildupId: string, at: number, init?: CycleInit): Action {
    return insertCycleAt('insertCycle', buildupId, at, init);
  },

  /** Move the cycle at position `from` to position `to` (0-based, oldest first). */
  moveCycle(buildupId: string, from: number, to: number): Action {
    return {
      name: 'moveCycle',
      recordHistory: true,
      perform: (s) =>
        updateBuildup(s, 'moveCycle', buildupId, (b) => {
          const n = b.cycles.length;
          for (const [k, v] of [['from', from], ['to', to]] as const)
            if (!Number.isInteger(v) || v < 0 || v >= n)
              throw new ActionError('moveCycle', k, `must be an integer from 0 to ${n - 1}`);
          if (from === to) return b;
          const cycles = b.cycles.slice();
          const [c] = cycles.splice(from, 1);
          cycles.splice(to, 0, c);
          return { ...b, cycles };
        }),
    };
  },

  deleteCycle(buildupId: string, cycleId: string): Action {
    return {
      name: 'deleteCycle',
      recordHistory: true,
      perform: (s) =>
        updateBuildup(s, 'deleteCycle', buildupId, (b) => {
          if (!b.cycles.some((c) => c.id === cycleId))
            throw new ActionError('deleteCycle', 'cycleId', `no cycle "${cycleId}" in buildup "${buildupId}"`);
          return { ...b, cycles: b.cycles.filter((c) => c.id !== cycleId) };
        }),
    };
  },

  setCycleTop(buildupId: string, cycleId: string, pts: Pt[]): Action {
    checkLine('setCycleTop', 'pts', pts);
    return {
      name: 'setCycleTop',
      recordHistory: true,
      perform: (s) =>
        updateCycle(s, 'setCycleTop', buildupId, cycleId, (c) => (sameLine(c.top, pts) ? c : { ...c, top: pts })),
    };
  },

  /** Place, move (coalesces per pin) or remove (null) a Margin pin. */
  setMargin(buildupId: string, cycleId: string, side: Side, pt: Pt | null): Action {
    checkSide('setMargin', side);
    if (pt !== null) checkPt('setMargin', 'pt', pt);
    const field = side === 'left' ? 'marginLeft' : 'marginRight';
    return {
      name: 'setMargin',
      recordHistory: true,
      key: `setMargin|${buildupId}/${cycleId}/${side}`,
      perform: (s) =>
        updateCycle(s, 'setMargin', buildupId, cycleId, (c) => (samePt(c[field], pt) ? c : { ...c, [field]: pt })),
    };
  },

  /** Trace a flank, or remove it with null. */
  setFlank(buildupId: string, cycleId: string, side: Side, pts: Pt[] | null): Action {
    checkSide('setFlank', side);
    if (pts !== null) checkLine('setFlank', 'pts', pts);
    const field = side === 'left' ? 'flankLeft' : 'flankRight';
    return {
      name: 'setFlank',
      recordHistory: true,
      perform: (s) =>
        updateCycle(s, 'setFlank', buildupId, cycleId, (c) => (sameLine(c[field], pts) ? c : { ...c, [field]: pts })),
    };
  },

  /** Age of the cycle's top in Ma, or null when unknown. */
  setCycleAge(buildupId: string, cycleId: string, ageMa: number | null): Action {
    if (ageMa !== null && (typeof ageMa !== 'number' || !Number.isFinite(ageMa) || ageMa < 0))
      throw new ActionError('setCycleAge', 'ageMa', 'must be a finite number ≥ 0 or null');
    return {
      name: 'setCycleAge',
      recordHistory: true,
      perform: (s) =>
        updateCycle(s, 'setCycleAge', buildupId, cycleId, (c) => (c.ageTopMa === ageMa ? c : { ...c, ageTopMa: ageMa })),
    };
  },

  /** Systems tract label of the cycle (e.g. LST, TST, HST), or null. */
  setSystemsTract(buildupId: string, cycleId: string, tract: string | null): Action {
    if (tract !== null && (typeof tract !== 'string' || !tract.trim() || tract.length > 40))
      throw new ActionError('setSystemsTract', 'tract', 'must be a non-empty label of at most 40 characters or null');
    const t = tract === null ? null : tract.trim();
    return {
      name: 'setSystemsTract',
      recordHistory: true,
      perform: (s) =>
        updateCycle(s, 'setSystemsTract', buildupId, cycleId, (c) =>
          c.systemsTract === t ? c : { ...c, systemsTract: t },
        ),
    };
  },

  /** Place a Termination stamp. */
  addTermination(buildupId: string, type: TerminationType, at: Pt, id: string = newId()): Action {
    checkTerminationType('addTermination', type);
    checkPt('addTermination', 'at', at);
    return {
      name: 'addTermination',
      recordHistory: true,
      perform: (s) =>
        updateBuildup(s, 'addTermination', buildupId, (b) => {
          if (b.terminations.some((t) => t.id === id))
            throw new ActionError('addTermination', 'id', `termination "${id}" exists`);
          return { ...b, terminations: [...b.terminations, { id, type, at }] };
        }),
    };
  },

  /** Move a Termination stamp (coalesces per stamp). */
  moveTermination(buildupId: string, terminationId: string, at: Pt): Action {
    checkPt('moveTermination', 'at', at);
    return {
      name: 'moveTermination',
      recordHistory: true,
      key: `moveTermination|${buildupId}/${terminationId}`,
      perform: (s) =>
        updateTermination(s, 'moveTermination', buildupId, terminationId, (t) => (samePt(t.at, at) ? t : { ...t, at })),
    };
  },

  setTerminationType(buildupId: string, terminationId: string, type: TerminationType): Action {
    checkTerminationType('setTerminationType', type);
    return {
      name: 'setTerminationType',
      recordHistory: true,
      perform: (s) =>
        updateTermination(s, 'setTerminationType', buildupId, terminationId, (t) => (t.type === type ? t : { ...t, type })),
    };
  },

  deleteTermination(buildupId: string, terminationId: string): Action {
    return {
      name: 'deleteTermination',
      recordHistory: true,
      perform: (s) => updateTermination(s, 'deleteTermination', buildupId, terminationId, () => null),
    };
  },

  /** Flag (or unflag) the youngest top as a drowning unconformity. */
  setTopIsDrowningSurface(buildupId: string, value: boolean): Action {
    if (typeof value !== 'boolean') throw new ActionError('setTopIsDrowningSurface', 'value', 'must be true or false');
    return {
      name: 'setTopIsDrowningSurface',
      recordHistory: true,
      perform: (s) =>
        updateBuildup(s, 'setTopIsDrowningSurface', buildupId, (b) =>
          b.topIsDrowningSurface === value ? b : { ...b, topIsDrowningSurface: value },
        ),
    };
  },

  /** Move vertex `i` of a polyline. Successive moves of the same vertex coalesce. */
  moveVertex(target: PolylineTarget, i: number, pt: Pt): Action {
    checkTarget('moveVertex', target);
    checkPt('moveVertex', 'pt', pt);
    return {
      name: 'moveVertex',
      recordHistory: true,
      key: `moveVertex|${targetKey(target)}|${i}`,
      perform: (s) =>
        updatePolyline(s, 'moveVertex', target, (pts) => {
          if (!Number.isInteger(i) || i < 0 || i >= pts.length)
            throw new ActionError('moveVertex', 'i', `must be an integer from 0 to ${pts.length - 1}`);
          if (samePt(pts[i], pt)) return pts;
          const next = pts.slice();
          next[i] = pt;
          return next;
        }),
    };
  },

  /**
   * Insert a vertex on segment `segmentIndex` (between vertices i and i + 1).
   * `-1` prepends before the first vertex, `length - 1` appends after the last.
   * Inserting into an absent flank creates it.
   */
  insertVertex(target: PolylineTarget, segmentIndex: number, pt: Pt): Action {
    checkTarget('insertVertex', target);
    checkPt('insertVertex', 'pt', pt);
    return {
      name: 'insertVertex',
      recordHistory: true,
      perform: (s) =>
        updatePolyline(s, 'insertVertex', target, (pts) => {
          if (!Number.isInteger(segmentIndex) || segmentIndex < -1 || segmentIndex > pts.length - 1)
            throw new ActionError('insertVertex', 'segmentIndex', `must be an integer from -1 to ${pts.length - 1}`);
          const next = pts.slice();
          next.splice(segmentIndex + 1, 0, pt);
          return next;
        }),
    };
  },

  /**
   * Delete vertex `i`. Refused (ActionError) when the polyline would be left
   * with fewer than 2 points: remove a whole line with `removePolyline`.
   */
  deleteVertex(target: PolylineTarget, i: number): Action {
    checkTarget('deleteVertex', target);
    return {
      name: 'deleteVertex',
      recordHistory: true,
      perform: (s) =>
        updatePolyline(s, 'deleteVertex', target, (pts) => {
          if (!Number.isInteger(i) || i < 0 || i >= pts.length)
            throw new ActionError('deleteVertex', 'i', `must be an integer from 0 to ${pts.length - 1}`);
          if (pts.length <= 2)
            throw new ActionError(
              'deleteVertex',
              'i',
              `a ${target.kind} keeps at least 2 points; remove the whole line instead (removePolyline)`,
            );
          const next = pts.slice();
          next.splice(i, 1);
          return next;
        }),
    };
  },

  /** Remove a whole polyline: base and top become empty, a flank becomes absent. */
  removePolyline(target: PolylineTarget): Action {
    checkTarget('removePolyline', target);
    return {
      name: 'removePolyline',
      recordHistory: true,
      perform: (s) =>
        updatePolyline(s, 'removePolyline', target, (pts) => {
          if (target.kind === 'base' || target.kind === 'top') return pts.length === 0 ? pts : [];
          return null;
        }),
    };
  },

  /** Load buildups (from the server); not recorded in history. */
  replaceAll(buildups: EditorBuildup[]): Action {
    const ids = new Set<string>();
    buildups.forEach((b, i) => {
      if (ids.has(b.id)) throw new ActionError('replaceAll', `buildups[${i}].id`, `duplicate id "${b.id}"`);
      ids.add(b.id);
    });
    return { name: 'replaceAll', recordHistory: false, perform: (s) => ({ ...s, buildups: buildups.slice() }) };
  },

  /** Record the server id / version after a save; not recorded in history. */
  setServerMeta(buildupId: string, meta: { version: number; serverId?: number }): Action {
    if (!Number.isInteger(meta.version) || meta.version < 0)
      throw new ActionError('setServerMeta', 'version', 'must be an integer ≥ 0');
    return {
      name: 'setServerMeta',
      recordHistory: false,
      perform: (s) =>
        updateBuildup(s, 'setServerMeta', buildupId, (b) => {
          const serverId = meta.serverId ?? b.serverId;
          if (b.version === meta.version && b.serverId === serverId) return b;
          return serverId === undefined ? { ...b, version: meta.version } : { ...b, version: meta.version, serverId };
        }),
    };
  },
} as const;

export type ActionName = keyof typeof actions;

/** Run an action; returns the same state object when nothing changed. */
export function performAction(state: EditorState, action: Action): EditorState {
  return action.perform(state);
}
