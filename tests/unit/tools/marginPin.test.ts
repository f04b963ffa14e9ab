import { beforeEach, describe, expect, it } from 'vitest';
import { MarginPinTool, nearerSide } from '../../../client/canvas/tools/marginPin';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Margin pin tool', () => {
  it('sets the pin on the nearer end’s side, placed on the top; each click is its own undo step', () => {
    const t = new MarginPinTool(s.env);
    s.store.select('b1', 'c3', { kind: 'top' });
    // c3 top: [380, 520] → [500, 500]. A click at u = 400 is nearer the left end.
    t.click(at(400, 530));
    const c3 = () => s.store.buildupById('b1')!.cycles[2];
    expect(c3().marginLeft).not.toBeNull();
    const [u, v] = c3().marginLeft!;
    // On the segment: v = 520 − (u − 380)·20/120.
    expect(v).toBeCloseTo(520 - ((u - 380) * 20) / 120, 1);
    t.click(at(496, 497)); // snaps to the top vertex [500, 500] (5 px ≤ 10) on the right side
    expect(c3().marginRight).toEqual([500, 500]);
    expect(s.store.doc.history.past).toHaveLength(2);
    s.store.undo();
    expect(c3().marginRight).toBeNull();
    expect(c3().marginLeft).not.toBeNull();
    s.store.undo();
    expect(c3().marginLeft).toBeNull();
  });

  it('Shift-click takes the other side; keys 2 and 3 fix the side', () => {
    const t = new MarginPinTool(s.env);
    s.store.select('b1', 'c3');
    t.click(at(400, 520, 1, { shift: true }));
    const c3 = () => s.store.buildupById('b1')!.cycles[2];
    expect(c3().marginRight).not.toBeNull();
    expect(c3().marginLeft).toBeNull();
    t.keyDown({ key: '2' });
    expect(t.mode).toBe('left');
    t.click(at(490, 505));
    expect(c3().marginLeft![0]).toBeGreaterThan(480);
    t.keyDown({ key: '3' });
    expect(t.mode).toBe('right');
    expect(nearerSide([[0, 0], [10, 0]], 4)).toBe('left');
    expect(nearerSide([[10, 0], [0, 0]], 6)).toBe('right');
  });

  it('without a selected cycle nothing is dispatched and the preview says why', () => {
    const t = new MarginPinTool(s.env);
    s.store.select('b1');
    t.click(at(300, 600));
    expect(s.dispatched).toEqual([]);
    expect(t.preview.kind === 'margin' && t.preview.message).toMatch(/Select a cycle/);
  });

  it('a press and release on a pin (no drag) only selects it', () => {
    const t = new MarginPinTool(s.env);
    s.store.select('b1', 'c2');
    t.pointerDown(at(700, 592)); // c2's right pin
    t.pointerUp(at(700, 592));
    t.click(at(700, 592));
    expect(s.dispatched).toEqual([]);
    expect(s.store.selection).toMatchObject({ cycleId: 'c2', element: { kind: 'marginRight' } });
  });

  it('dragging a pin slides it along its top as one undo step', () => {
    const t = new MarginPinTool(s.env);
    const before = s.store.buildups;
    // c1 marginLeft [220, 680]; top [150, 700] → [500, 640].
    expect(t.pointerDown(at(221, 681))).toBe(true);
    expect(s.store.selection).toMatchObject({ cycleId: 'c1', element: { kind: 'marginLeft' } });
    t.pointerMove(at(260, 700));
    t.pointerMove(at(300, 700));
    t.pointerUp(at(300, 700));
    const m = s.store.buildupById('b1')!.cycles[0].marginLeft!;
    expect(m[1]).toBeCloseTo(700 - ((m[0] - 150) * 60) / 350, 1);
    expect(s.store.doc.history.past).toHaveLength(1);
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
  });
});
