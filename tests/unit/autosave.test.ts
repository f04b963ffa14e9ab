/**
 * Autosave scheduling and conflict handling (client/composables/useAutosave.ts)
 * against the real interpretation store, with injected timers and a scripted API.
 */
import { createPinia, setActivePinia } from 'pinia';
import { beforeEach, describe, expect, it } from 'vitest';
import { ApiError } from '../../client/api/http';
import type { SaveBuildupBody } from '../../client/api/buildups';
import { actions } from '../../client/canvas/actions';
import { toGeometry, type BuildupGeometry, type Pt } from '../../client/canvas/model';
import { AutosaveEngine, deriveSaveState, type AutosaveApi } from '../../client/composables/useAutosave';
import type { TimerApi } from '../../client/composables/useLiveReadings';
import { useInterpretationStore } from '../../client/stores/interpretation';

/** Timers that only fire when the test says so. */
class ManualTimers implements TimerApi {
  now = 0;
  private seq = 0;
  private pending = new Map<number, { at: number; fn: () => void }>();
  setTimeout(fn: () => void, ms: number): unknown {
    const id = ++this.seq;
    this.pending.set(id, { at: this.now + ms, fn });
    return id;
  }
  clearTimeout(h: unknown): void {
    this.pending.delete(h as number);
  }
  get count(): number {
    return this.pending.size;
  }
  /** Advance the clock, firing due timers in order; lets promise chains settle after each. */
  async advance(ms: number): Promise<void> {
    const end = this.now + ms;
    for (;;) {
      const due = [...this.pending.entries()].filter(([, t]) => t.at <= end).sort((a, b) => a[1].at - b[1].at)[0];
      if (!due) break;
      this.pending.delete(due[0]);
      this.now = due[1].at;
      due[1].fn();
      await settle();
    }
    this.now = end;
    await settle();
  }
}

const settle = async () => {
  for (let i = 0; i < 20; i++) await Promise.resolve();
};

interface Deferred<T> {
  promise: Promise<T>;
  resolve(v: T): void;
  reject(e: unknown): void;
}
function deferred<T>(): Deferred<T> {
  let resolve!: (v: T) => void;
  let reject!: (e: unknown) => void;
  const promise = new Promise<T>((r, j) => {
    resolve = r;
    reject = j;
  });
  return { promise, resolve, reject };
}

/** An in-memory server with optimistic locking, recording every call. */
class FakeServer implements AutosaveApi {
  calls: string[] = [];
  records = new Map<number, { name: string; version: number; geometry: BuildupGeometry }>();
  private nextId = 100;
  /** When set, the next save waits on it. */
  gate: Deferred<void> | null = null;
  /** When set, the next call fails with it. */
  failNext: unknown = null;
  saves: { id: number; body: SaveBuildupBody }[] = [];

  async create(name: string) {
    this.calls.push(`create ${name}`);
    this.throwIfFailing();
    const id = this.nextId++;
    this.records.set(id, { name, version: 1, geometry: { base: [], cycles: [], terminations: [], topIsDrowningSurface: false } });
    return { id, version: 1 };
  }
  async save(id: number, body: SaveBuildupBody) {
    this.calls.push(`save ${id} v${body.version}`);
    this.saves.push({ id, body });
    if (this.gate) {
      const g = this.gate;
      this.gate = null;
      await g.promise;
    }
    this.throwIfFailing();
    const r = this.records.get(id);
    if (!r) throw new ApiError(404, 'not_found', 'Buildup not found');
    if (r.version !== body.version)
      throw new ApiError(409, 'version_conflict', 'Someone saved a newer version', { current: { id, name: r.name, version: r.version, geometry: r.geometry, updatedAt: '2024-01-01T00:00:00Z' } });
    r.version++;
    r.geometry = body.geometry;
    if (body.name) r.name = body.name;
    return { version: r.version, updatedAt: '2024-01-01T00:00:00Z' };
  }
  async remove(id: number) {
    this.calls.push(`delete ${id}`);
    this.throwIfFailing();
    this.records.delete(id);
  }
  private throwIfFailing(): void {
    if (this.failNext) {
      const e = this.failNext;
      this.failNext = null;
      throw e;
    }
  }
}

const line = (...pts: Pt[]) => pts;

let store: ReturnType<typeof useInterpretationStore>;
let timers: ManualTimers;
let server: FakeServer;
let busy: boolean;
let saved: string[];

function engine(delayMs = 800) {
  return new AutosaveEngine({
    store,
    api: server,
    timers,
    delayMs,
    retryMs: 5000,
    isBusy: () => busy,
    onSaved: (id, serverId) => saved.push(`${id}→${serverId}`),
  });
}

beforeEach(() => {
  setActivePinia(createPinia());
  store = useInterpretationStore();
  timers = new ManualTimers();
  server = new FakeServer();
  busy = false;
  saved = [];
});

describe('deriveSaveState', () => {
  it('puts conflicts before a running save, a running save before errors, errors before unsaved edits', () => {
    expect(deriveSaveState({ saving: true, error: 'x', conflictCount: 1, pendingCount: 3 })).toBe('conflict');
    expect(deriveSaveState({ saving: true, error: 'x', conflictCount: 0, pendingCount: 3 })).toBe('saving');
    expect(deriveSaveState({ saving: false, error: 'x', conflictCount: 0, pendingCount: 3 })).toBe('error');
    expect(deriveSaveState({ saving: false, error: null, conflictCount: 0, pendingCount: 3 })).toBe('dirty');
    expect(deriveSaveState({ saving: false, error: null, conflictCount: 0, pendingCount: 0 })).toBe('saved');
  });
});

describe('AutosaveEngine', () => {
  it('waits for quiet, then creates a new buildup and saves its geometry once', async () => {
    const e = engine();
    store.dispatch(actions.createBuildup({ id: 'k', name: 'Kestrel Knoll' }));
    e.notify();
    await timers.advance(500);
    store.dispatch(actions.setBase('k', line([0, 10], [100, 12])));
    e.notify();
    await timers.advance(700); // 1,200 ms after the first change but only 700 after the last
    expect(server.calls).toEqual([]);
    await timers.advance(100);
    expect(server.calls).toEqual(['create Kestrel Knoll', 'save 100 v1']);
    expect(store.dirtyBuildupIds).toEqual([]);
    expect(store.buildupById('k')).toMatchObject({ serverId: 100, version: 2 });
    expect(server.records.get(100)!.geometry.base).toEqual([[0, 10], [100, 12]]);
    expect(saved).toEqual(['k→100']);
    expect(e.state).toMatchObject({ saving: false, error: null });
    expect(e.state.lastSavedAt).toBeInstanceOf(Date);
  });

  it('creates an empty buildup without a second request', async () => {
    const e = engine();
    store.dispatch(actions.createBuildup({ id: 'k', name: 'Empty' }));
    e.notify();
    await timers.advance(800);
    expect(server.calls).toEqual(['create Empty']);
    expect(store.dirtyBuildupIds).toEqual([]);
  });

  it('never saves in the middle of a drag', async () => {
    const e = engine();
    store.dispatch(actions.createBuildup({ id: 'k', name: 'K', base: line([0, 0], [10, 0]) }));
    busy = true;
    e.notify();
    await timers.advance(5000);
    expect(server.calls).toEqual([]);
    busy = false;
    await timers.advance(800);
    expect(server.calls).toEqual(['create K', 'save 100 v1']);
  });

  it('keeps edits made while a save is running dirty and saves them in the next round', async () => {
    const e = engine();
    store.load([{ id: 7, name: 'K', version: 3, geometry: toGeometry({ id: '7', name: 'K', version: 3, base: line([0, 0], [10, 0]), cycles: [], terminations: [], topIsDrowningSurface: false }) }]);
    server.records.set(7, { name: 'K', version: 3, geometry: toGeometry(store.buildupById('7')!) });
    store.dispatch(actions.setBase('7', line([0, 0], [20, 0])));
    e.notify();
    server.gate = deferred<void>();
    const gate = server.gate;
    await timers.advance(800);
    expect(server.calls).toEqual(['save 7 v3']);
    expect(e.state.saving).toBe(true);
    // An edit while the request is out.
    store.dispatch(actions.setBase('7', line([0, 0], [30, 0])));
    e.notify();
    gate.resolve();
    await settle();
    expect(store.buildupById('7')!.version).toBe(4);
    expect(store.dirtyBuildupIds).toEqual(['7']); // the edit made during the request is not marked saved
    await timers.advance(800);
    expect(server.calls).toEqual(['save 7 v3', 'save 7 v4']);
    expect(server.saves[1].body.geometry.base).toEqual([[0, 0], [30, 0]]);
    expect(store.dirtyBuildupIds).toEqual([]);
  });

  it('deletes on the server what was deleted locally, and an undo of a creation before its save', async () => {
    const e = engine();
    store.dispatch(actions.createBuildup({ id: 'a', name: 'A', base: line([0, 0], [5, 5]) }));
    e.notify();
    await timers.advance(800);
    expect(server.records.has(100)).toBe(true);
    store.dispatch(actions.deleteBuildup('a'));
    expect(store.removedBuildups).toEqual([{ id: 'a', serverId: 100 }]);
    e.notify();
    await timers.advance(800);
    expect(server.calls.at(-1)).toBe('delete 100');
    expect(server.records.has(100)).toBe(false);
    expect(store.removedBuildups).toEqual([]);
  });

  it('stops on a version conflict, keeps the local edits, and loads the saved version on request (undo gives the local copy back)', async () => {
    const e = engine();
    store.load([{ id: 7, name: 'K', version: 3, geometry: toGeometry({ id: '7', name: 'K', version: 3, base: line([0, 0], [10, 0]), cycles: [], terminations: [], topIsDrowningSurface: false }) }]);
    // Someone else saved version 4 with another base.
    server.records.set(7, { name: 'K (theirs)', version: 4, geometry: { base: [[1, 1], [99, 1]], cycles: [], terminations: [], topIsDrowningSurface: true } });
    store.dispatch(actions.setBase('7', line([0, 0], [50, 0])));
    e.notify();
    await timers.advance(800);
    expect(server.calls).toEqual(['save 7 v3']);
    expect(e.conflictIds).toEqual(['7']);
    expect(e.state.conflicts[0].current.version).toBe(4);
    expect(server.records.get(7)!.geometry.base).toEqual([[1, 1], [99, 1]]); // nothing overwritten
    // Further edits are not sent while the conflict stands.
    store.dispatch(actions.renameBuildup('7', 'K (mine)'));
    e.notify();
    await timers.advance(5000);
    expect(server.calls).toEqual(['save 7 v3']);
    expect(store.buildupById('7')!.base).toEqual([[0, 0], [50, 0]]);

    await e.resolveConflict('7', 'theirs');
    expect(e.conflictIds).toEqual([]);
    expect(store.buildupById('7')).toMatchObject({ name: 'K (theirs)', version: 4, base: [[1, 1], [99, 1]], topIsDrowningSurface: true });
    expect(store.dirtyBuildupIds).toEqual([]);
    store.undo();
    expect(store.buildupById('7')).toMatchObject({ name: 'K (mine)', base: [[0, 0], [50, 0]], version: 4 });
    // The local copy, restored by undo, is now an ordinary edit on top of version 4.
    e.notify();
    await timers.advance(800);
    expect(server.calls.at(-1)).toBe('save 7 v4');
    expect(server.records.get(7)!.name).toBe('K (mine)');
  });

  it('"keep mine" saves the local copy over the current version', async () => {
    const e = engine();
    store.load([{ id: 7, name: 'K', version: 3, geometry: toGeometry({ id: '7', name: 'K', version: 3, base: line([0, 0], [10, 0]), cycles: [], terminations: [], topIsDrowningSurface: false }) }]);
    server.records.set(7, { name: 'K', version: 6, geometry: { base: [[1, 1], [99, 1]], cycles: [], terminations: [], topIsDrowningSurface: false } });
    store.dispatch(actions.setBase('7', line([0, 0], [50, 0])));
    e.notify();
    await timers.advance(800);
    expect(e.conflictIds).toEqual(['7']);
    await e.resolveConflict('7', 'mine');
    expect(server.calls).toEqual(['save 7 v3', 'save 7 v6']);
    expect(server.records.get(7)).toMatchObject({ version: 7, geometry: { base: [[0, 0], [50, 0]] } });
    expect(store.buildupById('7')!.version).toBe(7);
    expect(store.dirtyBuildupIds).toEqual([]);
  });

  it('reports a network error and retries by itself; a refused request waits for the next change', async () => {
    const e = engine();
    store.dispatch(actions.createBuildup({ id: 'k', name: 'K', base: line([0, 0], [10, 0]) }));
    server.failNext = new ApiError(0, 'network_error', 'Cannot reach the Cayline server');
    e.notify();
    await timers.advance(800);
    expect(e.state.error).toBe('Cannot reach the Cayline server');
    expect(store.dirtyBuildupIds).toEqual(['k']);
    await timers.advance(5000);
    expect(e.state.error).toBeNull();
    expect(store.dirtyBuildupIds).toEqual([]);

    store.dispatch(actions.setBase('k', line([0, 0], [40, 0])));
    server.failNext = new ApiError(400, 'validation_failed', 'geometry.base[0]: bad point');
    e.notify();
    await timers.advance(800);
    expect(e.state.error).toBe('geometry.base[0]: bad point');
    const n = server.calls.length;
    await timers.advance(60_000);
    expect(server.calls.length).toBe(n); // no retry loop on a refusal
  });
});
