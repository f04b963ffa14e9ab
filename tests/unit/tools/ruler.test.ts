import { beforeEach, describe, expect, it } from 'vitest';
import { createDepthConverter } from '../../../shared/measure/index';
import { ExaggerationControl, displayedVE, formatVE, intrinsicVE } from '../../../client/canvas/tools/exaggeration';
import { RulerTool, formatRuler, rulerContext, type RulerContext } from '../../../client/canvas/tools/ruler';
import { kestrel } from '../canvas/fixtures';
import { at, setup } from './helpers';

// Synthetic calibrations with known answers: depth domain, 10 m/px along the line, 5 m/px down.
const depthTies = [
  { px: [0, 0] as [number, number], world: [0, 0] as [number, number] },
  { px: [100, 0] as [number, number], world: [1000, 0] as [number, number] },
  { px: [0, 100] as [number, number], world: [0, 500] as [number, number] },
];
// Time domain: 12.5 m/px along the line, 4 ms TWT per px down.
const timeTies = [
  { px: [0, 0] as [number, number], world: [0, 0] as [number, number] },
  { px: [100, 0] as [number, number], world: [1250, 0] as [number, number] },
  { px: [0, 100] as [number, number], world: [0, 400] as [number, number] },
];

let s: ReturnType<typeof setup>;
beforeEach(() => {
  s = setup();
});

describe('Ruler tool', () => {
  it('two clicks give distance and true angle in depth; nothing is dispatched', () => {
    const ctx = rulerContext({ ties: depthTies, verticalDomain: 'depth_m' })!;
    const t = new RulerTool(s.env, { context: () => ctx });
    t.click(at(5000, 5000)); // far from any vertex: no snap
    t.pointerMove(at(5100, 5100));
    // Live reading while the second point follows the pointer.
    expect(t.preview.kind === 'ruler' && t.preview.reading?.distanceM).toBeCloseTo(Math.hypot(1000, 500), 6);
    t.click(at(5100, 5100));
    const r = t.result!;
    expect(r.dxM).toBeCloseTo(1000, 6);
    expect(r.dzM).toBeCloseTo(500, 6);
    expect(r.angleDeg).toBeCloseTo((Math.atan(0.5) * 180) / Math.PI, 9);
    expect(r.deepensTo).toBe('right');
    expect(formatRuler(r, 'en')).toBe('1,118 m · 26.6° true · Δz +500 m');
    // Moving after the second click does not change a fixed reading.
    t.pointerMove(at(9000, 9000));
    expect(t.result).toBe(r);
    expect(s.dispatched).toEqual([]);
  });

  it('converts TWT with the velocity model (constant 2000 m/s: 4 ms = 4 m of depth)', () => {
    const ctx = rulerContext({ ties: timeTies, verticalDomain: 'twt_ms', velocity: { kind: 'constant', v: 2000 } })!;
    const t = new RulerTool(s.env, { context: () => ctx });
    t.click(at(3000, 3000));
    t.click(at(3000, 3100)); // 400 ms TWT straight down: z = v·t/2 = 2000·0.4/2 = 400 m
    expect(t.result!.dzM).toBeCloseTo(400, 6);
    expect(t.result!.angleDeg).toBeCloseTo(90, 9);
  });

  it('without Ties it says so; Esc clears; a third click starts again', () => {
    const t = new RulerTool(s.env, { context: () => rulerContext({ ties: [], verticalDomain: 'depth_m' }) });
    t.click(at(0, 0));
    t.click(at(10, 0));
    expect(t.preview).toMatchObject({ kind: 'ruler', fixed: true, reading: null });
    expect(t.preview.kind === 'ruler' && t.preview.message).toMatch(/Tie the section/);
    t.click(at(50, 50));
    expect(t.preview).toMatchObject({ a: [50, 50], b: null, fixed: false });
    expect(t.cancel()).toBe(true);
    expect(t.preview).toMatchObject({ a: null, b: null });
    expect(t.cancel()).toBe(false);
  });

  it('includes measurable buildups in the context only for the buildup velocity model', () => {
    const b = kestrel();
    const vb = { kind: 'buildup' as const, water: { v: 1500, seafloorMs: 100 }, overburden: { v: 2200 }, carbonate: { v: 4500 } };
    const withB = rulerContext({ ties: timeTies, verticalDomain: 'twt_ms', velocity: vb, buildups: [b] }) as RulerContext;
    expect(withB.buildups).toHaveLength(1);
    expect(withB.buildups![0].cycles.map((c) => c.index)).toEqual([1, 2]); // c3 has no margins
    const plain = rulerContext({ ties: timeTies, verticalDomain: 'twt_ms', velocity: { kind: 'constant', v: 2000 }, buildups: [b] })!;
    expect(plain.buildups).toBeUndefined();
  });
});

describe('vertical exaggeration', () => {
  it('depth section: (m per px along) / (m per px down) = 10 / 5', () => {
    const conv = createDepthConverter(rulerContext({ ties: depthTies, verticalDomain: 'depth_m' }));
    expect(intrinsicVE(conv, [50, 50])).toBeCloseTo(2, 9);
    expect(displayedVE(conv, [50, 50], 1.5)).toBeCloseTo(3, 9);
  });

  it('time section at 2000 m/s: 12.5 m per px along, 4 m of depth per px down → 3.125', () => {
    const conv = createDepthConverter(rulerContext({ ties: timeTies, verticalDomain: 'twt_ms', velocity: { kind: 'constant', v: 2000 } }));
    expect(intrinsicVE(conv, [40, 60])).toBeCloseTo(3.125, 9);
    expect(formatVE(intrinsicVE(conv, [40, 60]))).toBe('VE ≈ 3.1×');
    expect(formatVE(null)).toBe('VE —');
  });

  it('the control clamps the stretch and sets it from a wanted VE', () => {
    const c = new ExaggerationControl();
    const seen: number[] = [];
    c.onChange((v) => seen.push(v));
    expect(c.setVE(5, 2)).toBe(2.5);
    expect(c.setStretch(100)).toBe(8);
    expect(c.setStretch(0.01)).toBe(0.25);
    c.reset();
    expect(seen).toEqual([2.5, 8, 0.25, 1]);
    expect(() => c.setStretch(0)).toThrow(/stretch must be/);
    expect(() => c.setVE(2, Number.NaN)).toThrow(/intrinsic/);
  });
});
