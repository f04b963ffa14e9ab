/**
 * Buildup reports and single-buildup exports.
 *
 * - `buildupReport`: the report as data (shared/report/report.ts) for the
 *   page and the PDF: title block, measurements (the same cached numbers as
 *   GET /measurements) or what is missing, velocity model and sources, the
 *   crop window and its VE.
 * - `exportBuildup`: CSV (papaparse, one row per cycle, one header row with
 *   units, optional UTF-8 BOM), the engine's JSON, GeoJSON (RFC 7946, crest
 *   and margins along the line's geography with turf); PNG, SVG and PDF come
 *   from the report job's cached files (heavy work never runs in a request).
 * - `requestReport` / `reportStatus`: the `buildup-report` job (jobs/report.job.ts),
 *   one row per cache key in `buildup_reports`.
 *
 * Access: whoever may see the buildup (project members of any role, admins)
 * may read and export; others get 404.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import Papa from 'papaparse';
import { lineString } from '@turf/helpers';
import turfLength from '@turf/length';
import turfAlong from '@turf/along';
import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { ctx } from '../context';
import { ROOT_DIR } from '../config';
import { AppError, notFound } from '../errors';
import { Buildup, SectionVelocity } from '../models/buildup';
import { Section, SectionCalibration } from '../models/section';
import { Project, User } from '../models/index';
import { BuildupReportRow } from '../models/report';
import { NoteThread } from '../models/note';
import { sectionForViewer } from './section-access';
import { measureBuildup } from './buildup.service';
import { audit } from './audit.service';
import type { Actor } from './project.service';
import { fileStoreFor, type StoredObject } from '../storage/fileStore';
import { applyCalibration, createDepthConverter, describeVelocityModel, type CalibrationFit, type MeasurementOutput } from '../../shared/measure/index';
import { fromGeometry, measurabilityIssues, toInterpretationInput, type BuildupGeometry, type VelocityModel } from '../../shared/editor/model';
import { DEFAULT_VELOCITY, DEFAULT_VELOCITY_SOURCES } from '../../shared/schemas/buildups';
import { REVIEW_STATE_LABELS, type ReviewState } from '../../shared/schemas/review';
import { checklistItem } from '../../shared/format';
import { isLengthUnit, toDisplay, DEFAULT_LENGTH_UNIT, type LengthUnit } from '../../shared/units';
import { CAUTION } from '../../shared/measure/index';
import { REPORT_FORMAT, cycleTable, exportFileName, EXPORT_CONTENT_TYPES, type BuildupReport, type ExportFormat, type Paper, type ReportCrop } from '../../shared/report/report';
import { clampStretch, cropWindow } from '../../shared/report/overlay';
import { nudgeReportWorkers, sendReportJob } from '../jobs/report-queue';

/** Bumped when the report's look changes, so cached files are made again. */
export const REPORT_RENDER_VERSION = 1;

let caylineVersion: string | null = null;
export function caylineVersionOf(): string {
  if (caylineVersion === null) {
    try {
      caylineVersion = String(JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'package.json'), 'utf8')).version ?? 'unknown');
    } catch {
      caylineVersion = 'unknown';
    }
  }
  return caylineVersion;
}

/** Reader's choices for a report or an export (query strings are validated by the routes). */
export interface ReportOptions {
  unit?: LengthUnit;
  stretch?: number;
  paper?: Paper;
  bom?: boolean;
}

export async function buildupForViewer(actor: Actor, id: number): Promise<{ buildup: Buildup; section: Section }> {
  const buildup = Number.isInteger(id) && id > 0 ? await Buildup.findByPk(id) : null;
  if (!buildup) throw notFound('Buildup');
  const section = await sectionForViewer(actor, buildup.sectionId).catch(() => {
    throw notFound('Buildup');
  });
  return { buildup, section };
}

/** The person's length unit (users.length_unit), metres when unset or not there yet. */
export async function preferredUnit(userId: number | null): Promise<LengthUnit> {
  if (!userId) return DEFAULT_LENGTH_UNIT;
  try {
    const rows = await ctx().sequelize.query<{ length_unit: string }>('SELECT length_unit FROM users WHERE id = :id', {
      replacements: { id: userId },
      type: QueryTypes.SELECT,
    });
    const u = rows[0]?.length_unit;
    return isLengthUnit(u) ? u : DEFAULT_LENGTH_UNIT;
  } catch {
    return DEFAULT_LENGTH_UNIT; // column not migrated in this database
  }
}

interface Sources {
  calibration: SectionCalibration | null;
  velocity: { model: VelocityModel; isDefault: boolean; updatedAt: string | null };
}

async function sourcesOf(section: Section): Promise<Sources> {
  const calibration = await SectionCalibration.findOne({ where: { sectionId: section.id }, order: [['version', 'DESC']] });
  const v = await SectionVelocity.findByPk(section.id);
  return {
    calibration,
    velocity: v
      ? { model: v.model as VelocityModel, isDefault: false, updatedAt: v.updatedAt.toISOString() }
      : { model: DEFAULT_VELOCITY as VelocityModel, isDefault: true, updatedAt: null },
  };
}

const nameOf = async (id: number | null | undefined) => (id ? ((await User.findByPk(id, { attributes: ['name'] }))?.name ?? null) : null);

/** The image's own VE (horizontal m per px ÷ vertical m of depth per px) at `at`, by central differences; null when unknown. */
function intrinsicVE(context: unknown, at: [number, number]): number | null {
  try {
    const conv = createDepthConverter(context);
    const h = 2;
    const l = conv.toDepth([at[0] - h, at[1]]);
    const r = conv.toDepth([at[0] + h, at[1]]);
    const t = conv.toDepth([at[0], at[1] - h]);
    const b = conv.toDepth([at[0], at[1] + h]);
    const mH = Math.hypot(r[0] - l[0], r[1] - l[1]) / (2 * h);
    const mV = Math.hypot(b[0] - t[0], b[1] - t[1]) / (2 * h);
    return mV > 0 && Number.isFinite(mH / mV) ? mH / mV : null;
  } catch {
    return null;
  }
}

/** Pixel of the crest region: the highest point (smallest v) of the youngest traced top, else of anything traced. */
function crestPixel(g: BuildupGeometry): [number, number] | null {
  const tops = g.cycles.filter((c) => c.top.length >= 2);
  const pts = tops.length ? tops[tops.length - 1].top : [...g.base, ...g.cycles.flatMap((c) => c.top)];
  if (!pts.length) return null;
  let best = pts[0];
  for (const p of pts) if (p[1] < best[1]) best = p;
  return [best[0], best[1]];
}

/** Note pins of the section that fall inside the crop (their threads' last known position). */
async function notePinsIn(sectionId: number, crop: { u0: number; v0: number; width: number; height: number }) {
  const threads = await NoteThread.findAll({ where: { sectionId }, attributes: ['number', 'at', 'resolvedAt'], order: [['number', 'ASC']] });
  return threads
    .filter((n) => Array.isArray(n.at) && n.at[0] >= crop.u0 && n.at[0] <= crop.u0 + crop.width && n.at[1] >= crop.v0 && n.at[1] <= crop.v0 + crop.height)
    .map((n) => ({ number: n.number, at: [n.at[0], n.at[1]] as [number, number], resolved: !!n.resolvedAt }));
}

/** The latest change to the section's Note pins (part of the report cache key). */
async function notesStamp(sectionId: number) {
  const row = await NoteThread.findOne({ where: { sectionId }, attributes: ['updatedAt'], order: [['updatedAt', 'DESC']] });
  return [await NoteThread.count({ where: { sectionId } }), row?.updatedAt?.toISOString() ?? null];
}

/** Calibrated x (m) of the image's left and right edges at mid-height, as calibrationChecks measures the line (section.service.ts). */
function edgeX(section: Section, cal: SectionCalibration | null): { xLeftM: number | null; xRightM: number | null } {
  const fit = cal?.fit as CalibrationFit | undefined;
  if (!fit?.affine) return { xLeftM: null, xRightM: null };
  const mid = section.height / 2;
  return { xLeftM: applyCalibration(fit.affine, [0, mid])[0], xRightM: applyCalibration(fit.affine, [section.width, mid])[0] };
}

/** Assemble the report data of a buildup the caller may see (no access check here). */
export async function assembleReport(buildup: Buildup, section: Section, measure: () => Promise<MeasurementOutput>, opts: { unit: LengthUnit; stretch: number }): Promise<BuildupReport> {
  const project = await Project.findByPk(section.projectId);
  const src = await sourcesOf(section);
  const editor = fromGeometry({ id: buildup.id, name: buildup.name, version: buildup.version, geometry: buildup.geometry });
  const ties = src.calibration?.ties ?? null;
  const missing: string[] = [];
  if (!ties) missing.push(checklistItem('calibration: the section has no Ties yet').text);
  for (const issue of measurabilityIssues(editor, ties)) missing.push(checklistItem(issue).text);
  let output: MeasurementOutput | null = null;
  if (!missing.length) {
    try {
      output = await measure();
    } catch (e) {
      if (e instanceof AppError && (e.code === 'not_measurable' || e.code === 'not_calibrated')) missing.push(e.message);
      else throw e;
    }
  }
  let crop: ReportCrop | null = null;
  if (section.status === 'ready' && section.pyramid) {
    const w = cropWindow(buildup.geometry, section.width, section.height);
    let ve: number | null = null;
    const at = crestPixel(buildup.geometry) ?? [w.u0 + w.width / 2, w.v0 + w.height / 2];
    if (ties) {
      let context: unknown = { verticalDomain: section.verticalDomain, coordinates: 'pixels', calibration: ties, velocity: src.velocity.model };
      try {
        if (!missing.length) context = toInterpretationInput(editor, { calibrationTies: ties, verticalDomain: section.verticalDomain, velocity: src.velocity.model });
      } catch {
        /* fall back to the context without the buildup */
      }
      ve = intrinsicVE(context, at);
    }
    crop = { ...w, stretch: opts.stretch, intrinsicVE: ve, ve: ve === null ? null : ve * opts.stretch, trueScaleStretch: ve === null ? null : 1 / ve, imageWidth: section.width, imageHeight: section.height };
  }
  const notePins = crop ? await notePinsIn(section.id, crop) : [];
  const reviewState: ReviewState = buildup.reviewState ?? 'draft';
  const hasEnds = [section.startLon, section.startLat, section.endLon, section.endLat].every((v) => typeof v === 'number' && Number.isFinite(v));
  return {
    format: REPORT_FORMAT,
    buildupId: buildup.id,
    sectionId: section.id,
    title: {
      project: project?.name ?? '',
      section: section.title,
      line: section.lineName ?? '',
      survey: section.survey ?? '',
      buildup: buildup.name,
      buildupVersion: buildup.version,
      interpreter: (await nameOf(buildup.createdById)) ?? (await nameOf(buildup.updatedById)),
      reviewState,
      reviewStateLabel: REVIEW_STATE_LABELS[reviewState] ?? reviewState,
      signedOffBy: reviewState === 'signed_off' ? await nameOf(buildup.signedOffById) : null,
      signedOffAt: reviewState === 'signed_off' && buildup.signedOffAt ? new Date(buildup.signedOffAt).toISOString() : null,
      signedOffVersion: reviewState === 'signed_off' ? (buildup.signedOffVersion ?? null) : null,
      date: new Date().toISOString(),
      caylineVersion: caylineVersionOf(),
    },
    unit: opts.unit,
    missing,
    measurement: output?.buildups[0] ?? null,
    options: output?.options ?? null,
    assumptions: output?.assumptions ?? [],
    caution: output?.caution ?? CAUTION,
    velocity: {
      verticalDomain: section.verticalDomain,
      description:
        section.verticalDomain === 'depth_m' ? 'The section is in depth: no velocity conversion.' : describeVelocityModel(src.velocity.model as never),
      isDefault: src.velocity.isDefault,
      sources: src.velocity.isDefault ? DEFAULT_VELOCITY_SOURCES : ['Set by the interpreter for this section.'],
    },
    geometry: buildup.geometry,
    crop,
    notePins,
    lineEnds: hasEnds ? { start: [section.startLon!, section.startLat!], end: [section.endLon!, section.endLat!], ...edgeX(section, src.calibration) } : null,
  };
}

async function resolveOptions(actor: Actor, opts: ReportOptions) {
  return { unit: opts.unit ?? (await preferredUnit(actor.id)), stretch: clampStretch(opts.stretch ?? 1), paper: opts.paper ?? ('a4' as Paper) };
}

export async function buildupReport(actor: Actor, id: number, opts: ReportOptions = {}): Promise<BuildupReport> {
  const { buildup, section } = await buildupForViewer(actor, id);
  const o = await resolveOptions(actor, opts);
  return assembleReport(buildup, section, () => measureBuildup(actor, id), o);
}

// ---------------------------------------------------------------------------
// exports

export interface ExportFile {
  fileName: string;
  contentType: string;
  body: Buffer | string | StoredObject;
}

/** GeoJSON (RFC 7946) of the crest and margins placed along the line; 422 `no_line_geography` when the ends are unknown. */
export function geoJsonOf(report: BuildupReport): Record<string, unknown> {
  const m = report.measurement;
  if (!m) throw new AppError(422, 'not_measurable', `The buildup cannot be measured yet: ${report.missing.join('; ')}`, { missing: report.missing });
  if (!report.lineEnds) {
    throw new AppError(
      422,
      'no_line_geography',
      'section.startLon, startLat, endLon, endLat: the line geography of this section is not known; set the coordinates of both line ends on the section to place the buildup on a map',
      [{ path: 'section.startLon', message: 'the line geography (both ends’ longitude and latitude) is not set' }],
    );
  }
  const { xLeftM, xRightM } = report.lineEnds;
  if (xLeftM == null || xRightM == null || xLeftM === xRightM) {
    throw new AppError(409, 'not_calibrated', 'calibration: the section has no usable Ties, so positions along the line are unknown');
  }
  const line = lineString([report.lineEnds.start, report.lineEnds.end]);
  // turf.length / turf.along: great circle on a sphere of radius 6371008.8 m (as the section's line-length check)
  const lineKm = turfLength(line, { units: 'kilometers' });
  const unit = report.unit;
  const d = (q: Parameters<typeof toDisplay>[0], v: number | null) => (v == null ? null : toDisplay(q, v, unit));
  /**
   * A section x (m) → a point on the line: its fraction of the way from the
   * image's left edge (the line's start) to its right edge (the line's end),
   * times the line's length, measured along the great circle from the start.
   * Outside the image the point stays at the nearer end (`outsideLine`).
   */
  const place = (xM: number) => {
    const f = (xM - xLeftM) / (xRightM - xLeftM);
    const p = turfAlong(line, Math.min(Math.max(f, 0), 1) * lineKm, { units: 'kilometers' });
    const [lon, lat] = p.geometry.coordinates;
    return { coordinates: [round7(lon), round7(lat)] as [number, number], clamped: f < 0 || f > 1 };
  };
  const features: Record<string, unknown>[] = [];
  const crest = place(m.crest[0]);
  features.push({
    type: 'Feature',
    geometry: { type: 'Point', coordinates: crest.coordinates },
    properties: {
      kind: 'crest',
      buildup: report.title.buildup,
      section: report.title.section,
      line: report.title.line,
      survey: report.title.survey,
      classification: m.classification,
      unit,
      alongLine: d('length', m.crest[0]),
      crestDepth: d('length', m.crest[1]),
      height: d('length', m.heightM),
      baseWidth: d('length', m.baseWidthM),
      aspectRatio: m.aspectRatio,
      area: d('area', m.areaM2),
      volume: d('volume', m.volumeM3),
      volumeP50: m.ranges ? d('volume', m.ranges.volumeM3.p50) : null,
      trajectoryDeg: m.trajectoryDeg,
      reviewState: report.title.reviewState,
      outsideLine: crest.clamped,
    },
  });
  for (const c of m.cycles) {
    for (const side of ['left', 'right'] as const) {
      const pin = side === 'left' ? c.marginLeft : c.marginRight;
      const p = place(pin[0]);
      features.push({
        type: 'Feature',
        geometry: { type: 'Point', coordinates: p.coordinates },
        properties: {
          kind: 'margin',
          side,
          cycle: c.index,
          buildup: report.title.buildup,
          unit,
          alongLine: d('length', pin[0]),
          depth: d('length', pin[1]),
          topWidth: d('length', c.topWidthM),
          thickness: d('length', c.thicknessM),
          flankAngleDeg: side === 'left' ? c.left.flankAngleDeg : c.right.flankAngleDeg,
          trajectoryDeg: c.trajectoryDeg,
          outsideLine: p.clamped,
        },
      });
    }
  }
  // the buildup's extent along the line (base ends)
  const lastCycle = m.cycles[m.cycles.length - 1];
  if (lastCycle) {
    const a = place(m.cycles[0].marginLeft[0]).coordinates;
    const b = place(m.cycles[0].marginRight[0]).coordinates;
    if (a[0] !== b[0] || a[1] !== b[1]) {
      features.push({
        type: 'Feature',
        geometry: { type: 'LineString', coordinates: [a, b] },
        properties: { kind: 'oldestTopBetweenMargins', buildup: report.title.buildup, cycle: m.cycles[0].index, unit, topWidth: d('length', m.cycles[0].topWidthM) },
      });
    }
  }
  return { type: 'FeatureCollection', features };
}

/** 7 decimals of a degree ≈ 1 cm: RFC 7946 §11.2 advises against needless precision. */
const round7 = (v: number) => Math.round(v * 1e7) / 1e7;

/** CSV of the cycles (RFC 4180: CRLF line ends, fields with comma, quote or line break quoted, quotes doubled). */
export function csvOf(report: BuildupReport, bom: boolean): string {
  const m = report.measurement;
  if (!m) throw new AppError(422, 'not_measurable', `The buildup cannot be measured yet: ${report.missing.join('; ')}`, { missing: report.missing });
  const t = cycleTable(m, report.unit);
  const text = Papa.unparse({ fields: t.fields, data: t.data }, { newline: '\r\n', quotes: false, quoteChar: '"', escapeChar: '"', header: true });
  return (bom ? '\uFEFF' : '') + text + '\r\n';
}

export async function exportBuildup(actor: Actor, id: number, format: ExportFormat, opts: ReportOptions = {}): Promise<ExportFile | { preparing: ReportStatus }> {
  const { buildup, section } = await buildupForViewer(actor, id);
  const o = await resolveOptions(actor, opts);
  const name = (f: ExportFormat) => exportFileName(section.lineName || section.title, buildup.name, f, o.paper);
  if (format === 'png' || format === 'svg' || format === 'pdf') {
    const status = await requestReportFor(actor, buildup, section, o);
    if (status.status !== 'ready') return { preparing: status };
    const obj = await fileStoreFor(ctx().config.storageDir).get(`${reportFolder(status.cacheKey)}/${format === 'pdf' ? 'report.pdf' : format === 'png' ? 'crop.png' : 'crop.svg'}`);
    if (!obj) throw new AppError(409, 'report_missing', 'The report files are gone; ask for the report again');
    return { fileName: name(format), contentType: EXPORT_CONTENT_TYPES[format], body: obj };
  }
  const report = await assembleReport(buildup, section, () => measureBuildup(actor, id), o);
  if (format === 'csv') return { fileName: name('csv'), contentType: EXPORT_CONTENT_TYPES.csv, body: csvOf(report, !!opts.bom) };
  if (format === 'geojson') return { fileName: name('geojson'), contentType: EXPORT_CONTENT_TYPES.geojson, body: JSON.stringify(geoJsonOf(report), null, 2) };
  if (!report.measurement) throw new AppError(422, 'not_measurable', `The buildup cannot be measured yet: ${report.missing.join('; ')}`, { missing: report.missing });
  // the engine's JSON as GET /measurements answers it (metres: the engine's own units)
  const output = await measureBuildup(actor, id);
  return { fileName: name('json'), contentType: EXPORT_CONTENT_TYPES.json, body: JSON.stringify(output, null, 2) };
}

// ---------------------------------------------------------------------------
// report jobs

export const reportFolder = (cacheKey: string) => `reports/${cacheKey}`;

export interface ReportStatus {
  id: number;
  buildupId: number;
  cacheKey: string;
  status: BuildupReportRow['status'];
  progress: number;
  paper: string;
  unit: string;
  stretch: number;
  pages: number | null;
  bytes: number | null;
  failureReason: string | null;
  updatedAt: string;
}

export function statusOf(r: BuildupReportRow): ReportStatus {
  return {
    id: r.id,
    buildupId: r.buildupId,
    cacheKey: r.cacheKey,
    status: r.status,
    progress: r.progress,
    paper: r.paper,
    unit: r.unit,
    stretch: r.stretch,
    pages: r.pages ?? null,
    bytes: r.pdfBytes ?? null,
    failureReason: r.failureReason ?? null,
    updatedAt: r.updatedAt.toISOString(),
  };
}

/** Everything the report shows, hashed: any change gives a new key (and a new report). */
export async function reportCacheKey(buildup: Buildup, section: Section, o: { unit: string; stretch: number; paper: string }): Promise<string> {
  const src = await sourcesOf(section);
  const project = await Project.findByPk(section.projectId, { attributes: ['id', 'version', 'name'] });
  const parts = {
    render: REPORT_RENDER_VERSION,
    cayline: caylineVersionOf(),
    buildup: [buildup.id, buildup.version, buildup.name, buildup.reviewState, buildup.signedOffById, buildup.signedOffVersion, buildup.signedOffAt ? new Date(buildup.signedOffAt).toISOString() : null],
    section: [section.id, section.version, section.status],
    project: [project?.id, project?.version, project?.name],
    calibration: src.calibration ? [src.calibration.id, src.calibration.version] : null,
    velocity: [src.velocity.updatedAt, src.velocity.model],
    notes: await notesStamp(section.id),
    unit: o.unit,
    stretch: o.stretch,
    paper: o.paper,
  };
  return crypto.createHash('sha256').update(JSON.stringify(parts)).digest('hex');
}

async function requestReportFor(actor: Actor, buildup: Buildup, section: Section, o: { unit: LengthUnit; stretch: number; paper: Paper }): Promise<ReportStatus> {
  if (section.status !== 'ready' || !section.pyramid) {
    throw new AppError(409, 'section_not_ready', `The section's tiles are not ready (status ${section.status}); the report needs them for its crop`);
  }
  const cacheKey = await reportCacheKey(buildup, section, o);
  const existing = await BuildupReportRow.findOne({ where: { cacheKey } });
  if (existing && existing.status !== 'failed') return statusOf(existing);
  const row = await ctx().sequelize.transaction(async (transaction) => {
    let r = await BuildupReportRow.findOne({ where: { cacheKey }, transaction, lock: transaction.LOCK.UPDATE });
    if (r && r.status !== 'failed') return r;
    try {
      if (!r) {
        r = await BuildupReportRow.create(
          { buildupId: buildup.id, cacheKey, paper: o.paper, unit: o.unit, stretch: o.stretch, status: 'queued', requestedById: actor.id, progressAt: new Date() },
          { transaction },
        );
      }
      const jobId = await sendReportJob(r.id, transaction);
      await r.update({ jobId, status: 'queued', progress: 0, failureReason: null, workerId: null, attempts: r.attempts + 1, progressAt: new Date() }, { transaction });
      await audit(actor.id, 'report.request', 'buildup', buildup.id, { reportId: r.id, paper: o.paper, unit: o.unit, stretch: o.stretch }, transaction);
      return r;
    } catch (e) {
      if (e instanceof UniqueConstraintError) return null; // another request made it meanwhile
      throw e;
    }
  });
  if (!row) return statusOf((await BuildupReportRow.findOne({ where: { cacheKey } }))!);
  nudgeReportWorkers();
  return statusOf(row);
}

/** Ask for the report PDF (and crop PNG/SVG) of a buildup: the cached one when current, else a queued job. */
export async function requestReport(actor: Actor, id: number, opts: ReportOptions = {}): Promise<ReportStatus> {
  const { buildup, section } = await buildupForViewer(actor, id);
  return requestReportFor(actor, buildup, section, await resolveOptions(actor, opts));
}

export async function reportStatus(actor: Actor, reportId: number): Promise<ReportStatus> {
  const row = Number.isInteger(reportId) && reportId > 0 ? await BuildupReportRow.findByPk(reportId) : null;
  if (!row) throw notFound('Report');
  await buildupForViewer(actor, row.buildupId).catch(() => {
    throw notFound('Report');
  });
  return statusOf(row);
}
