import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import { snap, snapSourcesFromState, type SnapSource } from '../../../client/canvas/snapping';
import type { Pt } from '../../../client/canvas/model';
import { deepFreeze, fixtureState, line } from './fixtures';

describe('snap', () => {
  // a 5-point polyline: ends at u=0 and u=40, inner vertices every 10 px
  const row: SnapSource = deepFreeze({ id: 'row', points: line(0, 40, 5, () => 100) });

  it('snaps to the nearest vertex within the radius', () => {
    const hit = snap([21, 103], [row], 10, 1)!;
    expect(hit).toMatchObject({ point: [20, 100], sourceId: 'row', index: 2, isEnd: false });
    expect(hit.distance).toBeCloseTo(Math.hypot(1, 3), 12);
  });

  it('prefers a polyline end over a plain vertex at equal distance', () => {
    const other: SnapSource = { id: 'other', points: [[-20, 96], [50, 104], [100, 104]] };
    const tieInner: SnapSource = { id: 'inner', points: [[0, 0], [10, 10], [20, 0]] };
    const tieEnd: SnapSource = { id: 'end', points: [[10, 14], [30, 40]] };
    // [10, 12] is 2 px from inner[1] (a plain vertex) and 2 px from end[0] (an end)
    for (const order of [[tieInner, tieEnd], [tieEnd, tieInner]]) {
      const hit = snap([10, 12], order, 5, 1)!;
      expect(hit).toMatchObject({ sourceId: 'end', index: 0, isEnd: true, distance: 2 });
    }
    // a strictly nearer plain vertex still wins
    expect(snap([10, 11.9], [tieInner, tieEnd], 5, 1)).toMatchObject({ sourceId: 'inner', index: 1 });
    // [45,102] is √29 px from row's last vertex [40,100] (an end) and from other's inner vertex [50,104]
    expect(snap([45, 102], [other, row], 10, 1)).toMatchObject({ sourceId: 'row', index: 4, isEnd: true });
  });

  it('converts the screen radius through the zoom', () => {
    const p: Pt = [26, 100]; // 4 image px from vertex [30,100], 6 from [20,100]
    // 10 screen px at scale 2 → 5 image px: reaches [30,100]
    expect(snap(p, [row], 10, 2)).toMatchObject({ index: 3, screenDistance: 8 });
    // 10 screen px at scale 4 → 2.5 image px: nothing
    expect(snap(p, [row], 10, 4)).toBeNull();
    // zoomed out (0.5 screen px per image px): 10 screen px → 20 image px
    expect(snap([30, 115], [row], 10, 0.5)).toMatchObject({ index: 3 });
    expect(snap([30, 115], [row], 10, 1)).toBeNull();
  });

  it('returns nothing beyond the radius (the boundary itself counts)', () => {
    expect(snap([20, 110], [row], 10, 1)).toMatchObject({ index: 2, distance: 10 });
    expect(snap([20, 110.001], [row], 10, 1)).toBeNull();
    expect(snap([20, 100], [], 10, 1)).toBeNull();
    expect(snap([20, 100], [{ id: 'empty', points: [] }], 10, 1)).toBeNull();
  });

  it('can exclude the vertex being dragged', () => {
    const hit = snap([20, 100], [row], 15, 1, { exclude: (id, i) => id === 'row' && i === 2 });
    expect(hit).toMatchObject({ index: 1 }); // 1 and 3 tie at 10 px; the first found is kept
  });

  it('refuses a zero or negative scale', () => {
    expect(() => snap([0, 0], [row], 10, 0)).toThrow('snap: scale must be a finite number > 0');
    expect(() => snap([0, 0], [row], -1, 1)).toThrow('snap: radiusPx');
  });

  it('finds the right answer among 20,000 vertices (same as a brute-force search)', () => {
    const rng = seedrandom('tb-2024-snap');
    // 10 wiggly tops of 2,000 vertices each over a 20,000 px wide section
    const sources: SnapSource[] = Array.from({ length: 10 }, (_, k) => ({
      id: `top${k}`,
      points: line(0, 20000, 2000, (u) => 1000 + 150 * k + 40 * Math.sin(u / 300 + k) + 5 * rng()),
    }));
    const all = sources.flatMap((s) => s.points.map((p, i) => ({ s, p, i, end: i === 0 || i === s.points.length - 1 })));
    expect(all).toHaveLength(20000);
    let hits = 0;
    for (let q = 0; q < 300; q++) {
      const p: Pt = [rng() * 20400 - 200, 950 + rng() * 1500];
      const scale = 0.25 + rng() * 3;
      const radiusPx = 12;
      const r = radiusPx / scale;
      let best: (typeof all)[number] | null = null;
      let bestD = Infinity;
      for (const c of all) {
        const d = Math.hypot(c.p[0] - p[0], c.p[1] - p[1]);
        if (d <= r && (d < bestD || (d === bestD && c.end && !best!.end))) {
          best = c;
          bestD = d;
        }
      }
      const hit = snap(p, sources, radiusPx, scale);
      if (!best) expect(hit).toBeNull();
      else {
        hits++;
        expect(hit).toMatchObject({ sourceId: best.s.id, index: best.i });
        expect(hit!.distance).toBeCloseTo(bestD, 9);
      }
    }
    expect(hits).toBeGreaterThan(20); // the queries did exercise both outcomes
    expect(hits).toBeLessThan(300);
  });
});

describe('snapSourcesFromState', () => {
  it('lists bases, tops, flanks, Margin pins and Termination stamps with refs', () => {
    const sources = snapSourcesFromState(fixtureState());
    const ids = sources.map((s) => s.id);
    expect(ids).toContain('line:b1/-/base');
    expect(ids).toContain('line:b1/c2/top');
    expect(ids).toContain('line:b1/c1/flankLeft');
    expect(ids).not.toContain('line:b1/c1/flankRight');
    expect(ids).toContain('margin:b1/c1/left');
    expect(ids).not.toContain('margin:b1/c3/left');
    expect(ids).toContain('term:b1/t2');
    expect(ids).toContain('line:b2/-/base');
    const hit = snap([221, 681], sources, 5, 1)!;
    expect(hit.ref).toEqual({ kind: 'margin', buildupId: 'b1', cycleId: 'c1', side: 'left' });
    expect(snap([901, 806], sources, 5, 1)!.ref).toEqual({ kind: 'polyline', target: { buildupId: 'b1', kind: 'base' } });
  });
});
