/**
 * Number formatting and wording of the Readings panel.
 *
 * Thousands are grouped with a thin space (U+2009, as in SI/ISO 80000-1
 * practice), the minus sign is U+2212, units follow after a normal space.
 * Very large areas and volumes switch to scientific notation with
 * superscript exponents ("3.42 × 10⁹ m³").
 *
 * Lengths, areas, volumes and rates take the person's display unit
 * (`unit`, shared/units.ts; default metres): the value passed in is always
 * SI and is converted here, at display.
 */
import { areaLabel, lengthLabel, rateLabel, toDisplayArea, toDisplayLength, toDisplayRate, toDisplayVolume, volumeLabel, type LengthUnit } from './units';

export const THIN_SPACE = '\u2009';
export const MINUS = '\u2212';
export const DASH = '—';

type Num = number | null | undefined;

const isNum = (v: Num): v is number => typeof v === 'number' && Number.isFinite(v);

/** Group the integer part of a non-negative decimal string with thin spaces. */
function group(s: string): string {
  const [int, frac] = s.split('.');
  const g = int.replace(/\B(?=(\d{3})+(?!\d))/g, THIN_SPACE);
  return frac !== undefined ? `${g}.${frac}` : g;
}

/** A number with `decimals` decimals, thin-space thousands, true minus sign; '—' for null / NaN. */
export function formatNumber(v: Num, decimals = 0, opts: { signed?: boolean } = {}): string {
  if (!isNum(v)) return DASH;
  let s = Math.abs(v).toFixed(decimals);
  const zero = Number(s) === 0;
  s = group(s);
  if (v < 0 && !zero) return MINUS + s;
  if (opts.signed && v > 0 && !zero) return '+' + s;
  return s;
}

const SUPERSCRIPT: Record<string, string> = {
  '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻',
};

/** Scientific notation with `digits` significant digits: "3.42 × 10⁹". */
export function formatScientific(v: Num, digits = 3): string {
  if (!isNum(v)) return DASH;
  if (v === 0) return '0';
  const [mant, exp] = v.toExponential(digits - 1).split('e');
  const e = String(Number(exp)).split('').map((c) => SUPERSCRIPT[c] ?? c).join('');
  const m = mant.startsWith('-') ? MINUS + mant.slice(1) : mant;
  return `${m} × 10${e}`;
}

/** Length given in metres, shown in `opts.unit` (default m): 1 decimal below 1 000, whole above ("4 520 m", "312.4 m", "1 025 ft"). */
export function formatMetres(v: Num, opts: { signed?: boolean; unit?: LengthUnit } = {}): string {
  if (!isNum(v)) return DASH;
  const unit = opts.unit ?? 'm';
  const d = toDisplayLength(v, unit);
  return `${formatNumber(d, Math.abs(d) < 1000 ? 1 : 0, opts)} ${lengthLabel(unit)}`;
}

/** Above this, areas and volumes are written in scientific notation. */
export const SCIENTIFIC_FROM = 1e7;

/** Area given in m², shown in m² or ft²: whole units with thin-space thousands, scientific from 10⁷. */
export function formatArea(v: Num, unit: LengthUnit = 'm'): string {
  if (!isNum(v)) return DASH;
  const d = toDisplayArea(v, unit);
  return Math.abs(d) >= SCIENTIFIC_FROM ? `${formatScientific(d)} ${areaLabel(unit)}` : `${formatNumber(d, 0)} ${areaLabel(unit)}`;
}

/** Volume given in m³, shown in m³ or ft³: whole units with thin-space thousands, scientific from 10⁷. */
export function formatVolume(v: Num, unit: LengthUnit = 'm'): string {
  if (!isNum(v)) return DASH;
  const d = toDisplayVolume(v, unit);
  return Math.abs(d) >= SCIENTIFIC_FROM ? `${formatScientific(d)} ${volumeLabel(unit)}` : `${formatNumber(d, 0)} ${volumeLabel(unit)}`;
}

/** Angle in degrees with 1 decimal: "12.3°". */
export function formatDegrees(v: Num): string {
  if (!isNum(v)) return DASH;
  return `${formatNumber(v, 1)}°`;
}

/** A dimensionless ratio with 3 significant digits ("0.125", "1.40"); '—' when missing. */
export function formatRatio(v: Num): string {
  if (!isNum(v)) return DASH;
  if (v === 0) return '0';
  const s = v.toPrecision(3);
  if (s.includes('e')) return formatScientific(v, 3);
  return s.startsWith('-') ? MINUS + s.slice(1) : s;
}

/** Rate given in metres per million years, shown in m/Myr or ft/Myr with 1 decimal. */
export function formatRate(v: Num, unit: LengthUnit = 'm'): string {
  if (!isNum(v)) return DASH;
  return `${formatNumber(toDisplayRate(v, unit), 1)} ${rateLabel(unit)}`;
}

/** Age in Ma (up to 3 decimals, trailing zeros trimmed). */
export function formatAge(v: Num): string {
  if (!isNum(v)) return DASH;
  return `${String(Number(v.toFixed(3)))} Ma`;
}

export type Quantity = 'length' | 'area' | 'volume' | 'angle';

/** Format a value of a quantity kind (used by the P90/P50/P10 table). */
export function formatQuantity(kind: Quantity, v: Num, unit: LengthUnit = 'm'): string {
  switch (kind) {
    case 'length':
      return formatMetres(v, { unit });
    case 'area':
      return formatArea(v, unit);
    case 'volume':
      return formatVolume(v, unit);
    case 'angle':
      return formatDegrees(v);
  }
}

// ---------------------------------------------------------------------------
// checklist wording

/** One line of the "what is still needed" checklist. */
export interface ChecklistItem {
  /** The original `path: reason` issue. */
  issue: string;
  /** What to do, in the panel's words. */
  text: string;
  /** 1-based cycle number when the item is about one cycle. */
  cycle: number | null;
}

const side = (s: string) => (s.toLowerCase().includes('left') ? 'left' : 'right');

/**
 * Turn a measurability issue (`path: reason`, 0-based editor positions, as
 * from `measurabilityIssues`, `incompleteCycleNotes`, `contextIssues`) into
 * an instruction: "Trace the base", "Pin both margins of cycle 2"… Unknown
 * issues are shown as they are.
 */
export function checklistItem(issue: string): ChecklistItem {
  const colon = issue.indexOf(': ');
  const path = colon >= 0 ? issue.slice(0, colon) : issue;
  const reason = colon >= 0 ? issue.slice(colon + 2) : '';
  const item = (text: string, cycle: number | null = null): ChecklistItem => ({ issue, text, cycle });

  if (path === 'base') {
    if (reason.startsWith('needs at least 2')) return item('Trace the base');
    if (reason.includes('u-extent')) return item('Give the base some width: all its points lie on one vertical');
  }
  if (path === 'cycles' && reason.startsWith('needs at least one cycle'))
    return item('Trace a cycle top and pin both its margins');
  if (path === 'calibration') {
    if (reason.includes('no Ties')) return item('Calibrate the section: place at least 3 Ties');
    const m = /needs at least (\d+) Ties \(has (\d+)\)/.exec(reason);
    if (m) return item(`Place ${Number(m[1]) - Number(m[2])} more Tie${Number(m[1]) - Number(m[2]) === 1 ? '' : 's'} to calibrate the section`);
  }
  if (path === 'velocity') return item('Choose a velocity model for the section');

  const cm = /^cycles\[(\d+)\](?:\.(\w+))?(?:\[(\d+)\])?$/.exec(path);
  if (cm) {
    const n = Number(cm[1]) + 1;
    const part = cm[2] ?? '';
    const vertex = cm[3] !== undefined ? Number(cm[3]) + 1 : null;
    if (vertex !== null) {
      const what = part === 'top' ? 'top' : part === 'flankLeft' ? 'left flank' : part === 'flankRight' ? 'right flank' : part;
      return item(`Fix point ${vertex} of the ${what} of cycle ${n}`, n);
    }
    if (part === 'top') return item(`Trace the top of cycle ${n}`, n);
    if (part === 'margins') return item(`Pin both margins of cycle ${n}`, n);
    if (part === 'marginLeft' || part === 'marginRight') {
      if (reason.startsWith('outside')) return item(`Move the ${side(part)} Margin pin of cycle ${n} onto its top`, n);
      return item(`Pin the ${side(part)} margin of cycle ${n}`, n);
    }
    if (part === 'ageTopMa') return item(`Make the top age of cycle ${n} younger than the cycle below it`, n);
  }
  const bm = /^base\[(\d+)\]$/.exec(path);
  if (bm) return item(`Fix point ${Number(bm[1]) + 1} of the base`);
  return item(issue);
}

// ---------------------------------------------------------------------------
// P90 / P50 / P10 rows

export interface Percentiles {
  p90: number;
  p50: number;
  p10: number;
}

export interface RangeRow {
  key: string;
  label: string;
  kind: Quantity;
  p90: string;
  p50: string;
  p10: string;
}

/** Rows of the ranges table: height, area, volume and every flank angle that has a range. */
export function rangeRows(ranges: {
  heightM: Percentiles;
  areaM2: Percentiles;
  volumeM3: Percentiles;
  cycles: { index: number; left: { flankAngleDeg: Percentiles | null }; right: { flankAngleDeg: Percentiles | null } }[];
}, unit: LengthUnit = 'm'): RangeRow[] {
  const row = (key: string, label: string, kind: Quantity, p: Percentiles): RangeRow => ({
    key,
    label,
    kind,
    p90: formatQuantity(kind, p.p90, unit),
    p50: formatQuantity(kind, p.p50, unit),
    p10: formatQuantity(kind, p.p10, unit),
  });
  const rows = [
    row('height', 'Height', 'length', ranges.heightM),
    row('area', 'Area', 'area', ranges.areaM2),
    row('volume', 'Volume', 'volume', ranges.volumeM3),
  ];
  for (const c of ranges.cycles) {
    if (c.left.flankAngleDeg) rows.push(row(`c${c.index}L`, `Flank L, cycle ${c.index}`, 'angle', c.left.flankAngleDeg));
    if (c.right.flankAngleDeg) rows.push(row(`c${c.index}R`, `Flank R, cycle ${c.index}`, 'angle', c.right.flankAngleDeg));
  }
  return rows;
}
