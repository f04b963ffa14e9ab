/**
 * CSV import of analogues (papaparse): a mapping step (header → field, with a
 * suggestion), then a validation report naming every bad row and why; nothing
 * is stored while there are errors unless the curator imports the good rows
 * only. Export of a search as CSV and GeoJSON.
 *
 * Parsing and checking a file (up to IMPORT_MAX_BYTES, IMPORT_MAX_ROWS rows)
 * runs on the measurement pool's worker threads (`importCheckOffLoop`,
 * analogue-import-check.ts), so a large file never holds up other requests;
 * this side reads the controlled lists and the names already in the library
 * first and hands them over with the bytes.
 */
import Papa from 'papaparse';
import { QueryTypes } from 'sequelize';
import { ctx } from '../context';
import { AppError } from '../errors';
import { audit } from './audit.service';
import { handColumns, insertRow, readLists, searchPages, toSummary, write, type Actor } from './analogue.service';
import { importCheckOffLoop } from '../measure/pool';
import {
  EXPORT_COLUMNS,
  METRIC_KEYS,
  type AnalogueGeoJson,
  type AnalogueSearchQuery,
  type ControlledLists,
  type ImportMapping,
  type ImportPreview,
  type ImportResult,
} from '../../shared/schemas/analogues';

const db = () => ctx().sequelize;

/** The library's controlled lists and the names already in it (lower case), for the check on a worker thread. */
async function libraryFacts(): Promise<{ lists: ControlledLists; existing: string[] }> {
  const [lists, names] = await Promise.all([
    readLists(),
    db().query<{ n: string }>(`SELECT lower(name) AS n FROM analogues WHERE status <> 'declined'`, { type: QueryTypes.SELECT }),
  ]);
  return { lists, existing: names.map((r) => r.n) };
}

export async function previewImport(buf: Buffer, mapping: ImportMapping | null): Promise<ImportPreview> {
  const r = await importCheckOffLoop({ bytes: buf, mapping, ...(await libraryFacts()), preview: true });
  return { ...r.preview!, report: r.checked.report };
}

export async function runImport(actor: Actor, buf: Buffer, mapping: ImportMapping, mode: 'all' | 'goodRowsOnly'): Promise<ImportResult> {
  const { report, good } = (await importCheckOffLoop({ bytes: buf, mapping, ...(await libraryFacts()), preview: false })).checked;
  if (report.fileProblems.length) throw new AppError(422, 'import_has_errors', `file: ${report.fileProblems.map((p) => p.message).join('; ')}`, report);
  if (mode === 'all' && report.problems.length)
    throw new AppError(422, 'import_has_errors', `${report.badRows} of ${report.rowCount} rows have problems; nothing was imported (fix them, or import the good rows only)`, report);
  const ids = await write(async (transaction) => {
    const ids: number[] = [];
    for (const g of good) ids.push(await insertRow(handColumns(g.input, 'import', actor.id), transaction));
    await audit(actor.id, 'analogue.import', 'analogue', null, { imported: ids.length, skippedRows: report.badRows, mode }, transaction);
    return ids;
  });
  return { imported: ids.length, ids, report };
}

// ---- export -------------------------------------------------------------------------------------

/** A place an export writes to: `write` resolves once the text is taken (after a drain when the buffer is full); `closed` tells the reader went away. */
export interface ExportSink {
  write(text: string): Promise<void>;
  closed(): boolean;
}

const csvRow = (a: ReturnType<typeof toSummary>): unknown[] => {
  const o: Record<string, unknown> = {
    id: a.id,
    name: a.name,
    status: a.status,
    source: a.source,
    setting: a.setting,
    factory: a.factory,
    climate: a.climate,
    class: a.class,
    period: a.period,
    epoch: a.epoch,
    stage: a.stage,
    ageMa: a.ageMa,
    latitude: a.latitude,
    longitude: a.longitude,
    tags: a.tags.join(';'),
    citation: a.citationShort,
  };
  for (const k of METRIC_KEYS) o[k] = a.metrics[k];
  return EXPORT_COLUMNS.map((c) => o[c] ?? '');
};

// a leading = + - @ would make a spreadsheet run the cell as a formula: papaparse's escapeFormulae quotes and prefixes them
const CSV_OPTIONS = { escapeFormulae: /^[=+\-@\t\r](?![0-9.])/, newline: '\r\n' };

/** A search as CSV (RFC 4180, CRLF), written page by page. */
/** Page size and stall limit of an export's cursor (searchPages). */
export interface ExportOptions {
  pageRows?: number;
  stallSeconds?: number;
}

export async function exportCsv(q: AnalogueSearchQuery, out: ExportSink, opts: ExportOptions = {}): Promise<void> {
  await out.write(Papa.unparse([[...EXPORT_COLUMNS]], CSV_OPTIONS)); // the header row; each page starts with its line break
  for await (const rows of searchPages(q, opts.pageRows, undefined, opts.stallSeconds)) {
    if (out.closed()) return;
    await out.write('\r\n' + Papa.unparse(rows.map((r) => csvRow(toSummary(r))), CSV_OPTIONS));
  }
}

/** A search as a GeoJSON FeatureCollection (RFC 7946; rows without coordinates are left out), written page by page. */
export async function exportGeoJson(q: AnalogueSearchQuery, out: ExportSink, opts: ExportOptions = {}): Promise<void> {
  await out.write('{"type":"FeatureCollection","features":[');
  let first = true;
  for await (const rows of searchPages(q, opts.pageRows, undefined, opts.stallSeconds)) {
    if (out.closed()) return;
    const features = rows
      .map(toSummary)
      .filter((a) => a.latitude != null && a.longitude != null)
      .map((a) =>
        JSON.stringify({
          type: 'Feature',
          id: a.id,
          geometry: { type: 'Point', coordinates: [a.longitude!, a.latitude!] },
          properties: { name: a.name, status: a.status, setting: a.setting, factory: a.factory, climate: a.climate, class: a.class, period: a.period, ageMa: a.ageMa, tags: a.tags, ...a.metrics },
        } satisfies AnalogueGeoJson['features'][number]),
      );
    if (!features.length) continue;
    await out.write((first ? '' : ',') + features.join(','));
    first = false;
  }
  await out.write(']}');
}
