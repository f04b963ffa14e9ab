import { beforeEach, describe, expect, it } from 'vitest';
import { StampTool } from '../../../client/canvas/tools/stamp';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Termination stamp tool', () => {
  it('places a stamp of the chosen type on the selected buildup and selects it; undo removes it', () => {
    const t = new StampTool(s.env);
    s.store.select('b1');
    expect(t.keyDown({ key: '3' })).toBe(true);
    expect(t.type).toBe('toplap');
    t.click(at(200, 300));
    expect(s.names()).toEqual(['addTermination']);
    const terms = s.store.buildupById('b1')!.terminations;
    expect(terms).toHaveLength(3);
    expect(terms[2]).toMatchObject({ type: 'toplap', at: [200, 300] });
    expect(s.store.selection.element).toEqual({ kind: 'termination', terminationId: terms[2].id });
    s.store.undo();
    expect(s.store.buildupById('b1')!.terminations).toHaveLength(2);
  });

  it('snaps a stamp to a nearby vertex; picks the buildup by extent when none is selected', () => {
    const t = new StampTool(s.env);
    t.setType('downlap');
    t.click(at(1597, 902)); // Marrow Bank base end [1600, 905]
    const b2 = s.store.buildupById('b2')!;
    expect(b2.terminations).toEqual([{ id: b2.terminations[0].id, type: 'downlap', at: [1600, 905] }]);
  });

  it('dragging a stamp moves it as one undo step', () => {
    const t = new StampTool(s.env);
    const before = s.store.buildups;
    expect(t.pointerDown(at(611, 531))).toBe(true); // t2 at [610, 530]
    t.pointerMove(at(640, 560));
    t.pointerMove(at(650, 570));
    t.pointerUp(at(650, 570));
    expect(s.names()).toEqual(['moveTermination', 'moveTermination']);
    expect(s.store.buildupById('b1')!.terminations[1].at).toEqual([650, 570]);
    expect(s.store.doc.history.past).toHaveLength(1);
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
  });

  it('a press and release on a stamp (no drag) selects it and places nothing', () => {
    const t = new StampTool(s.env);
    t.pointerDown(at(610, 530));
    t.pointerUp(at(610, 530));
    t.click(at(610, 530)); // the stage's click that ends the same press
    expect(s.dispatched).toEqual([]);
    expect(s.store.selection.element).toEqual({ kind: 'termination', terminationId: 't2' });
    // The next plain click places a stamp again.
    t.pointerDown(at(200, 200));
    t.click(at(200, 200));
    expect(s.names()).toEqual(['addTermination']);
  });

  it('refuses an unknown type', () => {
    const t = new StampTool(s.env);
    expect(() => t.setType('overlap' as never)).toThrow(/onlap, downlap, toplap, truncation/);
  });
});
