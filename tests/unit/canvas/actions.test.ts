import { describe, expect, it } from 'vitest';
import { ActionError, actions, getPolyline, type Action, type PolylineTarget } from '../../../client/canvas/actions';
import { createDoc, dispatch, redo, undo } from '../../../client/canvas/history';
import type { EditorState } from '../../../client/canvas/model';
import { deepFreeze, fixtureState } from './fixtures';

const top2: PolylineTarget = { buildupId: 'b1', cycleId: 'c2', kind: 'top' };
const base1: PolylineTarget = { buildupId: 'b1', kind: 'base' };
const flankR1: PolylineTarget = { buildupId: 'b1', cycleId: 'c1', kind: 'flankRight' };
const flankL1: PolylineTarget = { buildupId: 'b1', cycleId: 'c1', kind: 'flankLeft' };

const b = (s: EditorState, id = 'b1') => s.buildups.find((x) => x.id === id)!;
const cyc = (s: EditorState, id: string) => b(s).cycles.find((c) => c.id === id)!;
const cycleIds = (s: EditorState) => b(s).cycles.map((c) => c.id);

interface Case {
  title: string;
  action: () => Action;
  check: (before: EditorState, after: EditorState) => void;
}

const cases: Case[] = [
  {
    title: 'createBuildup',
    action: () => actions.createBuildup({ id: 'b3', name: '  Tern Shoal ' }),
    check: (_, a) => {
      expect(a.buildups.map((x) => x.id)).toEqual(['b1', 'b2', 'b3']);
      expect(b(a, 'b3')).toMatchObject({ name: 'Tern Shoal', version: 0, base: [], cycles: [], terminations: [] });
      expect(b(a, 'b3').serverId).toBeUndefined();
    },
  },
  {
    title: 'renameBuildup',
    action: () => actions.renameBuildup('b2', 'Marrow Bank East'),
    check: (s, a) => {
      expect(b(a, 'b2').name).toBe('Marrow Bank East');
      expect(b(a, 'b1')).toBe(b(s, 'b1'));
    },
  },
  {
    title: 'deleteBuildup',
    action: () => actions.deleteBuildup('b1'),
    check: (_, a) => expect(a.buildups.map((x) => x.id)).toEqual(['b2']),
  },
  {
    title: 'setBase',
    action: () => actions.setBase('b2', [[1, 2], [3, 4], [5, 6]]),
    check: (_, a) => expect(b(a, 'b2').base).toEqual([[1, 2], [3, 4], [5, 6]]),
  },
  {
    title: 'addCycle (appended youngest)',
    action: () => actions.addCycle('b1', { id: 'c4', top: [[400, 480], [600, 480]] }),
    check: (s, a) => {
      expect(cycleIds(a)).toEqual(['c1', 'c2', 'c3', 'c4']);
      expect(cyc(a, 'c4')).toMatchObject({ marginLeft: null, marginRight: null, flankLeft: null, ageTopMa: null });
      expect(cyc(a, 'c1')).toBe(cyc(s, 'c1'));
    },
  },
  {
    title: 'insertCycle at 0 (new oldest)',
    action: () => actions.insertCycle('b1', 0, { id: 'c0' }),
    check: (_, a) => expect(cycleIds(a)).toEqual(['c0', 'c1', 'c2', 'c3']),
  },
  {
    title: 'insertCycle in the middle',
    action: () => actions.insertCycle('b1', 2, { id: 'cx' }),
    check: (_, a) => expect(cycleIds(a)).toEqual(['c1', 'c2', 'cx', 'c3']),
  },
  {
    title: 'moveCycle youngest to oldest',
    action: () => actions.moveCycle('b1', 2, 0),
    check: (_, a) => expect(cycleIds(a)).toEqual(['c3', 'c1', 'c2']),
  },
  {
    title: 'moveCycle oldest to middle',
    action: () => actions.moveCycle('b1', 0, 1),
    check: (_, a) => expect(cycleIds(a)).toEqual(['c2', 'c1', 'c3']),
  },
  {
    title: 'deleteCycle',
    action: () => actions.deleteCycle('b1', 'c2'),
    check: (_, a) => expect(cycleIds(a)).toEqual(['c1', 'c3']),
  },
  {
    title: 'setCycleTop',
    action: () => actions.setCycleTop('b1', 'c3', [[380, 520], [500, 500], [620, 522]]),
    check: (_, a) => expect(cyc(a, 'c3').top).toHaveLength(3),
  },
  {
    title: 'setMargin (place)',
    action: () => actions.setMargin('b1', 'c3', 'left', [400, 515]),
    check: (_, a) => expect(cyc(a, 'c3').marginLeft).toEqual([400, 515]),
  },
  {
    title: 'setMargin (remove)',
    action: () => actions.setMargin('b1', 'c1', 'right', null),
    check: (_, a) => expect(cyc(a, 'c1').marginRight).toBeNull(),
  },
  {
    title: 'setFlank (trace)',
    action: () => actions.setFlank('b1', 'c1', 'right', [[850, 700], [880, 790]]),
    check: (_, a) => expect(cyc(a, 'c1').flankRight).toEqual([[850, 700], [880, 790]]),
  },
  {
    title: 'setFlank (remove)',
    action: () => actions.setFlank('b1', 'c1', 'left', null),
    check: (_, a) => expect(cyc(a, 'c1').flankLeft).toBeNull(),
  },
  {
    title: 'setCycleAge',
    action: () => actions.setCycleAge('b1', 'c2', 11.6),
    check: (_, a) => expect(cyc(a, 'c2').ageTopMa).toBe(11.6),
  },
  {
    title: 'setSystemsTract',
    action: () => actions.setSystemsTract('b1', 'c1', 'HST'),
    check: (_, a) => expect(cyc(a, 'c1').systemsTract).toBe('HST'),
  },
  {
    title: 'addTermination',
    action: () => actions.addTermination('b1', 'toplap', [450, 505], 't3'),
    check: (_, a) => expect(b(a).terminations.at(-1)).toEqual({ id: 't3', type: 'toplap', at: [450, 505] }),
  },
  {
    title: 'moveTermination',
    action: () => actions.moveTermination('b1', 't2', [615, 528]),
    check: (_, a) => expect(b(a).terminations[1].at).toEqual([615, 528]),
  },
  {
    title: 'setTerminationType',
    action: () => actions.setTerminationType('b1', 't1', 'truncation'),
    check: (_, a) => expect(b(a).terminations[0].type).toBe('truncation'),
  },
  {
    title: 'deleteTermination',
    action: () => actions.deleteTermination('b1', 't1'),
    check: (_, a) => expect(b(a).terminations.map((t) => t.id)).toEqual(['t2']),
  },
  {
    title: 'setTopIsDrowningSurface',
    action: () => actions.setTopIsDrowningSurface('b1', true),
    check: (_, a) => expect(b(a).topIsDrowningSurface).toBe(true),
  },
  {
    title: 'moveVertex on a top',
    action: () => actions.moveVertex(top2, 1, [505, 555]),
    check: (s, a) => {
      expect(cyc(a, 'c2').top[1]).toEqual([505, 555]);
      // structural sharing: the other vertices and cycles are the same objects
      expect(cyc(a, 'c2').top[0]).toBe(cyc(s, 'c2').top[0]);
      expect(cyc(a, 'c1')).toBe(cyc(s, 'c1'));
      expect(b(a, 'b2')).toBe(b(s, 'b2'));
    },
  },
  {
    title: 'moveVertex on the base',
    action: () => actions.moveVertex(base1, 0, [90, 801]),
    check: (_, a) => expect(b(a).base[0]).toEqual([90, 801]),
  },
  {
    title: 'insertVertex in a segment',
    action: () => actions.insertVertex(top2, 0, [380, 575]),
    check: (_, a) => expect(cyc(a, 'c2').top).toEqual([[260, 600], [380, 575], [500, 560], [740, 600]]),
  },
  {
    title: 'insertVertex prepend (-1)',
    action: () => actions.insertVertex(base1, -1, [50, 799]),
    check: (_, a) => expect(b(a).base[0]).toEqual([50, 799]),
  },
  {
    title: 'insertVertex append (length - 1)',
    action: () => actions.insertVertex(base1, 2, [950, 800]),
    check: (_, a) => expect(b(a).base.at(-1)).toEqual([950, 800]),
  },
  {
    title: 'insertVertex creates an absent flank',
    action: () => actions.insertVertex(flankR1, -1, [850, 700]),
    check: (_, a) => expect(cyc(a, 'c1').flankRight).toEqual([[850, 700]]),
  },
  {
    title: 'deleteVertex',
    action: () => actions.deleteVertex(top2, 1),
    check: (_, a) => expect(cyc(a, 'c2').top).toEqual([[260, 600], [740, 600]]),
  },
  {
    title: 'removePolyline (flank becomes absent)',
    action: () => actions.removePolyline(flankL1),
    check: (_, a) => expect(cyc(a, 'c1').flankLeft).toBeNull(),
  },
  {
    title: 'removePolyline (base becomes empty)',
    action: () => actions.removePolyline(base1),
    check: (_, a) => expect(b(a).base).toEqual([]),
  },
];

describe('every action performs, undoes and redoes exactly', () => {
  for (const c of cases) {
    it(c.title, () => {
      const s0 = fixtureState(); // deep-frozen: any mutation throws
      const copy0 = structuredClone(s0);
      const d1 = dispatch(createDoc(s0), c.action());
      expect(d1.state).not.toBe(s0);
      expect(d1.history.past).toHaveLength(1);
      c.check(s0, d1.state);
      expect(s0).toStrictEqual(copy0);

      const s1 = structuredClone(d1.state);
      deepFreeze(d1.state);
      const d2 = undo(d1);
      expect(d2.state).toStrictEqual(s0);
      // unchanged buildups are the very same objects again
      d2.state.buildups.forEach((x, i) => expect(x).toBe(s0.buildups[i]));
      expect(d2.history.future).toHaveLength(1);

      const d3 = redo(d2);
      expect(d3.state).toStrictEqual(s1);
      expect(undo(d3).state).toStrictEqual(s0);
    });
  }
});

describe('no-op and refused actions', () => {
  it('an action that changes nothing returns the same doc and records nothing', () => {
    const doc = createDoc(fixtureState());
    expect(dispatch(doc, actions.renameBuildup('b1', 'Kestrel Knoll'))).toBe(doc);
    expect(dispatch(doc, actions.moveVertex(top2, 1, [500, 560]))).toBe(doc);
    expect(dispatch(doc, actions.setMargin('b1', 'c3', 'left', null))).toBe(doc);
    expect(dispatch(doc, actions.moveCycle('b1', 1, 1))).toBe(doc);
  });

  it('deleteVertex refuses to leave fewer than 2 points', () => {
    const doc = createDoc(fixtureState());
    const two: PolylineTarget = { buildupId: 'b1', cycleId: 'c3', kind: 'top' };
    expect(() => dispatch(doc, actions.deleteVertex(two, 0))).toThrow(ActionError);
    expect(() => dispatch(doc, actions.deleteVertex(two, 0))).toThrow(/keeps at least 2 points/);
    // a 3-point line goes to 2 and then stops
    const d = dispatch(doc, actions.deleteVertex(top2, 0));
    expect(getPolyline(d.state, top2)).toHaveLength(2);
    expect(() => dispatch(d, actions.deleteVertex(top2, 0))).toThrow(/deleteVertex: i:/);
  });

  it('errors name the action and the field', () => {
    const doc = createDoc(fixtureState());
    expect(() => dispatch(doc, actions.renameBuildup('nope', 'X'))).toThrow('renameBuildup: buildupId: no buildup "nope"');
    expect(() => dispatch(doc, actions.setCycleTop('b1', 'cz', []))).toThrow('setCycleTop: cycleId: no cycle "cz"');
    expect(() => actions.setBase('b1', [[1, 2], [3, Number.NaN]])).toThrow('setBase: pts[1]: must be a finite [u, v] point');
    expect(() => actions.setMargin('b1', 'c1', 'middle' as 'left', null)).toThrow('setMargin: side:');
    expect(() => actions.addTermination('b1', 'offlap' as 'onlap', [1, 1])).toThrow('addTermination: type: must be one of');
    expect(() => actions.moveVertex({ buildupId: 'b1', kind: 'top' }, 0, [1, 1])).toThrow('moveVertex: target.cycleId: is required');
    expect(() => dispatch(doc, actions.moveCycle('b1', 0, 3))).toThrow('moveCycle: to: must be an integer from 0 to 2');
    expect(() => dispatch(doc, actions.insertVertex(top2, 3, [1, 1]))).toThrow('insertVertex: segmentIndex:');
    expect(() => actions.createBuildup({ name: '  ' })).toThrow('createBuildup: name: is required');
    expect(() => dispatch(doc, actions.createBuildup({ id: 'b1', name: 'Again' }))).toThrow('createBuildup: id: buildup "b1" exists');
    expect(() => actions.setCycleAge('b1', 'c1', -1)).toThrow('setCycleAge: ageMa:');
  });
});

describe('replaceAll and setServerMeta are not recorded', () => {
  it('replaceAll swaps the buildups without a history entry', () => {
    const s0 = fixtureState();
    const d = dispatch(createDoc({ buildups: [] }), actions.replaceAll(s0.buildups));
    expect(d.state.buildups).toStrictEqual(s0.buildups);
    expect(d.history.past).toHaveLength(0);
    expect(() => actions.replaceAll([s0.buildups[0], s0.buildups[0]])).toThrow('replaceAll: buildups[1].id: duplicate id "b1"');
  });

  it('undo keeps the current server version (a save in between does not roll it back)', () => {
    let d = createDoc(fixtureState());
    d = dispatch(d, actions.renameBuildup('b1', 'Kestrel Knoll West'));
    d = dispatch(d, actions.setServerMeta('b1', { version: 4 }));
    expect(d.history.past).toHaveLength(1);
    d = undo(d);
    expect(b(d.state).name).toBe('Kestrel Knoll');
    expect(b(d.state).version).toBe(4);
    d = redo(d);
    expect(b(d.state)).toMatchObject({ name: 'Kestrel Knoll West', version: 4, serverId: 11 });
  });

  it('setServerMeta gives a new buildup its server id', () => {
    let d = createDoc(fixtureState());
    d = dispatch(d, actions.setServerMeta('b2', { version: 1, serverId: 42 }));
    expect(b(d.state, 'b2')).toMatchObject({ version: 1, serverId: 42 });
  });
});
