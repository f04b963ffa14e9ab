import { describe, expect, it } from 'vitest';
import { actions } from '../../../client/canvas/actions';
import { createDoc, dispatch } from '../../../client/canvas/history';
import { EMPTY_SELECTION, toInterpretationInput } from '../../../client/canvas/model';
import { BASE_COLOUR, cycleColour } from '../../../client/canvas/palette';
import { flatPoints, lodBucket, lodPoints } from '../../../client/canvas/overlays/draw';
import { line } from '../canvas/fixtures';
import { flankLabels, midpointOf, pinsOf, selectedTarget, stampsOf, staticLines, trajectoryLines } from '../../../client/canvas/overlays/scene';
import { measure } from '../../../shared/measure/index';
import { kestrel, marrow } from '../canvas/fixtures';

describe('overlay scene', () => {
  it('one line per polyline, Okabe–Ito by cycle age, flanks dashed; the selected line is left out', () => {
    const bs = [kestrel(), marrow()];
    const all = staticLines(bs, null);
    // b1: base + 3 tops + 2 flanks; b2: base.
    expect(all.map((l) => l.key).sort()).toEqual(
      ['b1/-/base', 'b1/c1/top', 'b1/c1/flankLeft', 'b1/c2/top', 'b1/c2/flankRight', 'b1/c3/top', 'b2/-/base'].sort(),
    );
    const byKey = new Map(all.map((l) => [l.key, l]));
    expect(byKey.get('b1/c1/top')!.stroke).toBe(cycleColour(0, 'canvas'));
    expect(byKey.get('b1/c3/top')!.stroke).toBe(cycleColour(2, 'canvas'));
    expect(byKey.get('b1/c2/flankRight')!.stroke).toBe(cycleColour(1, 'canvas'));
    expect(byKey.get('b1/c2/flankRight')!.dash).toBeDefined();
    expect(byKey.get('b1/c1/top')!.dash).toBeUndefined();
    expect(byKey.get('b1/-/base')!.stroke).toBe(BASE_COLOUR.canvas);
    const sel = selectedTarget({ buildupId: 'b1', cycleId: 'c2', element: { kind: 'top', vertex: 1 } })!;
    expect(staticLines(bs, sel).map((l) => l.key)).not.toContain('b1/c2/top');
    expect(staticLines(bs, sel)).toHaveLength(all.length - 1);
  });

  it('keeps the same flat points array for lines a move did not touch', () => {
    const doc0 = createDoc({ buildups: [kestrel()] });
    const doc1 = dispatch(doc0, actions.moveVertex({ buildupId: 'b1', cycleId: 'c2', kind: 'top' }, 1, [505, 555]));
    const a = new Map(staticLines(doc0.state.buildups, null).map((l) => [l.key, l.points]));
    const b = new Map(staticLines(doc1.state.buildups, null).map((l) => [l.key, l.points]));
    for (const [k, pts] of a) {
      if (k === 'b1/c2/top') expect(b.get(k)).not.toBe(pts);
      else expect(b.get(k)).toBe(pts);
    }
    expect(b.get('b1/c2/top')).toEqual([260, 600, 505, 555, 740, 600]);
    expect(flatPoints(doc1.state.buildups[0].base)).toBe(a.get('b1/-/base'));
  });

  it('margin trajectories join successive pins oldest first; pins and stamps carry side and selection', () => {
    const b = kestrel();
    expect(trajectoryLines([b])).toEqual([
      { key: 'b1/left', points: [220, 680, 300, 590], side: 'left' },
      { key: 'b1/right', points: [780, 682, 700, 592], side: 'right' },
    ]);
    const pins = pinsOf([b], { buildupId: 'b1', cycleId: 'c2', element: { kind: 'marginRight' } });
    expect(pins.filter((p) => p.selected).map((p) => p.key)).toEqual(['b1/c2/right']);
    expect(pins.find((p) => p.key === 'b1/c1/left')!.colour).toBe(cycleColour(0, 'canvas'));
    // Base spans u 100–900 (middle 500): t1 at u 390 comes in from the left, t2 at u 610 from the right.
    const stamps = stampsOf([b], EMPTY_SELECTION);
    expect(stamps.map((s) => [s.type, s.from])).toEqual([
      ['onlap', 'left'],
      ['downlap', 'right'],
    ]);
  });

  it('flank labels show the engine’s true flank angles at the middle of each flank', () => {
    const b = kestrel();
    const ties = [
      { px: [0, 0] as [number, number], world: [0, 0] as [number, number] },
      { px: [1000, 0] as [number, number], world: [12500, 0] as [number, number] },
      { px: [0, 1000] as [number, number], world: [0, 2000] as [number, number] },
    ];
    const out = measure(toInterpretationInput(b, { calibrationTies: ties, verticalDomain: 'twt_ms', velocity: { kind: 'constant', v: 3000 } }));
    const labels = flankLabels([b], out);
    const c1 = out.buildups[0].cycles[0];
    const c2 = out.buildups[0].cycles[1];
    expect(labels.map((l) => l.key)).toEqual(['b1/c1/left', 'b1/c2/right']);
    expect(labels[0].text).toBe(`${c1.left.flankAngleDeg!.toFixed(1)}°`);
    expect(labels[1].text).toBe(`${c2.right.flankAngleDeg!.toFixed(1)}°`);
    expect(labels[0].at).toEqual(midpointOf(b.cycles[0].flankLeft!));
    expect(midpointOf([[0, 0], [10, 0], [10, 10]])).toEqual([10, 0]);
    expect(flankLabels([b], null)).toEqual([]);
  });

  it('draws long lines zoomed out with a level of detail that keeps the ends and stays within a bucket', () => {
    const pts = line(0, 16000, 2000, (u) => 3000 + 150 * Math.sin(u / 300));
    expect(lodBucket(1)).toBe(1);
    expect(lodBucket(0.5)).toBe(1);
    expect(lodBucket(0.3)).toBe(2);
    expect(lodBucket(0.07)).toBe(8);
    expect(lodPoints(pts, 1)).toBe(flatPoints(pts));
    const f = lodPoints(pts, 16);
    expect(lodPoints(pts, 16)).toBe(f); // cached
    expect(f.length / 2).toBeLessThan(pts.length);
    expect(f.slice(0, 2)).toEqual(pts[0]);
    expect(f.slice(-2)).toEqual(pts[pts.length - 1]);
    // Every dropped vertex lies within one bucket (along u and v) of the last kept vertex before it.
    let k = 0;
    for (const p of pts) {
      while (k + 2 < f.length && f[k + 2] <= p[0]) k += 2;
      expect(Math.abs(p[0] - f[k])).toBeLessThan(16 + 1e-9);
      expect(Math.abs(p[1] - f[k + 1])).toBeLessThan(16 + 1e-9);
    }
  });
});
