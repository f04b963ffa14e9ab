import { createPinia, setActivePinia } from 'pinia';
import { beforeEach, describe, expect, it } from 'vitest';
import { actions, type PolylineTarget } from '../../../client/canvas/actions';
import { toGeometry, type BuildupRecord } from '../../../client/canvas/model';
import { useInterpretationStore } from '../../../client/stores/interpretation';
import { deepFreeze, kestrel, marrow } from './fixtures';

const records = (): BuildupRecord[] =>
  deepFreeze([
    { id: 11, name: 'Kestrel Knoll', version: 3, geometry: toGeometry(kestrel()) },
    { id: 12, name: 'Marrow Bank', version: 1, geometry: toGeometry(marrow()) },
  ]);
const top2: PolylineTarget = { buildupId: '11', cycleId: 'c2', kind: 'top' };

beforeEach(() => setActivePinia(createPinia()));

describe('interpretation store', () => {
  it('loads records and starts clean with empty history', () => {
    const s = useInterpretationStore();
    s.load(records());
    expect(s.buildups.map((b) => b.id)).toEqual(['11', '12']);
    expect(s.canUndo).toBe(false);
    expect(s.dirtyBuildupIds).toEqual([]);
    expect(() => s.load([records()[0], { id: 1, name: 'x', version: 0 }])).toThrow(/^records\[1\]\.geometry: /);
    expect(s.buildups.map((b) => b.id)).toEqual(['11', '12']); // a failed load changes nothing
  });

  it('dispatch, undo and redo; redo survives a selection change and is cleared by a new action', () => {
    const s = useInterpretationStore();
    s.load(records());
    const before = s.buildups;
    expect(s.dispatch(actions.moveVertex(top2, 1, [505, 555]))).toBe(true);
    expect(s.dirtyBuildupIds).toEqual(['11']);
    s.undo();
    expect(s.buildups).toStrictEqual(before);
    expect(s.dirtyBuildupIds).toEqual([]);
    expect(s.canRedo).toBe(true);
    s.select('11', 'c1', { kind: 'marginLeft' });
    s.setTool('marginPin');
    expect(s.canRedo).toBe(true);
    s.redo();
    expect(s.buildups[0].cycles[1].top[1]).toEqual([505, 555]);
    s.undo();
    s.dispatch(actions.setCycleAge('11', 'c1', 13));
    expect(s.canRedo).toBe(false);
  });

  it('drags coalesce until endGesture()', () => {
    const s = useInterpretationStore();
    s.load(records());
    for (const u of [501, 502, 503]) s.dispatch(actions.moveVertex(top2, 1, [u, 560]));
    s.endGesture();
    for (const u of [504, 505]) s.dispatch(actions.moveVertex(top2, 1, [u, 560]));
    s.undo();
    expect(s.buildups[0].cycles[1].top[1]).toEqual([503, 560]);
    s.undo();
    expect(s.buildups[0].cycles[1].top[1]).toEqual([500, 560]);
    expect(s.canUndo).toBe(false);
  });

  it('keeps refused actions in lastError and drops a selection that no longer exists', () => {
    const s = useInterpretationStore();
    s.load(records());
    expect(s.dispatch(actions.deleteVertex({ buildupId: '11', cycleId: 'c3', kind: 'top' }, 0))).toBe(false);
    expect(s.lastError?.message).toMatch(/deleteVertex: i: a top keeps at least 2 points/);
    s.select('11', 'c2', { kind: 'top', vertex: 2 });
    s.dispatch(actions.deleteCycle('11', 'c2'));
    expect(s.selection).toEqual({ buildupId: '11', cycleId: null, element: null });
    expect(s.lastError).toBeNull();
    s.undo();
    expect(s.buildups[0].cycles.map((c) => c.id)).toEqual(['c1', 'c2', 'c3']);
    expect(() => s.setTool('lasso' as 'pan')).toThrow(/setTool/);
  });

  it('markSaved: version kept across undo, in-flight edits stay dirty, deletes are reported', () => {
    const s = useInterpretationStore();
    s.load(records());
    s.dispatch(actions.renameBuildup('11', 'Kestrel Knoll West'));
    const sent = s.buildupById('11')!;
    s.dispatch(actions.setCycleAge('11', 'c2', 12)); // edit while the save is in flight
    s.markSaved('11', 4, { snapshot: sent });
    expect(s.buildupById('11')!.version).toBe(4);
    expect(s.dirtyBuildupIds).toEqual(['11']);
    s.markSaved('11', 5);
    expect(s.dirtyBuildupIds).toEqual([]);
    s.undo();
    expect(s.buildupById('11')).toMatchObject({ version: 5, serverId: 11 });
    expect(s.buildupById('11')!.cycles[1].ageTopMa).toBeNull();
    expect(s.dirtyBuildupIds).toEqual(['11']);

    s.dispatch(actions.createBuildup({ id: 'new1', name: 'Tern Shoal' }));
    expect(s.dirtyBuildupIds).toContain('new1');
    s.markSaved('new1', 0, { serverId: 13 });
    expect(s.buildupById('new1')).toMatchObject({ serverId: 13, version: 0 });
    expect(s.dirtyBuildupIds).not.toContain('new1');

    s.dispatch(actions.deleteBuildup('12'));
    expect(s.removedBuildups).toEqual([{ id: '12', serverId: 12 }]);
    s.markSaved('12', 0);
    expect(s.removedBuildups).toEqual([]);
  });

  it('savedKey moves with the server copy only (load, save, delete), not with local edits', () => {
    const s = useInterpretationStore();
    s.load(records());
    const loaded = s.savedKey;
    expect(loaded).toBe('11:3,12:1');
    s.dispatch(actions.renameBuildup('11', 'Kestrel Knoll West'));
    expect(s.savedKey).toBe(loaded);
    s.markSaved('11', 4);
    expect(s.savedKey).toBe('11:4,12:1');
    s.dispatch(actions.deleteBuildup('12'));
    expect(s.savedKey).toBe('11:4,12:1'); // deleted here, not yet on the server
    s.markSaved('12', 0);
    expect(s.savedKey).toBe('11:4');
  });
});
