/**
 * One cancel() for every tool: Esc (through the Toolbox) and switching tools
 * run the same `cancel()`, which drops unfinished work without dispatching
 * and says whether there was any. Before, Esc reached only the tools that
 * handled it themselves (Trace, Ruler): a Margin pin, Termination stamp or
 * vertex drag ignored Esc and its gesture stayed open.
 */
import { beforeEach, describe, expect, it, vi } from 'vitest';
import { Toolbox } from '../../../client/canvas/tools/toolbox';
import type { ToolController, ToolId } from '../../../client/canvas/tools/types';
import { at, setup } from './helpers';

let s: ReturnType<typeof setup>;
let box: Toolbox;
beforeEach(() => {
  s = setup();
  box = new Toolbox(s.env);
});

const esc = () => box.keyDown({ key: 'Escape' });

/** Leave `id` with unfinished work (as a person would), returning a check that it is gone. */
function startUnfinished(id: ToolId): () => void {
  box.setTool(id);
  switch (id) {
    case 'trace':
      s.store.select('b1', 'c3', { kind: 'top' });
      box.click(at(380, 480));
      box.click(at(440, 470));
      return () => expect(box.tools.trace.pending).toEqual([]);
    case 'ruler':
      box.click(at(50, 50));
      return () => expect(box.tools.ruler.preview).toMatchObject({ a: null, b: null });
    case 'marginPin':
      expect(box.pointerDown(at(221, 681))).toBe(true); // c1's left pin
      box.pointerMove(at(260, 700));
      return () => expect(box.tools.marginPin.cancel()).toBe(false);
    case 'stamp':
    case 'edit':
    case 'select':
      return () => {};
  }
}

describe('Toolbox: Esc and tool switches share cancel()', () => {
  it.each(['trace', 'ruler', 'marginPin'] as const)('%s: Esc runs cancel(), drops the unfinished work without dispatching, and is used up', (id) => {
    const gone = startUnfinished(id);
    const dispatchedBefore = s.dispatched.length;
    const spy = vi.spyOn(box.tools[id] as ToolController, 'cancel');
    expect(esc()).toBe(true);
    expect(spy).toHaveBeenCalledTimes(1);
    expect(spy).toHaveReturnedWith(true);
    gone();
    // A drag cut short keeps what it already moved; nothing new is dispatched by the cancel.
    expect(s.dispatched.length).toBe(dispatchedBefore);
    expect(box.activeId).toBe(id);
  });

  it.each(['trace', 'ruler', 'marginPin'] as const)('%s: switching tools runs the same cancel()', (id) => {
    const gone = startUnfinished(id);
    const spy = vi.spyOn(box.tools[id] as ToolController, 'cancel');
    box.setTool(id === 'ruler' ? 'select' : 'ruler');
    expect(spy).toHaveBeenCalledTimes(1);
    expect(spy).toHaveReturnedWith(true);
    gone();
  });

  it('a Margin pin drag cut short by Esc ends its gesture: the next drag is its own undo step', () => {
    startUnfinished('marginPin');
    const endGesture = vi.spyOn(s.env, 'endGesture');
    expect(esc()).toBe(true);
    expect(endGesture).toHaveBeenCalledTimes(1);
    expect(s.store.doc.history.past).toHaveLength(1);
    expect(box.pointerDown(at(700, 592))).toBe(true); // c2's right pin
    box.pointerMove(at(650, 600));
    box.pointerUp(at(650, 600));
    expect(s.store.doc.history.past).toHaveLength(2);
  });

  it('with nothing unfinished Esc goes on to the tool itself (Select clears the selection), and is not used otherwise', () => {
    s.store.select('b1');
    const spy = vi.spyOn(box.tools.select, 'cancel');
    expect(esc()).toBe(true);
    expect(spy).toHaveReturnedWith(false);
    expect(s.store.selection.buildupId).toBeNull();
    expect(esc()).toBe(false);
    box.setTool('trace');
    expect(esc()).toBe(false);
    expect(box.activeId).toBe('trace');
  });

  it('Esc with a modifier is not a cancel', () => {
    startUnfinished('trace');
    expect(box.keyDown({ key: 'Escape', ctrl: true })).toBe(false);
    expect(box.tools.trace.pending).toHaveLength(2);
  });

  it('every tool has the one cancel(): it answers whether something was dropped', () => {
    for (const t of Object.values(box.tools) as ToolController[]) expect(t.cancel()).toBe(false);
  });
});
