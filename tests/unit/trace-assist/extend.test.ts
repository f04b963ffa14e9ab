import { describe, expect, it } from 'vitest';
import { autoExtend, proposeTermination } from '../../../shared/trace-assist/extend';
import { maxError, synthImage } from './synthetic';

describe('auto-extend', () => {
  it('follows a flat event both ways and stops where it onlaps a steeper surface rising ahead', () => {
    const event = () => 150;
    const surface = (u: number) => 150 - 1.5 * (u - 300); // rises to the right, crosses the event at u = 300
    const img = synthImage(500, 400, [
      { at: event, from: 40, to: 300 },
      { at: surface, from: 205, to: 400, amp: 0.8 },
    ], { noise: 0.04, seed: 'onlap' });
    const r = autoExtend(img.source, [120.5, 152]);
    expect(Math.abs(r.seed[1] - 150)).toBeLessThan(0.5);
    expect(r.stops.right.at[0]).toBeGreaterThan(285);
    expect(r.stops.right.at[0]).toBeLessThan(305);
    expect(r.stops.right.proposal).toBe('onlap');
    expect(r.stops.left.at[0]).toBeGreaterThan(30);
    expect(r.stops.left.at[0]).toBeLessThan(50);
    expect(r.stops.left.reason).not.toBe('edge');
    // the followed points sit on the event
    const inside = r.points.filter((p) => p[0] > 45 && p[0] < 285);
    expect(inside.length).toBeGreaterThan(230);
    expect(maxError(inside, event)).toBeLessThanOrEqual(1);
    // left to right, one point per column
    for (let i = 1; i < r.points.length; i++) expect(r.points[i][0] - r.points[i - 1][0]).toBe(1);
  });

  it('proposes truncation for a surface cutting down through the event ahead', () => {
    const img = synthImage(500, 400, [
      { at: () => 150, from: 40, to: 300 },
      { at: (u) => 150 + 1.5 * (u - 300), from: 205, to: 400, amp: 0.8 },
    ]);
    const r = autoExtend(img.source, [120.5, 150]);
    expect(r.stops.right.at[0]).toBeGreaterThan(285);
    expect(r.stops.right.at[0]).toBeLessThan(305);
    expect(r.stops.right.proposal).toBe('truncation');
  });

  it('proposes downlap for a dipping event ending on a flatter surface below', () => {
    // 1.5 px per column against a flat surface: a bend beyond maxBendPxPerCol (1.2).
    // A gentler bend is followed onto the surface (the same kink as a margin's break of slope).
    const ev = (u: number) => 100 + 1.5 * (u - 170);
    const img = synthImage(500, 400, [
      { at: ev, from: 120, to: 250 },
      { at: () => 220, from: 0, to: 500, amp: 0.8 },
    ]);
    const r = autoExtend(img.source, [180.5, ev(180.5)]);
    expect(r.stops.right.at[0]).toBeGreaterThan(235);
    expect(r.stops.right.at[0]).toBeLessThan(252);
    expect(r.stops.right.proposal).toBe('downlap');
    expect(r.stops.left.at[0]).toBeLessThan(135);
  });

  it('stops at the image edge with no proposal', () => {
    const img = synthImage(200, 200, [{ at: () => 100 }]);
    const r = autoExtend(img.source, [50.5, 100]);
    expect(r.stops.left.reason).toBe('edge');
    expect(r.stops.right.reason).toBe('edge');
    expect(r.stops.left.proposal).toBeNull();
    expect(r.points.length).toBe(200);
    expect(maxError(r.points, () => 100)).toBeLessThan(0.3);
  });

  it('classifies by the dips in the travel direction', () => {
    expect(proposeTermination(0, -1.5)).toEqual({ type: 'onlap', confident: true });
    expect(proposeTermination(0, 1.5)).toEqual({ type: 'truncation', confident: true });
    expect(proposeTermination(0.8, 0)).toEqual({ type: 'downlap', confident: true });
    expect(proposeTermination(-0.8, 0)).toEqual({ type: 'toplap', confident: true });
    expect(proposeTermination(0.1, null).confident).toBe(false);
  });

  it('refuses a seed outside the image and bad options', () => {
    const img = synthImage(50, 50, [{ at: () => 25 }]);
    expect(() => autoExtend(img.source, [60, 20])).toThrow(/seed/);
    expect(() => autoExtend(img.source, [20, 20], { windowPx: 0 })).toThrow(/options\.windowPx/);
  });
});
