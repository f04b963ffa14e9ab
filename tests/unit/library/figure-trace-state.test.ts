import { describe, expect, it } from 'vitest';
import { addPoint, addTop, emptyTrace, removeTop, TraceHistory, usableTops } from '../../../client/components/library/figureTrace';

describe('figure tracer state', () => {
  it('keeps two points per scale, a third click starts that scale over', () => {
    let s = emptyTrace();
    s = addPoint(s, { kind: 'scale', axis: 'x' }, [10, 99]);
    s = addPoint(s, { kind: 'scale', axis: 'x' }, [210, 98]);
    expect(s.scale.x).toEqual([10, 210]);
    s = addPoint(s, { kind: 'scale', axis: 'x' }, [50, 0]);
    expect(s.scale.x).toEqual([50]);
    s = addPoint(s, { kind: 'scale', axis: 'z' }, [0, 40]);
    expect(s.scale.z).toEqual([40]);
  });

  it('adds vertices to the base and to the chosen top without touching the previous state', () => {
    const s0 = emptyTrace();
    const s1 = addPoint(s0, { kind: 'base' }, [1, 2]);
    const s2 = addPoint(s1, { kind: 'top', index: 1 }, [3, 4]);
    expect(s0.base).toEqual([]);
    expect(s1.tops).toEqual([]);
    expect(s2.tops).toEqual([[], [[3, 4]]]);
    expect(usableTops(s2)).toEqual([]);
    const { state, index } = addTop(s2);
    expect(index).toBe(2);
    expect(removeTop(state, 0).tops).toEqual([[[3, 4]], []]);
  });

  it('undoes and redoes every step, and a new step drops the redo list', () => {
    const h = new TraceHistory();
    h.push(addPoint(h.current, { kind: 'base' }, [1, 1]));
    h.push(addPoint(h.current, { kind: 'base' }, [2, 2]));
    expect(h.undo()).toBe(true);
    expect(h.current.base).toEqual([[1, 1]]);
    expect(h.redo()).toBe(true);
    expect(h.current.base).toEqual([
      [1, 1],
      [2, 2],
    ]);
    h.undo();
    h.push(addPoint(h.current, { kind: 'base' }, [9, 9]));
    expect(h.canRedo).toBe(false);
    expect(h.current.base).toEqual([
      [1, 1],
      [9, 9],
    ]);
    h.undo();
    h.undo();
    expect(h.undo()).toBe(false);
    expect(h.current.base).toEqual([]);
  });
});
