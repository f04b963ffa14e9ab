/**
 * The Tie editor behind the section page's Ties panel: live fit through the
 * shared engine, residual lookup, the 5 % line-length check and unsaved-change
 * tracking against the stored calibration.
 */
import { describe, expect, it } from 'vitest';
import { ref } from 'vue';
import { fitCalibration } from '../../shared/measure/calibration';
import type { CalibrationRecord } from '../../shared/schemas/sections';
import { calibratedXRange, LENGTH_MISMATCH_LIMIT, useTieEditor } from '../../client/canvas/useTieEditor';

// An exact map x = 2.5 m/px · u, y = 1000 ms + 2 ms/px · v on a 4000 × 1200 image.
const truth = (u: number, v: number): [number, number] => [2.5 * u, 1000 + 2 * v];

function editor(lineLengthM: number | null = null) {
  return useTieEditor(ref({ width: 4000, height: 1200 }), ref(lineLengthM));
}

function record(ties: { px: [number, number]; world: [number, number] }[], mode: 'affine' | 'axes' = 'affine'): CalibrationRecord {
  return {
    id: 1,
    sectionId: 1,
    version: 3,
    mode,
    ties,
    fit: fitCalibration(ties, mode),
    createdAt: new Date(0).toISOString(),
    createdBy: null,
    lineLengthM: null,
    calibratedXRangeM: null,
    lengthMismatch: null,
  };
}

describe('useTieEditor', () => {
  it('starts with no Ties (and nothing unsaved) on a calibration made from SEG-Y headers', () => {
    const corners: [number, number][] = [[0, 0], [4000, 0], [0, 1200], [4000, 1200]];
    const rec = { ...record(corners.map((px) => ({ px, world: truth(px[0], px[1]) })), 'axes'), source: 'segy_headers' as const };
    const e = editor();
    e.load(rec);
    expect(e.ties.value).toEqual([]);
    expect(e.dirty.value).toBe(false);
    e.add([100, 100], ...truth(100, 100));
    expect(e.dirty.value).toBe(true);
    // a calibration of placed Ties still loads them
    const placed = editor();
    placed.load({ ...rec, source: 'ties' });
    expect(placed.ties.value).toHaveLength(4);
    expect(placed.dirty.value).toBe(false);
  });

  it('needs enough complete Ties before it fits, and says how many', () => {
    const e = editor();
    e.add([100, 100], ...truth(100, 100));
    e.add([3000, 200], ...truth(3000, 200));
    expect(e.fit.value).toBeNull();
    expect(e.result.value.error).toMatch(/at least 3 Ties .*\(2 so far\)/);
    e.mode.value = 'axes';
    expect(e.fit.value).not.toBeNull(); // two diagonal Ties are enough for axes
    e.mode.value = 'affine';
    const pending = e.add([1500, 900]); // placed, values not typed yet
    expect(e.fit.value).toBeNull();
    e.update(pending.id, { x: truth(1500, 900)[0], y: truth(1500, 900)[1] });
    expect(e.fit.value!.rmsPx).toBeLessThan(1e-9);
    expect(e.fit.value!.affine.a).toBeCloseTo(2.5, 12);
    expect(e.fit.value!.affine.e).toBeCloseTo(2, 12);
  });

  it('reports collinear Ties through the engine message', () => {
    const e = editor();
    for (const u of [100, 200, 300]) e.add([u, u], ...truth(u, u));
    expect(e.fit.value).toBeNull();
    expect(e.result.value.error).toMatch(/collinear/);
  });

  it('gives each complete Tie its residual from the engine', () => {
    const e = editor();
    const pts: [number, number][] = [[100, 100], [3900, 150], [2000, 1100], [600, 900]];
    const ids = pts.map(([u, v], i) => e.add([u, v], truth(u, v)[0] + (i === 3 ? 40 : 0), truth(u, v)[1]).id);
    const direct = fitCalibration(
      pts.map(([u, v], i) => ({ px: [u, v] as [number, number], world: [truth(u, v)[0] + (i === 3 ? 40 : 0), truth(u, v)[1]] as [number, number] })),
      'affine',
    );
    ids.forEach((id, i) => expect(e.residuals.value.get(id)!.residualPx).toBeCloseTo(direct.residuals[i].residualPx, 12));
    expect(e.fit.value!.rmsPx).toBeCloseTo(direct.rmsPx, 12);
    expect(e.fit.value!.rmsPx).toBeGreaterThan(1);
  });

  it('flags a calibrated x-range more than 5 % away from the line length', () => {
    // 4000 px at 2.5 m/px = 10,000 m across the image.
    for (const [line, mismatch] of [
      [10_000, false],
      [10_400, false], // 3.8 % shorter range than the line
      [9_400, true], // 6.4 % longer
      [6_220, true],
    ] as const) {
      const e = editor(line);
      for (const [u, v] of [[0, 0], [4000, 0], [0, 1200]] as [number, number][]) e.add([u, v], ...truth(u, v));
      expect(calibratedXRange(e.fit.value!, 4000, 1200)).toBeCloseTo(10_000, 6);
      const check = e.lengthCheck.value!;
      expect(check.relativeDifference).toBeCloseTo(Math.abs(10_000 - line) / line, 12);
      expect(check.mismatch).toBe(mismatch);
    }
    expect(LENGTH_MISMATCH_LIMIT).toBe(0.05);
    // Without end coordinates there is nothing to compare.
    const none = editor(null);
    for (const [u, v] of [[0, 0], [4000, 0], [0, 1200]] as [number, number][]) none.add([u, v], ...truth(u, v));
    expect(none.lengthCheck.value).toBeNull();
  });

  it('tracks unsaved changes against the stored calibration', () => {
    const stored = record([[10, 10], [3000, 40], [1500, 1000]].map(([u, v]) => ({ px: [u, v] as [number, number], world: truth(u, v) })));
    const e = editor();
    expect(e.dirty.value).toBe(false);
    e.load(stored);
    expect(e.ties.value).toHaveLength(3);
    expect(e.dirty.value).toBe(false);
    e.update(e.ties.value[1].id, { x: 7600 });
    expect(e.dirty.value).toBe(true);
    e.load(stored);
    e.mode.value = 'axes';
    expect(e.dirty.value).toBe(true);
    e.mode.value = 'affine';
    expect(e.dirty.value).toBe(false);
    const placed = e.add([2000, 600]);
    expect(e.dirty.value).toBe(true); // a Tie waiting for its values is a change too
    e.remove(placed.id);
    expect(e.dirty.value).toBe(false);
    // Using an older version's Ties keeps the latest as the base for saving.
    const older = { ...record([[5, 5], [3900, 1100]].map(([u, v]) => ({ px: [u, v] as [number, number], world: truth(u, v) })), 'axes'), version: 1 };
    e.copyFrom(older);
    expect(e.base.value!.version).toBe(3);
    expect(e.mode.value).toBe('axes');
    expect(e.dirty.value).toBe(true);
  });
});
