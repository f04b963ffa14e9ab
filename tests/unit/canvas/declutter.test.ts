import { describe, expect, it } from 'vitest';
import { clusterStamps, LABEL_MIN_SCALE, placeLabels, type LabelIn } from '../../../client/canvas/overlays/declutter';

const label = (key: string, x: number, y: number, side: 'left' | 'right' = 'right'): LabelIn => ({ key, x, y, width: 40, height: 14, side });

describe('flank-angle labels', () => {
  it('are hidden below the zoom threshold', () => {
    expect(placeLabels([label('a', 100, 100)], LABEL_MIN_SCALE * 0.9)).toEqual([]);
    expect(placeLabels([label('a', 100, 100)], LABEL_MIN_SCALE)).toHaveLength(1);
  });

  it('never overlap: a crowded flank keeps what fits beside, above and below, and drops the rest', () => {
    // six flanks whose midpoints fall on nearly the same screen point (the heap seen at the fitted zoom)
    const heap = [0, 1, 2, 3, 4, 5].map((i) => label(`l${i}`, 200 + i, 300 + i));
    const out = placeLabels(heap, 1);
    expect(out.length).toBeGreaterThanOrEqual(2);
    expect(out.length).toBeLessThan(6);
    const boxes = out.map((o) => ({ x0: o.x, x1: o.x + 40, y0: o.y - 7, y1: o.y + 7 }));
    for (let i = 0; i < boxes.length; i++)
      for (let j = i + 1; j < boxes.length; j++) {
        const a = boxes[i];
        const b = boxes[j];
        expect(a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1).toBe(false);
      }
  });

  it('keep their place when they do not collide, left labels right-aligned', () => {
    const out = placeLabels([label('a', 100, 100, 'left'), label('b', 400, 100)], 1);
    expect(out).toEqual([
      { key: 'a', x: 90, y: 100, align: 'right' },
      { key: 'b', x: 410, y: 100, align: 'left' },
    ]);
  });

  it('avoid boxes already taken', () => {
    const out = placeLabels([label('a', 100, 100)], 1, [{ x0: 105, x1: 160, y0: 95, y1: 105 }]);
    expect(out).toEqual([{ key: 'a', x: 110, y: 84, align: 'left' }]);
  });
});

describe('Termination stamp clusters', () => {
  it('merge stamps closer than the radius and count them; far ones stay single', () => {
    const c = clusterStamps([
      { key: 'a', x: 10, y: 10 },
      { key: 'b', x: 14, y: 12 },
      { key: 'c', x: 8, y: 16 },
      { key: 'd', x: 200, y: 10 },
    ]);
    expect(c.map((x) => x.stamps.length)).toEqual([3, 1]);
    expect(c[0].x).toBeCloseTo(32 / 3, 9);
    expect(c[0].y).toBeCloseTo(38 / 3, 9);
  });

  it('keep a selected stamp on its own', () => {
    const c = clusterStamps([
      { key: 'a', x: 10, y: 10, selected: true },
      { key: 'b', x: 12, y: 10 },
      { key: 'c', x: 11, y: 11 },
    ]);
    expect(c.map((x) => x.stamps.map((s) => s.key))).toEqual([['a'], ['b', 'c']]);
  });
});
