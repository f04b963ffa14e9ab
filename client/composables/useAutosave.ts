/**
 * Autosave of the interpretation canvas.
 *
 * `AutosaveEngine` is plain TypeScript (timers, API and store are injected,
 * so tests drive it without a browser); `useAutosave` wires it to the Pinia
 * store, the buildups API and Vue refs.
 *
 * What it does, after `delayMs` (default 800 ms) of quiet and never while a
 * gesture (drag) is in progress:
 * 1. deletes on the server the saved buildups that were deleted locally;
 * 2. creates new buildups on the server (POST → server id), recording what
 *    the server now holds (the name, no geometry) as the saved snapshot;
 * 3. saves every changed buildup with `PUT { version, name, geometry }`,
 *    marking the snapshot that was SENT as saved, so edits made while the
 *    request was running stay dirty and are saved in the next round.
 *
 * A 409 `version_conflict` stops autosaving that buildup and reports the
 * server's record (`details.current`); nothing is overwritten until the
 * person chooses: `resolveConflict(id, 'theirs')` replaces the local copy
 * with the saved one through a recorded action (undo brings the local copy
 * back), `resolveConflict(id, 'mine')` saves the local copy over the
 * server's current version.
 */
import { computed, onBeforeUnmount, shallowRef, watch, type ComputedRef, type ShallowRef } from 'vue';
import { ApiError, errorMessage, isApiError } from '../api/http';
import {
  conflictCurrent,
  createBuildup,
  deleteBuildup,
  saveBuildup,
  type BuildupConflictCurrent,
  type SaveBuildupBody,
  type SaveBuildupResult,
} from '../api/buildups';
import { actions, type Action } from '../canvas/actions';
import { fromGeometry, toSavePayload, type EditorBuildup } from '../canvas/model';
import type { TimerApi } from './useLiveReadings';

export type SaveState = 'saved' | 'saving' | 'dirty' | 'conflict' | 'error';

/** The server calls autosave needs. */
export interface AutosaveApi {
  create(name: string): Promise<{ id: number; version: number }>;
  save(serverId: number, body: SaveBuildupBody): Promise<SaveBuildupResult>;
  remove(serverId: number): Promise<void>;
}

/** The parts of the interpretation store autosave reads and writes. */
export interface AutosaveStore {
  dirtyBuildupIds: readonly string[];
  removedBuildups: readonly { id: string; serverId?: number }[];
  buildupById(id: string): EditorBuildup | undefined;
  dispatch(a: Action): boolean;
  markSaved(id: string, version: number, opts?: { serverId?: number; snapshot?: EditorBuildup }): void;
}

export interface Conflict {
  /** Local id of the buildup. */
  id: string;
  serverId: number;
  /** The record the server holds now. */
  current: BuildupConflictCurrent;
  /** The local copy at the moment of the refusal. */
  local: EditorBuildup;
}

export interface AutosaveStatus {
  /** A request is running. */
  saving: boolean;
  /** Message of the last failed request (cleared by the next success). */
  error: string | null;
  conflicts: Conflict[];
  lastSavedAt: Date | null;
}

export interface AutosaveEngineOptions {
  store: AutosaveStore;
  api: AutosaveApi;
  timers?: TimerApi;
  /** Quiet time after the last change (ms). */
  delayMs?: number;
  /** Wait before retrying after a network or server error (ms). */
  retryMs?: number;
  /** While true (a drag in progress) the save waits. */
  isBusy?: () => boolean;
  now?: () => Date;
  /** After each successful PUT (and create without geometry): local id, server id, the snapshot saved. */
  onSaved?: (id: string, serverId: number, snapshot: EditorBuildup) => void;
  onStatus?: (s: AutosaveStatus) => void;
}

export const AUTOSAVE_DELAY_MS = 800;
export const AUTOSAVE_RETRY_MS = 5000;

const realTimers: TimerApi = {
  setTimeout: (fn, ms) => globalThis.setTimeout(fn, ms),
  clearTimeout: (h) => globalThis.clearTimeout(h as ReturnType<typeof setTimeout>),
};

/** The state shown to the person, from the engine's status and the store's dirty lists. */
export function deriveSaveState(s: Pick<AutosaveStatus, 'saving' | 'error'> & { conflictCount: number; pendingCount: number }): SaveState {
  if (s.conflictCount > 0) return 'conflict';
  if (s.saving) return 'saving';
  if (s.error) return 'error';
  if (s.pendingCount > 0) return 'dirty';
  return 'saved';
}

/** A named, recorded action that puts the server's copy of a buildup in place of the local one. */
export function replaceWithSavedAction(id: string, current: BuildupConflictCurrent): Action {
  const loaded = fromGeometry({ id: current.id, name: current.name, version: current.version, geometry: current.geometry });
  const replacement: EditorBuildup = { ...loaded, id };
  return {
    name: 'loadSavedVersion',
    recordHistory: true,
    perform: (s) => {
      const i = s.buildups.findIndex((b) => b.id === id);
      if (i < 0) return s;
      const buildups = s.buildups.slice();
      buildups[i] = replacement;
      return { ...s, buildups };
    },
  };
}

const setMeta = (id: string, meta: { version: number; serverId?: number }) => actions.setServerMeta(id, meta);

/** Whether an error is worth retrying by itself (network, server trouble, rate limit). */
function transient(e: unknown): boolean {
  return !isApiError(e) || e.status === 0 || e.status >= 500 || e.status === 429;
}

export class AutosaveEngine {
  private readonly timers: TimerApi;
  private readonly delayMs: number;
  private readonly retryMs: number;
  private handle: unknown = null;
  private running: Promise<void> | null = null;
  private again = false;
  private disposed = false;
  private readonly conflicts = new Map<string, Conflict>();
  /** Server ids learned from creates, per local id (survives an undo/redo of the creation). */
  private readonly known = new Map<string, { serverId: number; version: number }>();
  private status: AutosaveStatus = { saving: false, error: null, conflicts: [], lastSavedAt: null };

  constructor(private readonly o: AutosaveEngineOptions) {
    this.timers = o.timers ?? realTimers;
    this.delayMs = o.delayMs ?? AUTOSAVE_DELAY_MS;
    this.retryMs = o.retryMs ?? AUTOSAVE_RETRY_MS;
  }

  get state(): AutosaveStatus {
    return this.status;
  }

  /** Local ids whose saving is stopped by a conflict. */
  get conflictIds(): string[] {
    return [...this.conflicts.keys()];
  }

  /** Is a save round waiting for its timer? */
  get scheduled(): boolean {
    return this.handle !== null;
  }

  /** Number of local changes not on the server yet (conflicted buildups excluded). */
  pendingCount(): number {
    const dirty = this.o.store.dirtyBuildupIds.filter((id) => !this.conflicts.has(id)).length;
    return dirty + this.o.store.removedBuildups.length;
  }

  private publish(patch: Partial<AutosaveStatus>): void {
    this.status = { ...this.status, ...patch, conflicts: [...this.conflicts.values()] };
    this.o.onStatus?.(this.status);
  }

  private clear(): void {
    if (this.handle !== null) this.timers.clearTimeout(this.handle);
    this.handle = null;
  }

  private arm(ms: number): void {
    this.clear();
    if (this.disposed) return;
    this.handle = this.timers.setTimeout(() => {
      this.handle = null;
      void this.flush();
    }, ms);
  }

  /** Something changed: save after `delayMs` of quiet (restarts the wait). */
  notify(): void {
    if (this.disposed) return;
    if (this.pendingCount() === 0 && !this.running) {
      this.clear();
      return;
    }
    this.arm(this.delayMs);
  }

  /**
   * Save now (unless a gesture is in progress: then wait another delay).
   * Resolves when this round and any round it triggered are done.
   */
  async flush(opts: { force?: boolean } = {}): Promise<void> {
    if (this.disposed) return;
    this.clear();
    if (!opts.force && this.o.isBusy?.()) {
      this.arm(this.delayMs);
      return;
    }
    if (this.running) {
      this.again = true;
      return this.running;
    }
    this.running = this.round().finally(() => {
      this.running = null;
    });
    await this.running;
    if (this.again && !this.disposed) {
      this.again = false;
      if (this.pendingCount() > 0) this.arm(this.delayMs);
    }
  }

  private async round(): Promise<void> {
    const { store, api } = this.o;
    let failed: unknown = null;
    let saved = false;
    this.publish({ saving: true });
    try {
      // 1. deletions
      for (const r of store.removedBuildups.slice()) {
        const serverId = r.serverId ?? this.known.get(r.id)?.serverId;
        if (serverId !== undefined) {
          try {
            await api.remove(serverId);
          } catch (e) {
            if (!(isApiError(e) && e.status === 404)) throw e;
          }
        }
        this.known.delete(r.id);
        this.conflicts.delete(r.id);
        store.markSaved(r.id, 0);
        saved = true;
      }
      // 2. creates and 3. saves, one buildup at a time
      for (const id of store.dirtyBuildupIds.slice()) {
        if (this.conflicts.has(id)) continue;
        let b = store.buildupById(id);
        if (!b) continue;
        if (b.serverId === undefined) {
          const k = this.known.get(id);
          if (k) {
            store.dispatch(setMeta(id, k));
          } else {
            const created = await api.create(b.name);
            this.known.set(id, { serverId: created.id, version: created.version });
            const now = store.buildupById(id);
            if (!now) {
              // Deleted locally while the create was running.
              await api.remove(created.id).catch(() => {});
              this.known.delete(id);
              continue;
            }
            // The server holds the name and no geometry yet.
            const held: EditorBuildup = { ...now, base: [], cycles: [], terminations: [], topIsDrowningSurface: false, name: b.name };
            store.markSaved(id, created.version, { serverId: created.id, snapshot: held });
            saved = true;
            if (!store.dirtyBuildupIds.includes(id)) {
              this.o.onSaved?.(id, created.id, store.buildupById(id)!);
              continue;
            }
          }
          b = store.buildupById(id)!;
        }
        const snapshot = b;
        const serverId = b.serverId!;
        try {
          const r = await api.save(serverId, toSavePayload(snapshot));
          this.known.set(id, { serverId, version: r.version });
          store.markSaved(id, r.version, { snapshot });
          saved = true;
          this.o.onSaved?.(id, serverId, snapshot);
        } catch (e) {
          const current = conflictCurrent(e);
          if (current) {
            this.conflicts.set(id, { id, serverId, current, local: store.buildupById(id) ?? snapshot });
            continue;
          }
          if (isApiError(e) && e.status === 404) {
            // Deleted on the server by someone else: save it again as a new record.
            this.known.delete(id);
            store.dispatch(setMeta(id, { version: 0 }));
            throw new ApiError(404, 'not_found', `“${snapshot.name}” was deleted on the server by someone else; it will be saved again as a new buildup.`);
          }
          throw e;
        }
      }
    } catch (e) {
      failed = e;
    }
    if (failed) {
      this.publish({ saving: false, error: errorMessage(failed, 'The interpretation could not be saved.') });
      if (transient(failed) || (isApiError(failed) && failed.status === 404)) this.arm(this.retryMs);
      return;
    }
    this.publish({ saving: false, error: null, ...(saved ? { lastSavedAt: (this.o.now ?? (() => new Date()))() } : {}) });
    if (this.pendingCount() > 0) this.again = true;
  }

  /** Which conflict (if any) concerns buildup `id`. */
  conflictOf(id: string): Conflict | undefined {
    return this.conflicts.get(id);
  }

  /**
   * Settle a conflict. 'theirs': the local buildup becomes the server's
   * record (a recorded action: undo brings the local copy back). 'mine':
   * the local copy is saved over the server's current version.
   */
  async resolveConflict(id: string, choice: 'theirs' | 'mine'): Promise<void> {
    const c = this.conflicts.get(id);
    if (!c) return;
    const { store } = this.o;
    this.conflicts.delete(id);
    if (choice === 'theirs') {
      store.dispatch(replaceWithSavedAction(id, c.current));
      store.markSaved(id, c.current.version, { serverId: c.serverId });
      this.known.set(id, { serverId: c.serverId, version: c.current.version });
      this.publish({});
      return;
    }
    store.dispatch(setMeta(id, { version: c.current.version, serverId: c.serverId }));
    this.known.set(id, { serverId: c.serverId, version: c.current.version });
    this.publish({});
    await this.flush({ force: true });
  }

  /** Forget everything (a new section was loaded). */
  reset(): void {
    this.clear();
    this.conflicts.clear();
    this.known.clear();
    this.again = false;
    this.publish({ error: null, lastSavedAt: null });
  }

  dispose(): void {
    this.clear();
    this.disposed = true;
  }
}

// ---------------------------------------------------------------------------
// the composable

export interface UseAutosaveArgs {
  store: AutosaveStore;
  /** Autosave runs only while this is true (editors on a loaded section). */
  enabled: () => boolean;
  /** True while a drag is in progress. */
  busy?: () => boolean;
  onSaved?: (id: string, serverId: number, snapshot: EditorBuildup) => void;
  delayMs?: number;
  api?: AutosaveApi;
}

export interface Autosave {
  engine: AutosaveEngine;
  state: ComputedRef<SaveState>;
  status: ShallowRef<AutosaveStatus>;
  /** Local changes not on the server, or a conflict or a request in flight: leaving would lose them. */
  unsafeToLeave: ComputedRef<boolean>;
  flush(): Promise<void>;
  resolve(id: string, choice: 'theirs' | 'mine'): Promise<void>;
}

/** The buildups API of one section (client/api/buildups.ts). */
export function sectionBuildupsApi(sectionId: () => number): AutosaveApi {
  return {
    create: (name) => createBuildup(sectionId(), name),
    save: (serverId, body) => saveBuildup(serverId, body),
    remove: (serverId) => deleteBuildup(serverId),
  };
}

export function useAutosave(args: UseAutosaveArgs & { sectionId: () => number }): Autosave {
  const status = shallowRef<AutosaveStatus>({ saving: false, error: null, conflicts: [], lastSavedAt: null });
  const engine = new AutosaveEngine({
    store: args.store,
    api: args.api ?? sectionBuildupsApi(args.sectionId),
    delayMs: args.delayMs,
    isBusy: args.busy,
    onSaved: args.onSaved,
    onStatus: (s) => (status.value = s),
  });

  const pending = computed(() => {
    const conflicted = new Set(status.value.conflicts.map((c) => c.id));
    return args.store.dirtyBuildupIds.filter((id) => !conflicted.has(id)).length + args.store.removedBuildups.length;
  });
  const state = computed(() =>
    deriveSaveState({ saving: status.value.saving, error: status.value.error, conflictCount: status.value.conflicts.length, pendingCount: pending.value }),
  );
  const unsafeToLeave = computed(() => args.enabled() && state.value !== 'saved');

  watch(
    () => [args.store.dirtyBuildupIds, args.store.removedBuildups, args.enabled()] as const,
    () => {
      if (args.enabled()) engine.notify();
    },
  );

  const onBeforeUnload = (e: BeforeUnloadEvent) => {
    if (!unsafeToLeave.value) return;
    e.preventDefault();
    e.returnValue = '';
  };
  window.addEventListener('beforeunload', onBeforeUnload);
  onBeforeUnmount(() => {
    window.removeEventListener('beforeunload', onBeforeUnload);
    engine.dispose();
  });

  return {
    engine,
    state,
    status,
    unsafeToLeave,
    flush: () => engine.flush({ force: true }),
    resolve: (id, choice) => engine.resolveConflict(id, choice),
  };
}
