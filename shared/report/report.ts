/**
 * The buildup report as plain data (`cayline.report/1`), shared by the report
 * page, the server's PDF and the table exports: the title block, what is
 * missing when nothing is measurable yet, the Ledger rows per cycle, the
 * buildup figures with P90/P50/P10, and the CSV table (one row per cycle, one
 * header row carrying units). Pure: no DB, no DOM, no Node-only APIs.
 *
 * Lengths are converted to the reader's unit (metres or international feet,
 * shared/units.ts) only here, where numbers leave the engine; angles stay in
 * degrees and ratios are unit-free.
 */
import type { BuildupMeasurement, MeasurementOutput } from '../measure/index';
import type { BuildupGeometry } from '../editor/model';
import type { ReviewState } from '../schemas/review';
import { toDisplay, withUnit, type LengthUnit, type Quantity } from '../units';
import { CLASS_LABEL } from '../palette';

export const REPORT_FORMAT = 'cayline.report/1' as const;

/** Papers of the PDF (PDF points, 1/72 in): ISO 216 A4 is 210 × 297 mm, US Letter 8.5 × 11 in. */
export const PAPERS = { a4: { label: 'A4', width: 595.28, height: 841.89 }, letter: { label: 'US Letter', width: 612, height: 792 } } as const;
export type Paper = keyof typeof PAPERS;

/** Vertical stretch of the crop (as the editor's control): image px drawn this many times taller than wide. */
export const STRETCH_MIN = 0.25;
export const STRETCH_MAX = 8;

export interface ReportTitle {
  project: string;
  section: string;
  line: string;
  survey: string;
  buildup: string;
  buildupVersion: number;
  interpreter: string | null;
  reviewState: ReviewState;
  reviewStateLabel: string;
  signedOffBy: string | null;
  signedOffAt: string | null;
  signedOffVersion: number | null;
  /** ISO date-time the report was made. */
  date: string;
  caylineVersion: string;
}

export interface ReportVelocity {
  verticalDomain: 'twt_ms' | 'depth_m';
  description: string;
  isDefault: boolean;
  sources: string[];
}

/** The crop of the section around the buildup, in image pixels, and how it is drawn. */
export interface ReportCrop {
  u0: number;
  v0: number;
  width: number;
  height: number;
  /** Vertical stretch asked for (1 = the image as exported). */
  stretch: number;
  /** The image's own VE at the crest (horizontal m per px ÷ vertical m of depth per px); null when unknown. */
  intrinsicVE: number | null;
  /** VE of the crop as drawn with `stretch`; null when unknown. */
  ve: number | null;
  /** The stretch that shows the crest region at true scale (VE 1); null when unknown. */
  trueScaleStretch: number | null;
  /** Size of the whole image (px), to place the section's preview under the crop. */
  imageWidth: number;
  imageHeight: number;
}

export interface BuildupReport {
  format: typeof REPORT_FORMAT;
  buildupId: number;
  sectionId: number;
  title: ReportTitle;
  unit: LengthUnit;
  /** Empty when measurable; otherwise what to do first, in plain words. */
  missing: string[];
  measurement: BuildupMeasurement | null;
  /** Engine options used (printed in the report). */
  options: MeasurementOutput['options'] | null;
  assumptions: string[];
  caution: string;
  velocity: ReportVelocity;
  geometry: BuildupGeometry;
  /** Null while the section's tiles are not ready. */
  crop: ReportCrop | null;
  /** Note pins (discussion threads) inside the crop, by their number on the section; image pixels. */
  notePins: { number: number; at: [number, number]; resolved: boolean }[];
  /**
   * Line geography (longitude, latitude in degrees, WGS 84) when both ends are
   * known, with the calibrated x (m) of the image's left and right edges at
   * mid-height (null without Ties): the left edge is the line's start.
   */
  lineEnds: { start: [number, number]; end: [number, number]; xLeftM: number | null; xRightM: number | null } | null;
}

// ---------------------------------------------------------------------------
// columns of the Ledger table and the CSV

export interface CycleColumn {
  key: string;
  title: string;
  quantity: Quantity;
  /** Decimals on the page and in the PDF (the CSV keeps full precision). */
  decimals: number;
  get(c: BuildupMeasurement['cycles'][number]): number | string | null;
}

export const CYCLE_COLUMNS: readonly CycleColumn[] = [
  { key: 'cycle', title: 'Cycle', quantity: 'ratio', decimals: 0, get: (c) => c.index },
  { key: 'class', title: 'Class', quantity: 'ratio', decimals: 0, get: (c) => c.class },
  { key: 'systemsTract', title: 'Systems tract', quantity: 'ratio', decimals: 0, get: (c) => c.systemsTract },
  { key: 'ageTop', title: 'Top age (Ma)', quantity: 'ratio', decimals: 3, get: (c) => c.ageTopMa },
  { key: 'topWidth', title: 'Top width', quantity: 'length', decimals: 1, get: (c) => c.topWidthM },
  { key: 'thickness', title: 'Thickness', quantity: 'length', decimals: 1, get: (c) => c.thicknessM },
  { key: 'aspectRatio', title: 'Aspect ratio', quantity: 'ratio', decimals: 3, get: (c) => c.aspectRatio },
  { key: 'centreX', title: 'Centre x', quantity: 'length', decimals: 1, get: (c) => c.centreXM },
  { key: 'trajectory', title: 'Trajectory', quantity: 'angle', decimals: 1, get: (c) => c.trajectoryDeg },
  { key: 'leftBackstep', title: 'Left backstep', quantity: 'length', decimals: 1, get: (c) => c.left.backstepM },
  { key: 'leftAggradation', title: 'Left aggradation', quantity: 'length', decimals: 1, get: (c) => c.left.aggradationM },
  { key: 'leftFlankAngle', title: 'Left flank angle', quantity: 'angle', decimals: 1, get: (c) => c.left.flankAngleDeg },
  { key: 'rightBackstep', title: 'Right backstep', quantity: 'length', decimals: 1, get: (c) => c.right.backstepM },
  { key: 'rightAggradation', title: 'Right aggradation', quantity: 'length', decimals: 1, get: (c) => c.right.aggradationM },
  { key: 'rightFlankAngle', title: 'Right flank angle', quantity: 'angle', decimals: 1, get: (c) => c.right.flankAngleDeg },
  { key: 'aggradationRate', title: 'Aggradation rate', quantity: 'rate', decimals: 1, get: (c) => c.aggradationRateMPerMyr ?? null },
];

/** Header of a column with its unit: `Top width (ft)`, `Trajectory (°)`; no unit for counts, classes and ratios. */
export function columnHeader(col: CycleColumn, unit: LengthUnit): string {
  return withUnit(col.title, col.quantity, unit);
}

/** A column's value in the display unit (numbers converted; strings and nulls as they are). */
export function columnValue(col: CycleColumn, c: BuildupMeasurement['cycles'][number], unit: LengthUnit): number | string | null {
  const v = col.get(c);
  if (typeof v !== 'number') return v ?? null;
  return toDisplay(col.quantity, v, unit);
}

/** The CSV table: one header row with units, one row per cycle (oldest first), numbers at full precision, empty cells for null. */
export function cycleTable(b: BuildupMeasurement, unit: LengthUnit): { fields: string[]; data: (number | string)[][] } {
  return {
    fields: CYCLE_COLUMNS.map((col) => columnHeader(col, unit)),
    data: b.cycles.map((c) => CYCLE_COLUMNS.map((col) => columnValue(col, c, unit) ?? '')),
  };
}

// ---------------------------------------------------------------------------
// buildup figures

export interface FigureRow {
  key: string;
  label: string;
  quantity: Quantity;
  value: number | null;
  range: { p90: number; p50: number; p10: number } | null;
}

/** The buildup's headline figures in the display unit, with their P90/P50/P10 where the velocity model has ranges. */
export function buildupFigures(b: BuildupMeasurement, unit: LengthUnit): FigureRow[] {
  const conv = (q: Quantity, v: number | null) => (v == null ? null : toDisplay(q, v, unit));
  const range = (q: Quantity, r: { p90: number; p50: number; p10: number } | undefined) =>
    r ? { p90: toDisplay(q, r.p90, unit), p50: toDisplay(q, r.p50, unit), p10: toDisplay(q, r.p10, unit) } : null;
  const r = b.ranges;
  return [
    { key: 'height', label: 'Height', quantity: 'length', value: conv('length', b.heightM), range: range('length', r?.heightM) },
    { key: 'baseWidth', label: 'Base width', quantity: 'length', value: conv('length', b.baseWidthM), range: null },
    { key: 'aspectRatio', label: 'Aspect ratio', quantity: 'ratio', value: b.aspectRatio, range: null },
    { key: 'area', label: 'Area', quantity: 'area', value: conv('area', b.areaM2), range: range('area', r?.areaM2) },
    { key: 'volume', label: 'Volume (estimate, round buildup)', quantity: 'volume', value: conv('volume', b.volumeM3), range: range('volume', r?.volumeM3) },
    { key: 'trajectory', label: 'Net trajectory', quantity: 'angle', value: b.trajectoryDeg, range: null },
  ];
}

/** Flank-angle ranges per cycle and side (degrees), for the P90/P50/P10 table. */
export function flankRanges(b: BuildupMeasurement): { label: string; p90: number; p50: number; p10: number }[] {
  const out: { label: string; p90: number; p50: number; p10: number }[] = [];
  for (const c of b.ranges?.cycles ?? []) {
    if (c.left.flankAngleDeg) out.push({ label: `Left flank angle, cycle ${c.index}`, ...c.left.flankAngleDeg });
    if (c.right.flankAngleDeg) out.push({ label: `Right flank angle, cycle ${c.index}`, ...c.right.flankAngleDeg });
  }
  return out;
}

export function classLabel(b: BuildupMeasurement | null): string {
  return b ? CLASS_LABEL[b.classification] : 'Not measurable yet';
}

// ---------------------------------------------------------------------------
// file names

/** A file-name-safe slug: letters, digits and dashes (accents dropped), at most 60 characters, never empty. */
export function slug(s: string, fallback = 'untitled'): string {
  const out = s
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .replace(/[^A-Za-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60)
    .replace(/-+$/g, '');
  return out || fallback;
}

export type ExportFormat = 'csv' | 'json' | 'geojson' | 'png' | 'svg' | 'pdf';

/** `<section>-<buildup>-<what>.<ext>`: `tb-11-kestrel-knoll-cycles.csv`, `…-report-a4.pdf`. */
export function exportFileName(section: string, buildup: string, format: ExportFormat, paper: Paper = 'a4'): string {
  const base = `${slug(section, 'section').toLowerCase()}-${slug(buildup, 'buildup').toLowerCase()}`;
  switch (format) {
    case 'csv':
      return `${base}-cycles.csv`;
    case 'json':
      return `${base}-measurements.json`;
    case 'geojson':
      return `${base}.geojson`;
    case 'png':
      return `${base}-crop.png`;
    case 'svg':
      return `${base}-crop.svg`;
    case 'pdf':
      return `${base}-report-${paper}.pdf`;
  }
}

export const EXPORT_CONTENT_TYPES: Record<ExportFormat, string> = {
  csv: 'text/csv; charset=utf-8',
  json: 'application/json; charset=utf-8',
  // RFC 7946 §12: the media type of GeoJSON
  geojson: 'application/geo+json',
  png: 'image/png',
  svg: 'image/svg+xml',
  pdf: 'application/pdf',
};
