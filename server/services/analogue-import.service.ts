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
import { handColumns, insertRow, readLists, searchAll, toSummary, write, type Actor } from './analogue.service';
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

export async function exportCsv(q: AnalogueSearchQuery): Promise<string> {
  const rows = (await searchAll(q)).map(toSummary);
  const data = rows.map((a) => {
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
    return o;
  });
  // a leading = + - @ would make a spreadsheet run the cell as a formula: papaparse's escapeFormulae quotes and prefixes them
  return Papa.unparse({ fields: [...EXPORT_COLUMNS], data: data.map((o) => EXPORT_COLUMNS.map((c) => o[c] ?? '')) }, { escapeFormulae: /^[=+\-@\t\r](?![0-9.])/ });
}

export async function exportGeoJson(q: AnalogueSearchQuery): Promise<AnalogueGeoJson> {
  const rows = (await searchAll(q)).map(toSummary).filter((a) => a.latitude != null && a.longitude != null);
  return {
    type: 'FeatureCollection',
    features: rows.map((a) => ({
      type: 'Feature',
      id: a.id,
      geometry: { type: 'Point', coordinates: [a.longitude!, a.latitude!] },
      properties: { name: a.name, status: a.status, setting: a.setting, factory: a.factory, climate: a.climate, class: a.class, period: a.period, ageMa: a.ageMa, tags: a.tags, ...a.metrics },
    })),
  };
}
