import { beforeEach, describe, expect, it } from 'vitest';
import { TraceTool } from '../../../client/canvas/tools/trace';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Trace tool', () => {
  it('clicks add vertices, double-click finishes with one setCycleTop; undo/redo restore exactly', () => {
    s.store.select('b1', 'c3', { kind: 'top' });
    const before = s.store.buildups;
    const t = new TraceTool(s.env, { target: 'top' });
    t.click(at(380, 480));
    t.click(at(440, 470));
    t.click(at(520, 478));
    // A double-click arrives as click, click, dblclick at the same spot: no duplicate vertex.
    t.click(at(520.5, 478));
    t.doubleClick(at(520.5, 478));
    expect(s.names()).toEqual(['setCycleTop']);
    const top = s.store.buildupById('b1')!.cycles[2].top;
    expect(top).toEqual([
      [380, 480],
      [440, 470],
      [520, 478],
    ]);
    expect(t.preview).toMatchObject({ kind: 'trace', points: [] });
    const after = s.store.buildups;
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
    expect(s.store.buildups[0]).toBe(before[0]);
    s.store.redo();
    expect(s.store.buildups).toStrictEqual(after);
    expect(s.store.canUndo).toBe(true);
  });

  it('snaps a click to a polyline end within the radius (screen px, scaled by zoom), not beyond', () => {
    s.store.select('b1', 'c2', { kind: 'flankLeft' });
    const t = new TraceTool(s.env, { target: 'flankLeft' });
    // c2's top starts at [260, 600]. Radius 10 screen px at scale 2 = 5 image px.
    t.click(at(263, 603, 2)); // 4.24 image px away → snapped
    t.click(at(230, 680, 2));
    expect(t.pending[0]).toEqual([260, 600]);
    t.cancel();
    t.click(at(264, 604, 2)); // 5.66 image px away → not snapped
    expect(t.pending[0]).toEqual([264, 604]);
    // The same 5.66 px is within the radius at scale 1 (10 image px).
    t.cancel();
    t.click(at(264, 604, 1));
    expect(t.pending[0]).toEqual([260, 600]);
    t.click(at(230, 690, 1));
    expect(t.keyDown({ key: 'Enter' })).toBe(true);
    expect(s.store.buildupById('b1')!.cycles[1].flankLeft).toEqual([
      [260, 600],
      [230, 690],
    ]);
    expect(s.names()).toEqual(['setFlank']);
  });

  it('Esc cancels without dispatching; Backspace removes the last unfinished vertex', () => {
    s.store.select('b1', 'c1', { kind: 'top' });
    const t = new TraceTool(s.env, { target: 'top' });
    t.click(at(10, 10));
    t.click(at(50, 20));
    t.click(at(90, 10));
    expect(t.keyDown({ key: 'Backspace' })).toBe(true);
    expect(t.pending).toEqual([
      [10, 10],
      [50, 20],
    ]);
    expect(t.cancel()).toBe(true);
    expect(t.pending).toEqual([]);
    expect(s.dispatched).toEqual([]);
    expect(s.store.canUndo).toBe(false);
    // With nothing in progress cancel() drops nothing, so Esc is not used (it can clear the selection instead).
    expect(t.cancel()).toBe(false);
  });

  it('refuses a one-point trace and a flank without a selected cycle, keeping the vertices', () => {
    const t = new TraceTool(s.env, { target: 'top' });
    s.store.select('b1', 'c1');
    t.click(at(10, 10));
    expect(t.finish()).toBe(false);
    expect(t.preview.kind === 'trace' && t.preview.message).toMatch(/at least 2 points/);
    s.store.select('b1');
    t.setTarget('flankRight');
    t.click(at(60, 60));
    expect(t.finish()).toBe(false);
    expect(t.preview.kind === 'trace' && t.preview.message).toMatch(/Select a cycle/);
    expect(t.pending).toHaveLength(2);
    expect(s.dispatched).toEqual([]);
  });

  it('a top with no cycle selected adds a cycle (youngest) and selects it; 1–4 choose the target', () => {
    s.store.select('b2');
    const t = new TraceTool(s.env);
    expect(t.keyDown({ key: '2' })).toBe(true);
    expect(t.target).toBe('top');
    t.click(at(1250, 850));
    t.click(at(1550, 850));
    t.finish();
    expect(s.names()).toEqual(['addCycle']);
    const b2 = s.store.buildupById('b2')!;
    expect(b2.cycles).toHaveLength(1);
    expect(s.store.selection).toMatchObject({ buildupId: 'b2', cycleId: b2.cycles[0].id, element: { kind: 'top' } });
    t.keyDown({ key: '1' });
    expect(t.target).toBe('base');
    t.keyDown({ key: '4' });
    expect(t.target).toBe('flankRight');
  });

  it('the base with no buildup creates one in one step', () => {
    s = setup([]);
    const t = new TraceTool(s.env, { target: 'base' });
    t.click(at(0, 100));
    t.click(at(400, 110));
    t.doubleClick(at(400, 110));
    expect(s.names()).toEqual(['createBuildup']);
    expect(s.store.buildups[0].base).toEqual([
      [0, 100],
      [400, 110],
    ]);
    s.store.undo();
    expect(s.store.buildups).toEqual([]);
  });

  it('publishes a rubber-band preview with the snapped hover point', () => {
    s.store.select('b1', 'c3', { kind: 'top' });
    const t = new TraceTool(s.env, { target: 'top' });
    const seen: unknown[] = [];
    t.onPreview((p) => seen.push(p));
    t.click(at(100, 100));
    t.pointerMove(at(382, 522)); // near c3's first vertex [380, 520]
    expect(t.preview).toMatchObject({ kind: 'trace', points: [[100, 100]], hover: [380, 520], cycleIndex: 2 });
    expect(t.preview.kind === 'trace' && t.preview.snap?.isEnd).toBe(true);
    expect(seen.length).toBe(2);
  });
});
