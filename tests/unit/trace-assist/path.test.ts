import { describe, expect, it } from 'vitest';
import { leastCostPath, snapToPhase } from '../../../shared/trace-assist/path';
import { GreySource, TiledGreySource, FloatSource } from '../../../shared/trace-assist/source';
import { thinPath } from '../../../shared/trace-assist/thin';
import { snapPolyline } from '../../../shared/trace-assist/snap';
import { maxError, synthImage } from './synthetic';

describe('least-cost path along an event', () => {
  it('follows a straight flat event from a vertex to a cursor placed 5 px off it (within 1 px)', () => {
    const f = () => 100.3;
    const img = synthImage(400, 200, [{ at: f }, { at: () => 140, amp: 0.6 }]);
    const r = leastCostPath(img.source, [20.5, 100.3], [380.5, 105.3]);
    expect(r.points.length).toBe(361);
    expect(maxError(r.points.slice(1), f)).toBeLessThanOrEqual(1);
    expect(r.meanScore).toBeGreaterThan(0.5);
  });

  it('follows a dipping event (0.7 px per column), right to left too', () => {
    const f = (u: number) => 40 + 0.7 * u;
    const img = synthImage(300, 300, [{ at: f }, { at: (u) => 0.7 * u - 5, amp: -0.6 }]);
    const a = leastCostPath(img.source, [10.5, f(10.5)], [290.5, f(290.5) - 3]);
    expect(maxError(a.points.slice(1), f)).toBeLessThanOrEqual(1);
    const b = leastCostPath(img.source, [290.5, f(290.5)], [10.5, f(10.5) + 3]);
    expect(maxError(b.points.slice(1), f)).toBeLessThanOrEqual(1);
    expect(b.points[b.points.length - 1][0]).toBeLessThan(b.points[1][0]);
  });

  it('follows a curved event whose sag is 20 px off the straight segment', () => {
    const f = (u: number) => 150 - 20 * Math.sin((Math.PI * u) / 600);
    const img = synthImage(600, 260, [{ at: f }, { at: (u) => f(u) + 33, amp: 0.7 }]);
    const r = leastCostPath(img.source, [2.5, f(2.5)], [597.5, f(597.5)]);
    expect(maxError(r.points.slice(1), f)).toBeLessThanOrEqual(1);
  });

  it('follows a dome clicked on its flank and past its crest (24 px off the chord: the default corridor is wide enough)', () => {
    const f = (u: number) => 100 + 0.006 * (u - 250) ** 2;
    const img = synthImage(400, 300, [{ at: f }, { at: (u) => f(u) + 30, amp: 0.6 }]);
    const r = leastCostPath(img.source, [150.5, f(150.5)], [290.5, f(290.5) + 1]);
    expect(r.corridorPx).toBeGreaterThanOrEqual(28);
    expect(maxError(r.points.slice(1), f)).toBeLessThanOrEqual(1);
  });

  it('keeps to the event through band-limited noise (RMS 12 % of the event)', () => {
    const f = (u: number) => 120 + 0.1 * u + 4 * Math.sin(u / 60);
    const img = synthImage(500, 300, [{ at: f }, { at: (u) => f(u) + 30, amp: 0.5 }], { noise: 0.1, seed: 'noisy' });
    const r = leastCostPath(img.source, [5.5, f(5.5)], [495.5, f(495.5) + 2]);
    expect(maxError(r.points.slice(1), f)).toBeLessThanOrEqual(1);
  });

  it('keeps to the event across a weaker crossing event of another dip', () => {
    const f = (u: number) => 120 + 0.1 * u;
    const cross = (u: number) => 20 + 0.5 * u; // crosses f at u = 250
    const img = synthImage(500, 300, [{ at: f }, { at: cross, amp: 0.4 }], { noise: 0.05, seed: 'crossing' });
    const r = leastCostPath(img.source, [5.5, f(5.5)], [495.5, f(495.5) + 2]);
    // Where the two wavelets overlap (main lobe ±15 px, relative dip 0.4 px per
    // column: |u − 250| < 38) the crest of their sum itself moves; there the
    // path may be 2 px off, elsewhere 1 px.
    const near = r.points.slice(1).filter((p) => Math.abs(p[0] - 250) < 38);
    const far = r.points.slice(1).filter((p) => Math.abs(p[0] - 250) >= 38);
    expect(far.length).toBeGreaterThan(400);
    expect(maxError(far, f)).toBeLessThanOrEqual(1);
    expect(maxError(near, f)).toBeLessThanOrEqual(2);
  });

  it('follows the trough and the zero crossing when asked (within 1 px of their true place)', () => {
    const f = () => 80;
    const img = synthImage(300, 160, [{ at: f }]);
    // Ricker side lobes sit at t = ±√(3/2)/(π f) = ±13.0 ms (30 Hz, 1 ms/px), zero crossings at ±1/(π f √2) = ±7.5 ms.
    const sideLobe = 80 + Math.sqrt(1.5) / (Math.PI * 30) * 1000;
    const zero = 80 + 1000 / (Math.PI * 30 * Math.SQRT2);
    const t = leastCostPath(img.source, [5.5, sideLobe], [295.5, sideLobe - 2], { phase: 'trough', corridorPx: 4 });
    expect(maxError(t.points.slice(1), () => sideLobe)).toBeLessThanOrEqual(1);
    const z = leastCostPath(img.source, [5.5, zero], [295.5, zero + 1], { phase: 'zero', corridorPx: 3 });
    expect(maxError(z.points.slice(1), () => zero)).toBeLessThanOrEqual(1);
  });

  it('follows a steep event along rows (segment steeper than 45°)', () => {
    const f = (u: number) => 2 * u - 100; // v = 2u − 100, i.e. 63° on the image
    const img = synthImage(300, 400, [{ at: f }]);
    const r = leastCostPath(img.source, [70.5, f(70.5)], [230.5, f(230.5)]);
    expect(r.points.length).toBeGreaterThan(300);
    // vertical distance to a line of slope 2 is twice the distance across; 1 px across is 2 px down
    expect(maxError(r.points.slice(1), f)).toBeLessThanOrEqual(2);
  });

  it('refuses bad options with the option named', () => {
    const img = synthImage(50, 50, [{ at: () => 25 }]);
    expect(() => leastCostPath(img.source, [1, 25], [40, 25], { maxStepPx: 0 })).toThrow(/options\.maxStepPx/);
    expect(() => leastCostPath(img.source, [1, 25], [40, 25], { maxLengthPx: 10 })).toThrow(/options\.maxLengthPx/);
  });

  it('reads the same pixels from tiles (with overlap) as from the whole image', () => {
    const img = synthImage(700, 300, [{ at: (u) => 100 + 0.2 * u }], { noise: 0.05 });
    const span = 256;
    const tiled = new TiledGreySource(700, 300, span);
    for (let r = 0; r * span < 300; r++)
      for (let c = 0; c * span < 700; c++) {
        const x = Math.max(0, c * span - 1);
        const y = Math.max(0, r * span - 1);
        const w = Math.min(700, (c + 1) * span + 1) - x;
        const h = Math.min(300, (r + 1) * span + 1) - y;
        const g = new Uint8Array(w * h);
        for (let j = 0; j < h; j++) for (let i = 0; i < w; i++) g[j * w + i] = img.grey[(y + j) * 700 + x + i];
        tiled.put(c, r, { x, y, width: w, height: h, grey: g });
      }
    expect(Array.from(tiled.readPatch(240, 240, 40, 40))).toEqual(Array.from(img.source.readPatch(240, 240, 40, 40)));
    const a = leastCostPath(img.source, [3.5, 100.7], [690.5, 240]);
    const b = leastCostPath(tiled, [3.5, 100.7], [690.5, 240]);
    expect(b.points).toEqual(a.points);
    // a missing tile reads NaN
    const partial = new TiledGreySource(700, 300, span);
    expect(Number.isNaN(partial.readPatch(10, 10, 1, 1)[0])).toBe(true);
  });

  it('reads true amplitudes through FloatSource the same way (SEG-Y window plug)', () => {
    const w = 200, h = 100;
    const data = new Float32Array(w * h);
    for (let i = 0; i < w; i++) for (let j = 0; j < h; j++) data[j * w + i] = Math.exp(-(((j + 0.5 - 50) / 3) ** 2)) * 5;
    const src = new FloatSource(data, w, h, 1000, 1000, 5, 100, 200);
    const r = leastCostPath(src, [105.5, 250], [290.5, 253]);
    expect(maxError(r.points.slice(1), () => 250)).toBeLessThanOrEqual(0.5);
  });
});

describe('thinning and snapping', () => {
  it('thins a followed path with Douglas–Peucker to within the tolerance, keeping both ends', () => {
    const f = (u: number) => 150 - 20 * Math.sin((Math.PI * u) / 600);
    const pts = Array.from({ length: 600 }, (_, i) => [i + 0.5, f(i + 0.5)] as [number, number]);
    const thin = thinPath(pts, 0.5);
    expect(thin.length).toBeLessThan(40);
    expect(thin[0]).toEqual(pts[0]);
    expect(thin[thin.length - 1]).toEqual(pts[pts.length - 1]);
    // every original point lies within 0.5 px (+ rounding) of the thinned polyline, vertically
    for (const p of pts) {
      const k = thin.findIndex((q, i) => i < thin.length - 1 && q[0] <= p[0] && thin[i + 1][0] >= p[0]);
      const a = thin[k], b = thin[k + 1];
      const v = a[1] + ((b[1] - a[1]) * (p[0] - a[0])) / (b[0] - a[0] || 1);
      expect(Math.abs(v - p[1])).toBeLessThan(0.55);
    }
  });

  it('snaps vertices onto the peak within ±N px and leaves those out of reach alone', () => {
    const f = (u: number) => 90 + 0.05 * u;
    const img = synthImage(300, 200, [{ at: f }]);
    const line: [number, number][] = [[20.5, f(20.5) + 3], [100.5, f(100.5) - 2.5], [200.5, f(200.5) + 30]];
    const r = snapPolyline(img.source, line, { radiusPx: 4 });
    expect(Math.abs(r.points[0][1] - f(20.5))).toBeLessThan(0.5);
    expect(Math.abs(r.points[1][1] - f(100.5))).toBeLessThan(0.5);
    expect(r.points[2]).toEqual(line[2]);
    expect(r.moved).toBe(2);
    expect(snapToPhase(img.source, [50.5, f(50.5) + 2])[1]).toBeCloseTo(f(50.5), 0);
  });
});
