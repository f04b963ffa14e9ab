/**
 * Readings of two kept versions side by side: each number of the older (A)
 * and the newer (B), its change B − A and the change in per cent of A.
 * Pure functions (no Vue), so the table is tested without a browser.
 */
import type { MeasurementOutput } from '../../../shared/measure/index';
import { CLASS_LABEL } from '../../canvas/palette';

export interface CompareRow {
  key: string;
  label: string;
  /** 'm', 'm²', '°'… for the header; '' for plain ratios and counts. */
  unit: string;
  a: number | string | null;
  b: number | string | null;
  /** B − A for numbers present in both; null otherwise. */
  delta: number | null;
  /** (B − A) / |A| × 100; null when A is 0 or a side is missing. */
  pct: number | null;
  changed: boolean;
}

type Num = number | null | undefined;

function numberRow(key: string, label: string, unit: string, a: Num, b: Num): CompareRow {
  const x = a ?? null;
  const y = b ?? null;
  const both = x !== null && y !== null && Number.isFinite(x) && Number.isFinite(y);
  const delta = both ? y - x : null;
  const pct = both && x !== 0 ? ((y - x) / Math.abs(x)) * 100 : null;
  return { key, label, unit, a: x, b: y, delta, pct, changed: both ? y !== x : x !== y };
}

function textRow(key: string, label: string, a: string | null, b: string | null): CompareRow {
  return { key, label, unit: '', a, b, delta: null, pct: null, changed: a !== b };
}

/** Rows for the first buildup of each output (one buildup per stored record), then per cycle by index. */
export function compareReadings(a: MeasurementOutput | null, b: MeasurementOutput | null): CompareRow[] {
  const ba = a?.buildups[0] ?? null;
  const bb = b?.buildups[0] ?? null;
  if (!ba && !bb) return [];
  const rows: CompareRow[] = [
    textRow('class', 'Evolution', ba ? CLASS_LABEL[ba.classification] : null, bb ? CLASS_LABEL[bb.classification] : null),
    numberRow('height', 'Height', 'm', ba?.heightM, bb?.heightM),
    numberRow('baseWidth', 'Base width', 'm', ba?.baseWidthM, bb?.baseWidthM),
    numberRow('aspect', 'Aspect ratio', '', ba?.aspectRatio, bb?.aspectRatio),
    numberRow('area', 'Area', 'm²', ba?.areaM2, bb?.areaM2),
    numberRow('volume', 'Volume', 'm³', ba?.volumeM3, bb?.volumeM3),
    numberRow('trajectory', 'Net trajectory', '°', ba?.trajectoryDeg, bb?.trajectoryDeg),
    numberRow('backstep', 'Net backstep', 'm', ba?.netBackstepM, bb?.netBackstepM),
    numberRow('aggradation', 'Net aggradation', 'm', ba?.netAggradationM, bb?.netAggradationM),
    numberRow('terminations', 'Terminations on top', '', ba?.terminationsOnTop, bb?.terminationsOnTop),
  ];
  const indexes = [...new Set([...(ba?.cycles ?? []), ...(bb?.cycles ?? [])].map((c) => c.index))].sort((x, y) => x - y);
  for (const i of indexes) {
    const ca = ba?.cycles.find((c) => c.index === i);
    const cb = bb?.cycles.find((c) => c.index === i);
    rows.push(
      numberRow(`c${i}.thickness`, `Cycle ${i} thickness`, 'm', ca?.thicknessM, cb?.thicknessM),
      numberRow(`c${i}.topWidth`, `Cycle ${i} top width`, 'm', ca?.topWidthM, cb?.topWidthM),
      numberRow(`c${i}.trajectory`, `Cycle ${i} trajectory`, '°', ca?.trajectoryDeg, cb?.trajectoryDeg),
    );
  }
  return rows;
}

/** "+12.3 %" / "−4.0 %" / "—" with the typographic minus. */
export function formatPct(p: number | null): string {
  if (p === null || !Number.isFinite(p)) return '—';
  const s = Math.abs(p) < 0.05 ? '0.0' : Math.abs(p).toFixed(1);
  return `${p > 0.05 ? '+' : p < -0.05 ? '\u2212' : '±'}${s}\u2009%`;
}
