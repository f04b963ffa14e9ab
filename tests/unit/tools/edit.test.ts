import { beforeEach, describe, expect, it } from 'vitest';
import { EditTool } from '../../../client/canvas/tools/edit';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Edit tool', () => {
  it('a vertex drag is one history entry with one coalescing key; endGesture on release', () => {
    const t = new EditTool(s.env);
    const before = s.store.buildups;
    // c2 top vertex 1 is [500, 560].
    expect(t.pointerDown(at(502, 561))).toBe(true);
    expect(s.store.selection).toMatchObject({ buildupId: 'b1', cycleId: 'c2', element: { kind: 'top', vertex: 1 } });
    for (let i = 1; i <= 5; i++) t.pointerMove(at(500 + i * 3.3, 560 - i * 2));
    expect(t.pointerUp(at(516.5, 550))).toBe(true);
    expect(s.names()).toEqual(Array(5).fill('moveVertex'));
    expect(new Set(s.dispatched.map((a) => a.key)).size).toBe(1);
    expect(s.store.doc.history.past).toHaveLength(1);
    expect(s.store.doc.history.sealed).toBe(true);
    expect(s.store.buildupById('b1')!.cycles[1].top[1]).toEqual([516.5, 550]);
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
    expect(s.store.canUndo).toBe(false);
    // A second drag of the same vertex is its own step.
    s.store.redo();
    t.pointerDown(at(516, 550));
    t.pointerMove(at(530, 550));
    t.pointerUp(at(530, 550));
    expect(s.store.doc.history.past).toHaveLength(2);
  });

  it('a drag snaps to another line’s end but never to the dragged vertex itself', () => {
    const t = new EditTool(s.env);
    // Drag c3 top vertex 1 [500, 500] next to the onlap stamp at [390, 515]? Use c2 top end [740, 600] instead.
    t.pointerDown(at(500, 500));
    t.pointerMove(at(737, 603));
    t.pointerUp(at(737, 603));
    expect(s.store.buildupById('b1')!.cycles[2].top[1]).toEqual([740, 600]);
    t.pointerDown(at(740, 600)); // picks… the selected polyline first (c3 top vertex 1)
    expect(s.store.selection).toMatchObject({ cycleId: 'c3', element: { kind: 'top', vertex: 1 } });
    t.pointerMove(at(741, 601));
    t.pointerUp(at(741, 601));
    // It snapped back to c2's end, not to its own previous position.
    expect(s.store.buildupById('b1')!.cycles[2].top[1]).toEqual([740, 600]);
  });

  it('a press away from any vertex is not taken (the stage may pan)', () => {
    const t = new EditTool(s.env);
    expect(t.pointerDown(at(5000, 5000))).toBe(false);
    expect(t.dragging).toBe(false);
    expect(s.dispatched).toEqual([]);
  });

  it('Alt- or Ctrl-click inserts a vertex on the nearest segment; undo removes it', () => {
    const t = new EditTool(s.env);
    const before = s.store.buildups;
    // Base segment 0 runs [100, 800] → [500, 810]; its point at u = 300 is v = 805.
    expect(t.pointerDown(at(300, 803, 1, { alt: true }))).toBe(true);
    t.pointerUp(at(300, 803));
    expect(s.names()).toEqual(['insertVertex']);
    const base = s.store.buildupById('b1')!.base;
    expect(base).toHaveLength(4);
    expect(base[1][0]).toBeCloseTo(300.1, 0);
    expect(base[1][1]).toBeCloseTo(805, 0);
    expect(s.store.selection).toMatchObject({ buildupId: 'b1', element: { kind: 'base', vertex: 1 } });
    t.pointerDown(at(700, 808, 1, { ctrl: true }));
    t.pointerUp(at(700, 808));
    expect(s.store.buildupById('b1')!.base).toHaveLength(5);
    s.store.undo();
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
  });

  it('Delete removes the selected vertex; a 2-point line refuses with a message', () => {
    const t = new EditTool(s.env);
    s.store.select('b1', 'c1', { kind: 'top', vertex: 1 });
    expect(t.keyDown({ key: 'Delete' })).toBe(true);
    expect(s.store.buildupById('b1')!.cycles[0].top).toEqual([
      [150, 700],
      [850, 700],
    ]);
    expect(s.store.selection.element).toEqual({ kind: 'top', vertex: 0 });
    expect(t.keyDown({ key: 'Backspace' })).toBe(true);
    expect(s.store.buildupById('b1')!.cycles[0].top).toHaveLength(2);
    expect(t.preview.kind === 'none' && t.preview.message).toMatch(/at least 2 points/);
    expect(s.store.lastError?.action).toBe('deleteVertex');
    expect(s.store.doc.history.past).toHaveLength(1);
  });
});
