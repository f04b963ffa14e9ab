import { describe, expect, it } from 'vitest';
import { actions, type PolylineTarget } from '../../../client/canvas/actions';
import {
  createDoc,
  dirtyIds,
  dispatch,
  redo,
  removedBuildups,
  sameContent,
  seal,
  undo,
  type Doc,
} from '../../../client/canvas/history';
import { emptyCycle, type EditorBuildup, type EditorState, type Pt } from '../../../client/canvas/model';
import { deepFreeze, fixtureState, line } from './fixtures';

const top2: PolylineTarget = { buildupId: 'b1', cycleId: 'c2', kind: 'top' };
const topOf = (s: EditorState, cycleId: string) => s.buildups[0].cycles.find((c) => c.id === cycleId)!.top;

function drag(doc: Doc, target: PolylineTarget, i: number, path: Pt[]): Doc {
  for (const p of path) doc = dispatch(doc, actions.moveVertex(target, i, p));
  return doc;
}

describe('coalesced drags', () => {
  it('successive moves of one vertex make one entry that undoes and redoes exactly', () => {
    const s0 = fixtureState();
    const d = drag(createDoc(s0), top2, 1, [[501, 561], [503, 559], [510, 550], [512, 548]]);
    expect(d.history.past).toHaveLength(1);
    expect(d.history.past[0].name).toBe('moveVertex');
    const s1 = structuredClone(d.state);
    const u = undo(d);
    expect(u.state).toStrictEqual(s0);
    expect(u.state.buildups[0]).toBe(s0.buildups[0]);
    expect(redo(u).state).toStrictEqual(s1);
    expect(topOf(redo(u).state, 'c2')[1]).toEqual([512, 548]);
  });

  it('a drag of another vertex, or after seal(), starts a new entry', () => {
    let d = drag(createDoc(fixtureState()), top2, 1, [[501, 561], [502, 562]]);
    d = drag(d, top2, 0, [[261, 601], [262, 602]]);
    expect(d.history.past).toHaveLength(2);
    d = { ...d, history: seal(d.history) };
    d = drag(d, top2, 0, [[263, 603]]);
    expect(d.history.past).toHaveLength(3);
    d = undo(d);
    expect(topOf(d.state, 'c2')[0]).toEqual([262, 602]);
    d = undo(d);
    expect(topOf(d.state, 'c2')[0]).toEqual([260, 600]);
    expect(topOf(d.state, 'c2')[1]).toEqual([502, 562]);
  });

  it('an unkeyed action between two drags of the same vertex splits them', () => {
    let d = drag(createDoc(fixtureState()), top2, 1, [[501, 561]]);
    d = dispatch(d, actions.setCycleAge('b1', 'c2', 10));
    d = drag(d, top2, 1, [[505, 565]]);
    expect(d.history.past.map((e) => e.name)).toEqual(['moveVertex', 'setCycleAge', 'moveVertex']);
  });

  it('a drag after an undo does not merge into the undone entry', () => {
    let d = drag(createDoc(fixtureState()), top2, 1, [[501, 561]]);
    d = undo(d);
    d = drag(d, top2, 1, [[520, 540]]);
    expect(d.history.past).toHaveLength(1);
    expect(d.history.future).toHaveLength(0);
    expect(topOf(undo(d).state, 'c2')[1]).toEqual([500, 560]);
  });

  it('coalesced Margin pin and Termination stamp drags', () => {
    const s0 = fixtureState();
    let d = createDoc(s0);
    for (const u of [301, 302, 305]) d = dispatch(d, actions.setMargin('b1', 'c2', 'left', [u, 590]));
    for (const u of [611, 612]) d = dispatch(d, actions.moveTermination('b1', 't2', [u, 530]));
    expect(d.history.past.map((e) => e.name)).toEqual(['setMargin', 'moveTermination']);
    expect(undo(undo(d)).state).toStrictEqual(s0);
  });
});

describe('redo stack', () => {
  it('is cleared by a new recorded action but not by an unrecorded one', () => {
    let d = dispatch(createDoc(fixtureState()), actions.renameBuildup('b2', 'Marrow Bank North'));
    d = undo(d);
    d = dispatch(d, actions.setServerMeta('b2', { version: 5 }));
    expect(d.history.future).toHaveLength(1);
    const r = redo(d);
    expect(r.state.buildups[1]).toMatchObject({ name: 'Marrow Bank North', version: 5 });
    d = dispatch(d, actions.setTopIsDrowningSurface('b1', true));
    expect(d.history.future).toHaveLength(0);
    expect(redo(d)).toBe(d);
  });

  it('undo with nothing to undo returns the same doc', () => {
    const d = createDoc(fixtureState());
    expect(undo(d)).toBe(d);
    expect(redo(d)).toBe(d);
  });

  it('a chain of mixed actions unwinds to the start and replays to the end', () => {
    const s0 = fixtureState();
    let d = createDoc(s0);
    const steps = [
      actions.createBuildup({ id: 'b3', name: 'Tern Shoal', base: [[0, 10], [40, 12]] }),
      actions.addCycle('b3', { id: 'n1', top: [[5, 8], [35, 8]] }),
      actions.setMargin('b3', 'n1', 'left', [8, 8]),
      actions.deleteBuildup('b2'),
      actions.moveCycle('b1', 0, 2),
      actions.insertVertex(top2, 1, [600, 570]),
      actions.deleteBuildup('b1'),
    ];
    const states: EditorState[] = [structuredClone(s0)];
    for (const a of steps) {
      d = dispatch(d, a);
      states.push(structuredClone(d.state));
    }
    expect(d.state.buildups.map((x) => x.id)).toEqual(['b3']);
    for (let k = steps.length - 1; k >= 0; k--) {
      d = undo(d);
      expect(d.state).toStrictEqual(states[k]);
    }
    for (let k = 1; k <= steps.length; k++) {
      d = redo(d);
      expect(d.state).toStrictEqual(states[k]);
    }
  });

  it('keeps at most `limit` entries', () => {
    let d = createDoc(fixtureState(), 5);
    for (let i = 0; i < 8; i++) d = dispatch(d, actions.setCycleAge('b1', 'c1', i));
    expect(d.history.past).toHaveLength(5);
    while (d.history.past.length) d = undo(d);
    expect(d.state.buildups[0].cycles[0].ageTopMa).toBe(2);
  });
});

describe('memory: snapshots share structure', () => {
  it('a vertex move on a 10 × 2,000-vertex buildup copies only the moved polyline', () => {
    const big: EditorBuildup = deepFreeze({
      id: 'big',
      name: 'Kestrel Knoll',
      version: 0,
      base: line(0, 20000, 2000, () => 3000),
      cycles: Array.from({ length: 10 }, (_, k) =>
        emptyCycle({ id: `k${k}`, top: line(1000 + 50 * k, 19000 - 50 * k, 2000, (u) => 2800 - 100 * k - u / 1000) }),
      ),
      terminations: [],
      topIsDrowningSurface: false,
    });
    const s0: EditorState = deepFreeze({ buildups: [big] });
    let d = createDoc(s0);
    for (let j = 0; j < 50; j++) d = dispatch(d, actions.moveVertex({ buildupId: 'big', cycleId: 'k4', kind: 'top' }, 700, [9000 + j, 2300]));
    const entry = d.history.past[0];
    expect(d.history.past).toHaveLength(1);
    const before = entry.changes[0].before!;
    const after = entry.changes[0].after!;
    expect(before).toBe(big);
    expect(after.base).toBe(big.base);
    after.cycles.forEach((c, k) => {
      if (k !== 4) expect(c).toBe(big.cycles[k]);
    });
    const newTop = after.cycles[4].top;
    const shared = newTop.filter((p, i) => p === big.cycles[4].top[i]).length;
    expect(shared).toBe(1999);
  });
});

describe('save tracking', () => {
  it('dirty ids follow content, not references; undo back to the saved content is clean', () => {
    const s0 = fixtureState();
    const saved = new Map(s0.buildups.map((x) => [x.id, x]));
    let d = createDoc(s0);
    expect(dirtyIds(saved, d.state)).toEqual([]);
    d = dispatch(d, actions.moveVertex(top2, 1, [510, 555]));
    expect(dirtyIds(saved, d.state)).toEqual(['b1']);
    d = dispatch(d, actions.moveVertex(top2, 1, [500, 560]));
    expect(dirtyIds(saved, d.state)).toEqual([]);
    d = dispatch(d, actions.createBuildup({ id: 'b9', name: 'Tern Shoal' }));
    d = dispatch(d, actions.deleteBuildup('b2'));
    expect(dirtyIds(saved, d.state)).toEqual(['b9']);
    expect(removedBuildups(saved, d.state)).toEqual([{ id: 'b2' }]);
    d = undo(d);
    expect(removedBuildups(saved, d.state)).toEqual([]);
  });

  it('sameContent ignores version and serverId only', () => {
    const a = fixtureState().buildups[0];
    expect(sameContent(a, { ...a, version: 99, serverId: 1 })).toBe(true);
    expect(sameContent(a, { ...a, name: 'Other' })).toBe(false);
    expect(sameContent(a, { ...a, cycles: a.cycles.slice(0, 2) })).toBe(false);
    expect(sameContent(a, structuredClone(a))).toBe(true);
  });
});
