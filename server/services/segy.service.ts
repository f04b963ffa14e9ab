/**
 * SEG-Y uploads and the sections made from them (issue #12).
 *
 * - An upload (read while it arrived, middlewares/segy-upload.ts) is kept once
 *   under `segy/<key>/` (float32 amplitudes, raw trace headers, per-trace
 *   geometry) with a `segy_uploads` row. A 2D line becomes one section at
 *   once; a 3D upload lists its inline/crossline ranges and any inline or
 *   crossline is extracted as a section later, without sending the file again.
 * - Every such section gets calibration version 1 "from SEG-Y headers"
 *   (`source = 'segy_headers'`), placed by nobody: x = cumulative distance
 *   between consecutive trace positions (m), y = delay + index × interval
 *   (TWT ms, or depth m). The engine fits calibrations from points, so the
 *   version's point list holds the four image corners mapped through that
 *   map (not Ties a person placed); the fit stored is the map itself.
 * - Its tiles are rendered by the section-pyramid job (jobs/segy-render.ts);
 *   `POST /api/sections/:id/render` queues a re-render with other settings.
 *
 * Access as for sections: members read, interpreters and admins change.
 */
import type { Transaction } from 'sequelize';
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { Section, SectionCalibration } from '../models/section';
import { SegyUpload } from '../models/segy';
import { assertCanEdit, projectForViewer, type Actor } from './project.service';
import { sectionForEditor, sectionForViewer } from './section-access';
import { audit } from './audit.service';
import { createCalibrationVersion } from './calibration.service';
import { fileStoreFor, randomName } from '../storage/fileStore';
import { queuePyramid, nudgeWorkers, stuckReason } from '../jobs/pyramid.job';
import { sectionKeys } from '../storage/keys';
import { cancelPyramidJob } from '../jobs/queue';
import type { SegyUploadedFile } from '../middlewares/segy-upload';
import { toWgs84 } from '../segy/crs';
import { SegyError } from '../segy/errors';
import { segyError } from '../middlewares/segy-upload';
import { BINARY_HEADER_FIELDS, TRACE_HEADER_FIELDS, TRACE_HEADER_BYTES, bytesLabel, readField, OVERRIDABLE_DEFAULTS } from '../segy/fields';
import { positionsOf, readAll, readGeometry, readSelection, readWindow, segyKeys, selectTraces, selectionKey } from '../segy/section-data';
import { applyCalibration, type CalibrationFit } from '../../shared/measure/calibration';
import {
  AMPLITUDE_WINDOW_MAX,
  renderSettingsSchema,
  type AmplitudeWindow,
  type RenderSettings,
  type SegyExtractInput,
  type SegyHeaderView,
  type SegyRanges,
  type SegySelection,
  type SegyTraceHeaderPage,
  type SegyUploadAccepted,
  type SegyUploadInfo,
  type SegyUploadOptions,
} from '../../shared/schemas/segy';
import type { Tie } from '../../shared/schemas/sections';

const store = () => fileStoreFor(ctx().config.storageDir);
const FOOT = 0.3048; // international foot (1959), m

// ---- self-calibration ------------------------------------------------------------------------

export interface HeaderCalibration {
  fit: CalibrationFit & { source: 'segy_headers'; segy: Record<string, number | string> };
  /** The image corners mapped through the fit (what the engine fits from). */
  points: Tie[];
  verticalDomain: 'twt_ms' | 'depth_m';
}

/**
 * The map pixel → (x m, y ms|m) of a SEG-Y section: trace i is pixel column
 * i (centre u = i + 0.5), sample j pixel row j (centre v = j + 0.5). x is the
 * least-squares line through (u_i, cumulative distance_i), exact for evenly
 * spaced traces (its RMS and largest deviation are kept in `fit.segy`); y is
 * exact: y = start + (v − 0.5) × step.
 */
export function headerCalibration(
  positions: ReadonlyArray<readonly [number, number]>,
  lengthUnit: 'm' | 'ft',
  y: { domain: 'time' | 'depth'; unit: 'ms' | 'm' | 'ft'; start: number; step: number; samples: number },
): HeaderCalibration {
  const n = positions.length;
  if (n < 2) throw new SegyError('segy_too_few_traces', 'traces', 'trace headers', `a section needs at least 2 traces, this line has ${n}`);
  const toM = lengthUnit === 'ft' ? FOOT : 1;
  const d = new Float64Array(n);
  for (let i = 1; i < n; i++) d[i] = d[i - 1] + Math.hypot(positions[i][0] - positions[i - 1][0], positions[i][1] - positions[i - 1][1]) * toM;
  let mu = 0, md = 0;
  for (let i = 0; i < n; i++) { mu += i + 0.5; md += d[i]; }
  mu /= n; md /= n;
  let suu = 0, sud = 0;
  for (let i = 0; i < n; i++) { suu += (i + 0.5 - mu) ** 2; sud += (i + 0.5 - mu) * (d[i] - md); }
  const a = sud / suu;
  const c = md - a * mu;
  let ss = 0, worst = 0;
  for (let i = 0; i < n; i++) { const r = d[i] - (a * (i + 0.5) + c); ss += r * r; worst = Math.max(worst, Math.abs(r)); }
  if (!(Math.abs(a) > 0)) throw new SegyError('segy_no_positions', 'cdpX', 'trace header bytes 181–188', 'every trace of this line sits at the same position; give byte positions of the coordinates or the CDP spacing');
  const yToM = y.domain === 'depth' && y.unit === 'ft' ? FOOT : 1;
  const e = y.step * yToM;
  const f = y.start * yToM - 0.5 * e;
  const affine = { a, b: 0, c, d: 0, e, f };
  const W = n, H = y.samples;
  const corners: Array<[number, number]> = [[0, 0], [W, 0], [0, H], [W, H]];
  const points: Tie[] = corners.map((px) => ({ px, world: applyCalibration(affine, px) }));
  const rms = Math.sqrt(ss / n);
  return {
    fit: {
      mode: 'axes', affine, residuals: [], rmsPx: 0, rmsWorld: { x: rms, y: 0 }, source: 'segy_headers',
      segy: { traces: n, samples: H, lengthM: d[n - 1], traceDistanceRmsM: rms, maxDeviationM: worst, yStart: y.start * yToM, yStep: e },
    },
    points,
    verticalDomain: y.domain === 'time' ? 'twt_ms' : 'depth_m',
  };
}

// ---- shapes ------------------------------------------------------------------------------------

function optionsOf(u: SegyUpload): SegyUploadOptions {
  return u.overrides;
}

async function uploadInfo(u: SegyUpload): Promise<SegyUploadInfo> {
  const sections = await Section.findAll({ where: { segyUploadId: u.id }, attributes: ['id', 'title', 'segySelection'], order: [['id', 'ASC']] });
  return {
    id: u.id,
    projectId: u.projectId,
    fileName: u.fileName,
    bytes: u.bytes,
    dimension: u.dimension,
    traceCount: u.traceCount,
    samplesPerTrace: u.samplesPerTrace,
    ranges: u.ranges,
    options: optionsOf(u),
    warnings: u.warnings,
    y: u.header.y,
    sections: sections.map((s) => ({ id: s.id, title: s.title, selection: s.segySelection ?? null })),
    createdAt: u.createdAt.toISOString(),
  };
}

async function uploadForViewer(actor: Actor, id: number): Promise<SegyUpload> {
  const u = await SegyUpload.findByPk(id);
  if (!u) throw notFound('SEG-Y upload');
  try {
    await projectForViewer(actor, u.projectId);
  } catch (e) {
    if (e instanceof AppError && e.status === 404) throw notFound('SEG-Y upload');
    throw e;
  }
  return u;
}

async function uploadForEditor(actor: Actor, id: number): Promise<SegyUpload> {
  const u = await uploadForViewer(actor, id);
  await assertCanEdit(actor, u.projectId);
  return u;
}

// ---- sections from an upload -----------------------------------------------------------------------

interface SectionMeta { title: string; lineName: string; survey: string; notes: string; polarityNote?: string }

/** Create a SEG-Y section (row, trace list, header calibration, job) inside `transaction`. */
async function createSegySection(
  transaction: Transaction,
  userId: number,
  u: SegyUpload,
  meta: SectionMeta,
  selection: SegySelection,
  traces: Uint32Array | null,
  render: RenderSettings,
  geo: Float64Array,
  sectionKey: string,
): Promise<Section> {
  const { config } = ctx();
  const positions = positionsOf(geo, traces);
  const width = positions.length;
  const height = u.samplesPerTrace;
  if (width * height > config.upload.maxInputPixels) {
    throw new AppError(422, 'section_too_large', `traces: ${width} traces × ${height} samples is over the limit of ${config.upload.maxInputPixels} pixels`, [{ path: 'traces', message: 'too many traces × samples' }]);
  }
  if (render.agcMs != null && u.header.y.domain !== 'time') {
    throw new AppError(400, 'validation_failed', 'agcMs: AGC windows are in ms; this file is in depth', [{ path: 'agcMs', message: 'AGC windows are in ms; this file is in depth' }]);
  }
  let cal: HeaderCalibration;
  try {
    cal = headerCalibration(positions, u.ranges.lengthUnit, u.header.y);
  } catch (e) {
    if (e instanceof SegyError) throw segyError(e);
    throw e;
  }
  let ends: [number, number][] | null = null;
  const epsg = u.overrides.epsg;
  if (epsg !== undefined && u.ranges.positionSource !== 'cdpNumber') ends = toWgs84(epsg, [positions[0], positions[width - 1]]);
  const s = await Section.create(
    {
      projectId: u.projectId,
      title: meta.title,
      lineName: meta.lineName,
      survey: meta.survey,
      verticalDomain: cal.verticalDomain,
      notes: meta.notes,
      polarityNote: meta.polarityNote ?? '',
      startLon: ends ? ends[0][0] : null,
      startLat: ends ? ends[0][1] : null,
      endLon: ends ? ends[1][0] : null,
      endLat: ends ? ends[1][1] : null,
      width,
      height,
      sourceFormat: 'segy',
      sourceBytes: u.bytes,
      storageKey: sectionKey,
      uploadedById: userId,
      sourceKind: 'segy',
      segyUploadId: u.id,
      segySelection: selection,
      renderSettings: render,
    },
    { transaction },
  );
  if (traces) await store().put(selectionKey(sectionKey), Buffer.from(traces.buffer, traces.byteOffset, traces.byteLength));
  await createCalibrationVersion(s.id, userId, { ties: cal.points, fit: cal.fit, source: 'segy_headers' }, { transaction });
  await queuePyramid(s, transaction);
  await audit(userId, 'section.segy_create', 'section', s.id, { projectId: u.projectId, uploadId: u.id, selection, width, height }, transaction);
  return s;
}

/**
 * Keep an ingested upload: in one transaction the row, the files (moved into
 * `segy/<key>/`) and, for a 2D line, its section with calibration and job.
 * Any failure removes the stored files; the scratch goes with the response.
 */
export async function createFromUpload(actor: Actor, projectId: number, file: SegyUploadedFile): Promise<SegyUploadAccepted> {
  await assertCanEdit(actor, projectId);
  const { sequelize } = ctx();
  const { ingest, fields } = file;
  const { header, summary } = ingest;
  const options: SegyUploadOptions = { domain: fields.domain };
  if (fields.cdpXByte !== undefined) options.cdpX = fields.cdpXByte;
  if (fields.cdpYByte !== undefined) options.cdpY = fields.cdpYByte;
  if (fields.inlineByte !== undefined) options.inline = fields.inlineByte;
  if (fields.crosslineByte !== undefined) options.crossline = fields.crosslineByte;
  if (fields.cdpSpacing !== undefined) options.cdpSpacing = fields.cdpSpacing;
  if (fields.epsg !== undefined) options.epsg = fields.epsg;
  const toM = summary.lengthUnit === 'ft' ? FOOT : 1;
  let lineEndsWgs84: SegyRanges['lineEndsWgs84'] = null;
  if (options.epsg !== undefined && summary.positionSource !== 'cdpNumber') {
    const [a, b] = toWgs84(options.epsg, [summary.lineEnds.first, summary.lineEnds.last]);
    lineEndsWgs84 = { first: a, last: b };
  }
  const ranges: SegyRanges = {
    inline: summary.inline, crossline: summary.crossline, cdp: summary.cdp, positionSource: summary.positionSource,
    lengthUnit: summary.lengthUnit, lineEnds: summary.lineEnds, lineEndsWgs84, lengthM: summary.x[summary.x.length - 1] * toM,
  };
  const uploadKey = randomName();
  const sectionKey = randomName();
  const keys = segyKeys(uploadKey);
  const render = renderSettingsSchema.parse({ ramp: fields.ramp, clipPercentile: fields.clipPercentile, agcMs: fields.agcMs });
  try {
    const out = await sequelize.transaction(async (transaction) => {
      const u = await SegyUpload.create(
        {
          projectId,
          fileName: file.originalname.slice(0, 255),
          bytes: file.size,
          storageKey: uploadKey,
          dimension: summary.dimension,
          traceCount: ingest.traces,
          samplesPerTrace: ingest.samplesPerTrace,
          header: {
            textual: header.textual, textualEncoding: header.textualEncoding, extendedTextual: header.extendedTextual,
            binary: header.binary, revision: header.revision,
            format: { code: header.format.code, bytes: header.format.bytes, name: header.format.name },
            littleEndian: header.littleEndian, samplesPerTrace: header.samplesPerTrace, sampleInterval: header.sampleInterval, y: summary.y,
          },
          ranges,
          overrides: options,
          warnings: ingest.warnings,
          uploadedById: actor.id,
        },
        { transaction },
      );
      await store().importDir(file.dir, keys.root);
      await audit(actor.id, 'segy.upload', 'segy_upload', u.id, { projectId, bytes: file.size, dimension: summary.dimension, traces: ingest.traces }, transaction);
      let section: Section | null = null;
      if (summary.dimension === '2d') {
        const geo = await readGeometry(store(), uploadKey);
        const meta = { title: fields.title, lineName: fields.lineName, survey: fields.survey, notes: fields.notes, polarityNote: fields.polarityNote };
        section = await createSegySection(transaction, actor.id, u, meta, { kind: 'line' }, null, render, geo, sectionKey);
      }
      return { u, section };
    });
    nudgeWorkers();
    return { upload: await uploadInfo(out.u), section: out.section ? { id: out.section.id, status: 'processing' } : null };
  } catch (e) {
    await store().removePrefix(keys.root);
    await store().removePrefix(sectionKeys(sectionKey).root);
    throw e;
  }
}

export async function getUpload(actor: Actor, id: number): Promise<SegyUploadInfo> {
  return uploadInfo(await uploadForViewer(actor, id));
}

export async function listUploads(actor: Actor, projectId: number): Promise<{ items: SegyUploadInfo[] }> {
  await projectForViewer(actor, projectId);
  const rows = await SegyUpload.findAll({ where: { projectId }, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit: 200 });
  return { items: await Promise.all(rows.map(uploadInfo)) };
}

/** An inline or crossline of a 3D upload as a new section (the stored amplitudes are reused, nothing is sent again). */
export async function extractSection(actor: Actor, uploadId: number, input: SegyExtractInput & { title: string; ramp: RenderSettings['ramp']; clipPercentile: number; agcMs: number | null }): Promise<{ id: number; status: 'processing' }> {
  const u = await uploadForEditor(actor, uploadId);
  if (u.dimension !== '3d') throw new AppError(409, 'not_3d', 'Only a 3D upload has inlines and crosslines to extract; a 2D line became its section at upload');
  const range = u.ranges[input.kind];
  const geo = await readGeometry(store(), u.storageKey);
  const traces = selectTraces(geo, input.kind, input.number);
  if (!traces.length) {
    const message = `no trace has ${input.kind} ${input.number} (${input.kind} numbers run ${range?.min}–${range?.max})`;
    throw new AppError(422, 'no_such_line', `number: ${message}`, [{ path: 'number', message }]);
  }
  const render = renderSettingsSchema.parse({ ramp: input.ramp, clipPercentile: input.clipPercentile, agcMs: input.agcMs });
  const sectionKey = randomName();
  try {
    const s = await ctx().sequelize.transaction(async (transaction) => {
      const meta = { title: input.title, lineName: input.lineName ?? '', survey: input.survey ?? '', notes: input.notes ?? '' };
      return createSegySection(transaction, actor.id, u, meta, { kind: input.kind, number: input.number, traces: traces.length }, traces, render, geo, sectionKey);
    });
    nudgeWorkers();
    return { id: s.id, status: 'processing' };
  } catch (e) {
    await store().removePrefix(sectionKeys(sectionKey).root);
    throw e;
  }
}

/** Remove an upload no section uses any more (409 while sections do). */
export async function deleteUpload(actor: Actor, id: number) {
  const u = await uploadForEditor(actor, id);
  await ctx().sequelize.transaction(async (transaction) => {
    const n = await Section.count({ where: { segyUploadId: id }, transaction });
    if (n) throw new AppError(409, 'upload_in_use', `${n} section(s) are made from this upload; delete them first`);
    await SegyUpload.destroy({ where: { id }, transaction });
    await audit(actor.id, 'segy.delete', 'segy_upload', id, { projectId: u.projectId }, transaction);
  });
  await store().removePrefix(segyKeys(u.storageKey).root);
}

/** After a section is deleted: a 2D upload that no section uses any more goes too (a 3D one stays for more extractions). */
export async function afterSectionDeleted(s: Pick<Section, 'segyUploadId'>, actorId: number | null = null) {
  if (!s.segyUploadId) return;
  const u = await SegyUpload.findByPk(s.segyUploadId);
  if (!u || u.dimension !== '2d') return;
  const gone = await ctx().sequelize.transaction(async (transaction) => {
    if (await Section.count({ where: { segyUploadId: u.id }, transaction })) return false;
    await SegyUpload.destroy({ where: { id: u.id }, transaction });
    await audit(actorId, 'segy.delete', 'segy_upload', u.id, { projectId: u.projectId, reason: 'its 2D section was deleted' }, transaction);
    return true;
  });
  if (gone) await store().removePrefix(segyKeys(u.storageKey).root);
}

// ---- a section's SEG-Y side -------------------------------------------------------------------------

async function segySection(s: Section): Promise<{ s: Section; u: SegyUpload }> {
  if (s.sourceKind !== 'segy' || !s.segyUploadId) throw new AppError(409, 'not_segy', 'This section was made from an image, not a SEG-Y file');
  const u = await SegyUpload.findByPk(s.segyUploadId);
  if (!u) throw notFound('SEG-Y upload');
  return { s, u };
}

export async function headerView(actor: Actor, sectionId: number): Promise<SegyHeaderView> {
  const { s, u } = await segySection(await sectionForViewer(actor, sectionId));
  const h = u.header;
  return {
    uploadId: u.id,
    fileName: u.fileName,
    dimension: u.dimension,
    selection: s.segySelection ?? null,
    textual: h.textual,
    textualEncoding: h.textualEncoding,
    extendedTextual: h.extendedTextual,
    revision: h.revision,
    format: h.format,
    littleEndian: h.littleEndian,
    binary: BINARY_HEADER_FIELDS.map((f) => ({ key: f.key, byte: f.byte, bytes: bytesLabel(f), meaning: f.meaning, value: h.binary[f.key] })),
    traceFields: TRACE_HEADER_FIELDS.map((f) => ({ key: f.key, byte: f.byte, bytes: bytesLabel(f), meaning: f.meaning })),
    warnings: u.warnings,
    render: renderSettingsSchema.parse(s.renderSettings ?? {}),
    traces: s.width,
    samplesPerTrace: u.samplesPerTrace,
    y: h.y,
  };
}

/** A page of the section's trace headers (in section order), every field of fields.ts plus the overridden positions. */
export async function traceHeaderPage(actor: Actor, sectionId: number, q: { page: number; pageSize: number }): Promise<SegyTraceHeaderPage> {
  const { s, u } = await segySection(await sectionForViewer(actor, sectionId));
  const selection = await readSelection(store(), s.storageKey, s.segySelection?.kind !== 'line');
  const total = s.width;
  const from = (q.page - 1) * q.pageSize;
  const to = Math.min(total, from + q.pageSize);
  const ov = { ...OVERRIDABLE_DEFAULTS, ...pick(u.overrides) };
  const extra = (Object.keys(ov) as (keyof typeof ov)[]).filter((k) => ov[k] !== OVERRIDABLE_DEFAULTS[k]);
  const keys = [...TRACE_HEADER_FIELDS.map((f) => f.key), ...extra.map((k) => `${k}@${ov[k]}`)];
  const rows: SegyTraceHeaderPage['rows'] = [];
  const headersKey = segyKeys(u.storageKey).headers;
  for (let i = from; i < to; i++) {
    const t = selection ? selection[i] : i;
    const b = await readAll(store(), headersKey, { start: t * TRACE_HEADER_BYTES, end: (t + 1) * TRACE_HEADER_BYTES - 1 });
    const view = new DataView(b.buffer, b.byteOffset, TRACE_HEADER_BYTES);
    const values = TRACE_HEADER_FIELDS.map((f) => readField(view, f, 1, u.header.littleEndian));
    for (const k of extra) values.push(view.getInt32(ov[k] - 1, u.header.littleEndian));
    rows.push({ trace: i, fileTrace: t, values });
  }
  return { page: q.page, pageSize: q.pageSize, total, keys, rows };
}

function pick(o: SegyUploadOptions) {
  const out: Partial<Record<'cdpX' | 'cdpY' | 'inline' | 'crossline', number>> = {};
  for (const k of ['cdpX', 'cdpY', 'inline', 'crossline'] as const) if (o[k] !== undefined) out[k] = o[k];
  return out;
}

/** True amplitudes (float32 as stored) of a window of the section; indices are the section's trace and sample. */
export async function amplitudeWindow(actor: Actor, sectionId: number, q: { trace: number; sample: number; traces: number; samples: number }): Promise<AmplitudeWindow> {
  const { s, u } = await segySection(await sectionForViewer(actor, sectionId));
  const bad = (p: string, message: string) => new AppError(400, 'validation_failed', `${p}: ${message}`, [{ path: p, message }]);
  if (q.traces * q.samples > AMPLITUDE_WINDOW_MAX) throw bad('samples', `traces × samples must be at most ${AMPLITUDE_WINDOW_MAX}`);
  if (q.trace + q.traces > s.width) throw bad(q.trace >= s.width ? 'trace' : 'traces', `the section has traces 0–${s.width - 1}`);
  if (q.sample + q.samples > s.height) throw bad(q.sample >= s.height ? 'sample' : 'samples', `the section has samples 0–${s.height - 1}`);
  const selection = await readSelection(store(), s.storageKey, s.segySelection?.kind !== 'line');
  const values = await readWindow(store(), u.storageKey, u.samplesPerTrace, selection, q);
  const y = u.header.y;
  const yToM = y.domain === 'depth' && y.unit === 'ft' ? FOOT : 1;
  return { ...q, values, y: { start: y.start * yToM, step: y.step * yToM, unit: y.domain === 'time' ? 'ms' : 'm' } };
}

/** Queue a re-render with other settings (the pyramid job, with progress); the stored amplitudes are reused. */
export async function rerender(actor: Actor, sectionId: number, settings: RenderSettings): Promise<{ id: number; status: 'processing' }> {
  const { u } = await segySection(await sectionForEditor(actor, sectionId));
  if (settings.agcMs != null && u.header.y.domain !== 'time') {
    throw new AppError(400, 'validation_failed', 'agcMs: AGC windows are in ms; this file is in depth', [{ path: 'agcMs', message: 'AGC windows are in ms; this file is in depth' }]);
  }
  await ctx().sequelize.transaction(async (transaction) => {
    const row = (await Section.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE }))!;
    if (row.status === 'processing' && !(await stuckReason(row))) {
      throw new AppError(409, 'build_running', `The section's tiles are being built (${row.progress} %); wait for it to finish before rendering again`);
    }
    await cancelPyramidJob(row.jobId, transaction);
    await Section.update({ renderSettings: settings }, { where: { id: sectionId }, transaction });
    await queuePyramid(Object.assign(row, { attempts: 0 }), transaction);
    await audit(actor.id, 'section.render', 'section', sectionId, settings, transaction);
  });
  nudgeWorkers();
  return { id: sectionId, status: 'processing' };
}

/** The header calibration version of a section, if any (for the section detail's label). */
export async function hasHeaderCalibration(sectionId: number): Promise<boolean> {
  return (await SectionCalibration.count({ where: { sectionId, source: 'segy_headers' } })) > 0;
}
