import { beforeEach, describe, expect, it } from 'vitest';
import { hitTest } from '../../../client/canvas/tools/hitTest';
import { SelectTool } from '../../../client/canvas/tools/select';
import { nearestSegment } from '../../../client/canvas/geometry';
import { line } from '../canvas/fixtures';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Select tool', () => {
  it('picks pins over vertices, vertices over segments; empty space clears', () => {
    const t = new SelectTool(s.env);
    // c1 marginLeft [220, 680] — nothing else within 10 px.
    t.click(at(223, 683));
    expect(s.store.selection).toEqual({ buildupId: 'b1', cycleId: 'c1', element: { kind: 'marginLeft' } });
    t.click(at(386, 516)); // stamp t1 [390, 515] (4.1 px) beats c3 top vertex [380, 520] (7.2 px)
    expect(s.store.selection).toEqual({ buildupId: 'b1', cycleId: null, element: { kind: 'termination', terminationId: 't1' } });
    t.click(at(503, 642)); // c1 top vertex 1 [500, 640]
    expect(s.store.selection).toEqual({ buildupId: 'b1', cycleId: 'c1', element: { kind: 'top', vertex: 1 } });
    t.click(at(300, 808)); // on base segment 0, 200 px from any vertex
    expect(s.store.selection).toEqual({ buildupId: 'b1', cycleId: null, element: { kind: 'base' } });
    t.click(at(3000, 3000));
    expect(s.store.selection.buildupId).toBeNull();
    expect(s.dispatched).toEqual([]);
  });

  it('Delete removes the selected object through one action each; undo restores exactly', () => {
    const t = new SelectTool(s.env);
    const before = s.store.buildups;
    s.store.select('b1', null, { kind: 'termination', terminationId: 't2' });
    t.keyDown({ key: 'Delete' });
    s.store.select('b1', 'c2', { kind: 'marginRight' });
    t.keyDown({ key: 'Backspace' });
    s.store.select('b1', 'c2', { kind: 'flankRight' });
    t.keyDown({ key: 'Delete' });
    s.store.select('b1', null, { kind: 'base', vertex: 2 });
    t.keyDown({ key: 'Delete' });
    expect(s.names()).toEqual(['deleteTermination', 'setMargin', 'removePolyline', 'deleteVertex']);
    const b1 = s.store.buildupById('b1')!;
    expect(b1.terminations.map((x) => x.id)).toEqual(['t1']);
    expect(b1.cycles[1].marginRight).toBeNull();
    expect(b1.cycles[1].flankRight).toBeNull();
    expect(b1.base).toHaveLength(2);
    for (let i = 0; i < 4; i++) s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
    expect(s.store.canUndo).toBe(false);
  });

  it('Esc clears the selection only when there is one', () => {
    const t = new SelectTool(s.env);
    expect(t.keyDown({ key: 'Escape' })).toBe(false);
    s.store.select('b1');
    expect(t.keyDown({ key: 'Escape' })).toBe(true);
    expect(s.store.selection.buildupId).toBeNull();
  });
});

describe('hitTest', () => {
  it('finds the nearest segment among 20,000-vertex polylines, with the radius in screen px', () => {
    const pts = line(0, 20000, 20000, (u) => 3000 + 200 * Math.sin(u / 500));
    const state = { buildups: [{ id: 'x', name: 'X', version: 0, base: pts, cycles: [], terminations: [], topIsDrowningSurface: false }] };
    const u = 12345.5;
    const v = 3000 + 200 * Math.sin(u / 500);
    const h = hitTest(state, [u, v + 4], 10, 1, { kinds: ['segment'] });
    expect(h?.kind).toBe('segment');
    // Same answer as a plain scan of every segment.
    const brute = nearestSegment(pts, [u, v + 4])!;
    expect(h && h.kind === 'segment' && h.segmentIndex).toBe(brute.segmentIndex);
    expect(h!.distance).toBeCloseTo(brute.distance, 9);
    expect(h!.distance).toBeLessThanOrEqual(4);
    expect(hitTest(state, [u, v + 4], 10, 4, { kinds: ['segment'] })).toBeNull(); // 2.5 image px radius
    expect(() => hitTest(state, [0, 0], 10, 0)).toThrow(/scale/);
  });
});
