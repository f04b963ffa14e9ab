/**
 * Editing a section's Ties: the working list, the calibration mode, a live
 * least-squares fit with residuals through the shared engine (the same code
 * the server stores), and the checks shown beside it.
 */
import { computed, ref, shallowRef, type Ref } from 'vue';
import { CalibrationError } from '../../shared/measure/errors';
import { applyCalibration, fitCalibration, type CalibrationFit, type CalibrationMode } from '../../shared/measure/calibration';
import type { CalibrationRecord, Tie } from '../../shared/schemas/sections';
import type { Pt } from './viewport';

export interface EditorTie {
  id: string;
  px: Pt;
  /** World values typed by the person: x metres along the line, y ms TWT or m depth; null until typed. */
  x: number | null;
  y: number | null;
}

/** Relative difference above which the calibrated x-range and the line length disagree. */
export const LENGTH_MISMATCH_LIMIT = 0.05;

let seq = 0;
const newId = () => `t${Date.now().toString(36)}${(seq++).toString(36)}`;

export function minTies(mode: CalibrationMode): number {
  return mode === 'affine' ? 3 : 2;
}

/**
 * `|x(right edge) − x(left edge)|` at mid-height: the length along the line
 * that the calibration gives the whole image (same definition as the server's
 * `calibratedXRangeM`).
 */
export function calibratedXRange(fit: CalibrationFit, width: number, height: number): number {
  const a = applyCalibration(fit.affine, [0, height / 2]);
  const b = applyCalibration(fit.affine, [width, height / 2]);
  return Math.abs(b[0] - a[0]);
}

/**
 * The Ties a person placed: none for a calibration made from a SEG-Y file's
 * headers (its stored points are the image corners mapped through the
 * header geometry, not Ties; the stored fit drives the readout).
 */
function placedTies(record: CalibrationRecord | null): CalibrationRecord['ties'] {
  return !record || record.source === 'segy_headers' ? [] : record.ties;
}

export function useTieEditor(image: Ref<{ width: number; height: number }>, lineLengthM: Ref<number | null | undefined>) {
  const ties = ref<EditorTie[]>([]);
  const mode = ref<CalibrationMode>('affine');
  /** The stored calibration the list started from (null: none yet). */
  const base = shallowRef<CalibrationRecord | null>(null);
  const selectedId = ref<string | null>(null);

  /** Replace the working list with a stored calibration (or clear it). */
  function load(record: CalibrationRecord | null): void {
    base.value = record;
    mode.value = record?.mode ?? 'affine';
    ties.value = placedTies(record).map((t) => ({ id: newId(), px: [t.px[0], t.px[1]], x: t.world[0], y: t.world[1] }));
    selectedId.value = null;
  }

  /** Take the Ties and mode of an older version into the working list; saving still builds on the latest. */
  function copyFrom(record: CalibrationRecord): void {
    mode.value = record.mode;
    ties.value = placedTies(record).map((t) => ({ id: newId(), px: [t.px[0], t.px[1]], x: t.world[0], y: t.world[1] }));
    selectedId.value = null;
  }

  function add(px: Pt, x: number | null = null, y: number | null = null): EditorTie {
    const t: EditorTie = { id: newId(), px: [px[0], px[1]], x, y };
    ties.value = [...ties.value, t];
    return t;
  }

  function update(id: string, patch: Partial<Omit<EditorTie, 'id'>>): void {
    ties.value = ties.value.map((t) => (t.id === id ? { ...t, ...patch } : t));
  }

  function remove(id: string): void {
    ties.value = ties.value.filter((t) => t.id !== id);
    if (selectedId.value === id) selectedId.value = null;
  }

  const complete = computed(() => ties.value.filter((t) => t.x !== null && t.y !== null && Number.isFinite(t.x) && Number.isFinite(t.y)));
  const payloadTies = computed<Tie[]>(() => complete.value.map((t) => ({ px: [t.px[0], t.px[1]], world: [t.x!, t.y!] })));

  /** The live fit, or why there is none. */
  const result = computed<{ fit: CalibrationFit | null; error: string | null }>(() => {
    const n = complete.value.length;
    const need = minTies(mode.value);
    if (n < need) {
      return { fit: null, error: `${mode.value === 'affine' ? 'An affine' : 'An axes'} calibration needs at least ${need} Ties with world values (${n} so far).` };
    }
    try {
      return { fit: fitCalibration(payloadTies.value, mode.value), error: null };
    } catch (e) {
      if (e instanceof CalibrationError) return { fit: null, error: e.message.replace(/^calibration: /, '') };
      throw e;
    }
  });
  const fit = computed(() => result.value.fit);

  /** Residuals by tie id (only complete ties have one). */
  const residuals = computed(() => {
    const out = new Map<string, CalibrationFit['residuals'][number]>();
    const f = fit.value;
    if (!f) return out;
    complete.value.forEach((t, i) => out.set(t.id, f.residuals[i]));
    return out;
  });

  const xRangeM = computed(() => (fit.value && image.value.width > 0 ? calibratedXRange(fit.value, image.value.width, image.value.height) : null));
  const lengthCheck = computed(() => {
    const line = lineLengthM.value;
    const range = xRangeM.value;
    if (!line || range === null) return null;
    const rel = Math.abs(range - line) / line;
    return { lineLengthM: line, xRangeM: range, relativeDifference: rel, mismatch: rel > LENGTH_MISMATCH_LIMIT };
  });

  /** True when the list or mode differ from the stored calibration. */
  const dirty = computed(() => {
    const b = base.value;
    const now = payloadTies.value;
    if (ties.value.length !== complete.value.length) return true;
    if (!b) return now.length > 0;
    const bt = placedTies(b);
    if ((bt.length || now.length) && b.mode !== mode.value) return true;
    if (bt.length !== now.length) return true;
    return bt.some((t, i) => t.px[0] !== now[i].px[0] || t.px[1] !== now[i].px[1] || t.world[0] !== now[i].world[0] || t.world[1] !== now[i].world[1]);
  });

  return { ties, mode, base, selectedId, load, copyFrom, add, update, remove, complete, payloadTies, result, fit, residuals, xRangeM, lengthCheck, dirty };
}

export type TieEditor = ReturnType<typeof useTieEditor>;
