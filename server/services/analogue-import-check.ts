/**
 * The pure half of the CSV import: bytes → rows (papaparse) → a validation
 * report naming every bad row and why, and the good rows as hand-entry input.
 * No database and no server context, so it runs on a worker thread
 * (`runImportCheck`, called through the measurement pool by
 * analogue-import.service.ts); the caller hands over the controlled lists and
 * the names already in the library.
 */
import Papa from 'papaparse';
import { AppError } from '../errors';
import { icsUnit } from '../../shared/ics-chart';
import { isSafeText } from '../../shared/schemas/text';
import {
  EVOLUTION_CLASSES,
  IMPORT_FIELDS,
  IMPORT_MAX_ROWS,
  MEASUREMENT_BASES,
  METRIC_KEYS,
  handEntrySchema,
  type ControlledLists,
  type HandEntryInput,
  type ImportField,
  type ImportMapping,
  type ImportPreview,
  type ImportReport,
  type ImportRowProblem,
  type MetricKey,
} from '../../shared/schemas/analogues';

/** Fields whose values are lengths (converted from feet when the mapping says so), and areas/volumes. */
const LENGTH_FIELDS = new Set<string>(['heightM', 'baseWidthM', 'topWidthM', 'netBackstepM', 'netAggradationM']);
const NUMERIC_FIELDS = new Set<string>([...METRIC_KEYS, 'ageMa', 'latitude', 'longitude', 'year', 'basisVelocityMs']);

/** Units a value may carry after the number, per field kind. */
const UNIT_WORDS: Record<string, 'm' | 'ft' | 'm2' | 'ft2' | 'm3' | 'ft3' | 'deg' | 'ma' | 'ms'> = {
  m: 'm', metre: 'm', metres: 'm', meter: 'm', meters: 'm',
  ft: 'ft', feet: 'ft', foot: 'ft',
  m2: 'm2', 'm²': 'm2', ft2: 'ft2', 'ft²': 'ft2',
  m3: 'm3', 'm³': 'm3', ft3: 'ft3', 'ft³': 'ft3',
  '°': 'deg', deg: 'deg', degrees: 'deg',
  ma: 'ma', myr: 'ma',
  'm/s': 'ms', ms: 'ms',
};

function expectedUnit(field: string, lengthUnit: 'm' | 'ft'): string | null {
  if (LENGTH_FIELDS.has(field)) return lengthUnit;
  if (field === 'areaM2') return lengthUnit === 'm' ? 'm2' : 'ft2';
  if (field === 'volumeM3') return lengthUnit === 'm' ? 'm3' : 'ft3';
  if (field === 'trajectoryDeg' || field === 'flankAngleDeg' || field === 'flankMaxDeg' || field === 'latitude' || field === 'longitude') return 'deg';
  if (field === 'ageMa') return 'ma';
  if (field === 'basisVelocityMs') return 'ms';
  return null;
}

const squash = (s: string) => s.toLowerCase().replace(/[^a-z0-9]/g, '');

const ALIASES: Record<string, ImportField> = {
  name: 'name', analogue: 'name', buildup: 'name',
  setting: 'setting', factory: 'factory', carbonatefactory: 'factory', climate: 'climate', climatebelt: 'climate',
  class: 'class', evolutionclass: 'class', evolution: 'class',
  stage: 'icsUnit', icsunit: 'icsUnit', ics: 'icsUnit', age: 'ageMa', agema: 'ageMa',
  lat: 'latitude', latitude: 'latitude', lon: 'longitude', lng: 'longitude', long: 'longitude', longitude: 'longitude',
  tags: 'tags', notes: 'notes', authors: 'authors', author: 'authors', year: 'year', title: 'title',
  journal: 'container', book: 'container', container: 'container', doi: 'doi', basis: 'basis', velocity: 'basisVelocityMs', basisvelocityms: 'basisVelocityMs',
  height: 'heightM', basewidth: 'baseWidthM', width: 'baseWidthM', aspectratio: 'aspectRatio', area: 'areaM2', volume: 'volumeM3',
  topwidth: 'topWidthM', trajectory: 'trajectoryDeg', netbackstep: 'netBackstepM', backstep: 'netBackstepM', netaggradation: 'netAggradationM',
  aggradation: 'netAggradationM', flankangle: 'flankAngleDeg', flank: 'flankAngleDeg', flankmax: 'flankMaxDeg', steepestflank: 'flankMaxDeg', cycles: 'cycleCount', cyclecount: 'cycleCount',
};

/** The unit a header declares, e.g. "Height (ft)" or "height_m". */
function headerUnit(h: string): string | null {
  const m = /[([]\s*([^)\]]+)\s*[)\]]\s*$/.exec(h) ?? /[_ ](m|ft|m2|ft2|m3|ft3)$/i.exec(h);
  return m ? (UNIT_WORDS[m[1].trim().toLowerCase()] ?? null) : null;
}

export function suggestMapping(headers: string[]): ImportMapping {
  const columns: Record<string, ImportField | null> = {};
  let feet = 0;
  for (const h of headers) {
    const bare = h.replace(/[([][^)\]]*[)\]]\s*$/, '');
    const s = squash(bare);
    const exact = (IMPORT_FIELDS as readonly string[]).find((f) => squash(f) === s) as ImportField | undefined;
    const viaUnit = ALIASES[s.replace(/(m|ft|m2|ft2|m3|ft3|deg|ma)$/, '')];
    columns[h] = exact ?? ALIASES[s] ?? viaUnit ?? null;
    if (headerUnit(h)?.startsWith('ft')) feet++;
  }
  return { columns, lengthUnit: feet > 0 ? 'ft' : 'm' };
}

/** Refuse bytes that are not CSV text: binary signatures, NUL bytes, broken UTF-8. */
function textOf(buf: Buffer | Uint8Array): string {
  const notCsv = (why: string) => new AppError(422, 'not_csv', `file: not a CSV file (${why})`, [{ path: 'file', message: `not a CSV file (${why})` }]);
  if (buf.length === 0) throw notCsv('it is empty');
  const sig = buf.subarray(0, 8).toString('latin1');
  if (sig.startsWith('\x89PNG') || sig.startsWith('%PDF') || sig.startsWith('PK\x03\x04') || sig.startsWith('\xff\xd8\xff') || sig.startsWith('\xd0\xcf\x11\xe0')) throw notCsv('it is a binary file (image, PDF, spreadsheet or archive)');
  if (buf.includes(0)) throw notCsv('it contains NUL bytes');
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buf);
  } catch {
    throw notCsv('it is not UTF-8 text');
  }
  return text.replace(/^\uFEFF/, '');
}

export interface Parsed {
  headers: string[];
  rows: Record<string, string>[];
  lines: number[];
}

export function parseCsv(buf: Buffer | Uint8Array): Parsed {
  const text = textOf(buf);
  const r = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: 'greedy', transformHeader: (h) => h.trim() });
  const headers = (r.meta.fields ?? []).filter((h) => h !== '');
  if (!headers.length) throw new AppError(422, 'not_csv', 'file: no header row found', [{ path: 'file', message: 'no header row found' }]);
  const badQuote = r.errors.find((e) => e.type === 'Quotes');
  if (badQuote) throw new AppError(422, 'not_csv', `file: broken quoting near row ${(badQuote.row ?? 0) + 1}`, [{ path: 'file', message: badQuote.message }]);
  if (r.data.length > IMPORT_MAX_ROWS) throw new AppError(422, 'too_many_rows', `file: more than ${IMPORT_MAX_ROWS} rows`, [{ path: 'file', message: `more than ${IMPORT_MAX_ROWS} rows` }]);
  // line numbers: count line breaks before each row's cursor is not exposed per row; rows are one line each unless quoted, so recount
  const lines: number[] = [];
  let line = 2;
  for (const row of r.data) {
    lines.push(line);
    line += 1 + Object.values(row).reduce((s, v) => s + (typeof v === 'string' ? (v.match(/\n/g)?.length ?? 0) : 0), 0);
  }
  return { headers, rows: r.data, lines };
}

export interface Checked {
  report: ImportReport;
  good: { row: number; input: HandEntryInput }[];
}

/** Check every row against the mapping, the controlled lists and the names already in the library (lower case). */
export function check(parsed: Parsed, mapping: ImportMapping, lists: ControlledLists, existing: Set<string>): Checked {
  const problems: ImportRowProblem[] = [];
  const fileProblems: ImportReport['fileProblems'] = [];
  const byField = new Map<ImportField, string>();
  for (const [col, field] of Object.entries(mapping.columns)) {
    if (!field) continue;
    if (!parsed.headers.includes(col)) fileProblems.push({ code: 'unknown_column', message: `the mapping names the column "${col}", which the file does not have` });
    else if (byField.has(field)) fileProblems.push({ code: 'duplicate_mapping', message: `the columns "${byField.get(field)}" and "${col}" both map to ${field}` });
    else byField.set(field, col);
  }
  if (!byField.has('name')) fileProblems.push({ code: 'missing_required_columns', message: 'no column maps to name (required)' });
  if (!METRIC_KEYS.some((k) => byField.has(k))) fileProblems.push({ code: 'missing_required_columns', message: `no column maps to a metric (at least one of ${METRIC_KEYS.join(', ')})` });
  for (const [field, col] of byField) {
    const hu = headerUnit(col);
    const want = expectedUnit(field, mapping.lengthUnit);
    if (hu && want && hu !== want && (LENGTH_FIELDS.has(field) || field === 'areaM2' || field === 'volumeM3'))
      fileProblems.push({ code: 'wrong_unit', message: `the column "${col}" is in ${hu} but the mapping says lengths are in ${mapping.lengthUnit}` });
  }
  const seen = new Map<string, number>();
  const good: Checked['good'] = [];
  if (!fileProblems.length) {
    parsed.rows.forEach((raw, i) => {
      const row = i + 1;
      const line = parsed.lines[i];
      const before = problems.length;
      const bad = (field: ImportField | null, reason: string, message: string) => problems.push({ row, line, column: field ? (byField.get(field) ?? null) : null, field, reason, message });
      const val = (f: ImportField): string | null => {
        const c = byField.get(f);
        if (!c) return null;
        const v = (raw[c] ?? '').trim();
        return v === '' ? null : v;
      };
      for (const [f, c] of byField) {
        const v = raw[c] ?? '';
        if (!isSafeText(v, f === 'notes')) bad(f, 'bad_text', `${c}: contains control characters or broken Unicode`);
      }
      const num = (f: ImportField): number | null => {
        const v = val(f);
        if (v == null) return null;
        const m = /^([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:e[-+]?\d+)?)\s*([^\d\s].*)?$/i.exec(v);
        if (!m) {
          bad(f, 'not_numeric', `${byField.get(f)}: "${v}" is not a number`);
          return null;
        }
        if (m[1].includes(',')) {
          bad(f, 'not_numeric', `${byField.get(f)}: "${v}" uses a decimal comma; use a point`);
          return null;
        }
        if (m[2]) {
          const unit = UNIT_WORDS[m[2].trim().toLowerCase()];
          const want = expectedUnit(f, mapping.lengthUnit);
          if (!unit || !want || unit !== want) {
            bad(f, 'wrong_unit', `${byField.get(f)}: "${v}" is in ${m[2].trim()}, expected ${want ? want.replace('2', '²').replace('3', '³') : 'a plain number'}`);
            return null;
          }
        }
        return Number(m[1]);
      };
      const name = val('name');
      if (!name) bad('name', 'missing_required', 'name is empty');
      const metrics: Partial<Record<MetricKey, number | null>> = {};
      for (const k of METRIC_KEYS) metrics[k] = num(k);
      if (!METRIC_KEYS.some((k) => metrics[k] != null) && problems.length === before) bad(null, 'missing_required', 'no metric has a value');
      const lat = num('latitude');
      const lon = num('longitude');
      const age = num('ageMa');
      const year = num('year');
      const vel = num('basisVelocityMs');
      if (lat != null && (lat < -90 || lat > 90)) bad('latitude', 'out_of_range', `latitude ${lat} is outside −90…90`);
      if (lon != null && (lon < -180 || lon > 180)) bad('longitude', 'out_of_range', `longitude ${lon} is outside −180…180`);
      if (age != null && age < 0) bad('ageMa', 'out_of_range', `age ${age} Ma is negative`);
      for (const l of ['setting', 'factory', 'climate'] as const) {
        const v = val(l)?.toLowerCase();
        if (v && !lists[l].some((it) => it.value === v)) bad(l, 'unknown_tag', `${l} "${val(l)}" is not in the list (${lists[l].map((it) => it.value).join(', ')})`);
      }
      const cls = val('class')?.toLowerCase();
      if (cls && !(EVOLUTION_CLASSES as readonly string[]).includes(cls)) bad('class', 'unknown_tag', `class "${val('class')}" is not one of ${EVOLUTION_CLASSES.join(', ')}`);
      const unit = val('icsUnit');
      if (unit && !icsUnit(unit)) bad('icsUnit', 'unknown_tag', `"${unit}" is not a unit of the ICS chart`);
      const basis = (val('basis')?.toLowerCase() ?? 'figure') as HandEntryInput['basis'];
      if (!(MEASUREMENT_BASES as readonly string[]).includes(basis)) bad('basis', 'bad_value', `basis "${val('basis')}" is not one of ${MEASUREMENT_BASES.join(', ')}`);
      const authors = val('authors');
      const title = val('title');
      const anyCitation = authors || title || year != null || val('container') || val('doi');
      if (anyCitation) {
        if (!authors) bad('authors', 'missing_required', 'a citation needs authors');
        if (year == null && problems.length === before) bad('year', 'missing_required', 'a citation needs a year');
        if (!title) bad('title', 'missing_required', 'a citation needs a title');
      }
      if (name) {
        const key = name.toLowerCase();
        if (seen.has(key)) bad('name', 'duplicate', `"${name}" repeats row ${seen.get(key)}`);
        else if (existing.has(key)) bad('name', 'duplicate', `"${name}" is already in the library`);
        if (!seen.has(key)) seen.set(key, row);
      }
      if (problems.length > before) return;
      const input = {
        name,
        metrics,
        lengthUnit: mapping.lengthUnit,
        basis,
        basisVelocityMs: vel,
        evolutionClass: cls ?? null,
        setting: val('setting')?.toLowerCase() ?? null,
        factory: val('factory')?.toLowerCase() ?? null,
        climate: val('climate')?.toLowerCase() ?? null,
        icsUnit: unit,
        ageMa: age,
        latitude: lat,
        longitude: lon,
        tags: (val('tags') ?? '')
          .split(/[;|]/)
          .map((t) => t.trim())
          .filter(Boolean),
        notes: val('notes') ?? undefined,
        citation: anyCitation ? { authors, year, title, container: val('container'), doi: val('doi') } : undefined,
      };
      const r = handEntrySchema.safeParse(input);
      if (!r.success) {
        for (const iss of r.error.issues) {
          const top = String(iss.path[0] ?? '');
          const field = (top === 'metrics' || top === 'citation' ? String(iss.path[1]) : top === 'evolutionClass' ? 'class' : top) as ImportField;
          bad((IMPORT_FIELDS as readonly string[]).includes(field) ? field : null, 'bad_value', `${iss.path.join('.')}: ${iss.message}`);
        }
        return;
      }
      // the typed hand-entry shape needs a citation object; imports may have none
      good.push({ row, input: r.data });
    });
  }
  const badRows = new Set(problems.map((p) => p.row)).size;
  return {
    report: { rowCount: parsed.rows.length, goodRows: fileProblems.length ? 0 : parsed.rows.length - badRows, badRows: fileProblems.length ? parsed.rows.length : badRows, problems, fileProblems },
    good,
  };
}


/** What a worker thread gets: the file, the mapping (null: the suggested one, for a preview) and the library's lists and names. */
export interface ImportCheckTask {
  bytes: Uint8Array;
  mapping: ImportMapping | null;
  lists: ControlledLists;
  existing: string[];
  /** A preview also answers the headers, the suggested mapping and the first rows. */
  preview: boolean;
}

export type ImportCheckReply =
  | { ok: true; preview?: Omit<ImportPreview, 'report'>; checked: Checked }
  | { ok: false; error: { status: number; code: string; message: string; details?: unknown } };

/** Parse and check one file; never throws (an AppError comes back as a plain description). */
export function runImportCheck(task: ImportCheckTask): ImportCheckReply {
  try {
    const parsed = parseCsv(task.bytes);
    const suggested = suggestMapping(parsed.headers);
    const checked = check(parsed, task.mapping ?? suggested, task.lists, new Set(task.existing));
    return task.preview
      ? { ok: true, checked: { report: checked.report, good: [] }, preview: { headers: parsed.headers, suggestedMapping: suggested, sample: parsed.rows.slice(0, 10) } }
      : { ok: true, checked };
  } catch (e) {
    if (e instanceof AppError) return { ok: false, error: { status: e.status, code: e.code, message: e.message, details: e.details } };
    const err = e instanceof Error ? e : new Error(String(e));
    return { ok: false, error: { status: 500, code: 'import_check_failed', message: err.message } };
  }
}
