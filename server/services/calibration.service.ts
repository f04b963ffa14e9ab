/**
 * A section's axis calibrations: versions of Ties with their fit by the
 * shared engine (shared/measure/calibration.ts), kept forever (a new version
 * never overwrites an older one), with the line-length check.
 *
 * `createCalibrationVersion` is the one way a version is stored: the HTTP
 * save, the upload's optional first calibration (demo seeder) and any other
 * source of Ties (e.g. SEG-Y headers) call it inside their own transaction.
 */
import type { Transaction } from 'sequelize';
import { lineString } from '@turf/helpers';
import turfLength from '@turf/length';
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { Section, SectionCalibration } from '../models/section';
import { User } from '../models/index';
import type { Actor } from './project.service';
import { audit } from './audit.service';
import { depthSourcesChanged } from '../jobs/depth.job';
import { loadSection, sectionForEditor, sectionForViewer } from './section-access';
import { fitCalibration, applyCalibration, type CalibrationFit, type CalibrationMode } from '../../shared/measure/calibration';
import { CalibrationError } from '../../shared/measure/errors';
import type { CalibrationChecks, CalibrationInput, CalibrationPreview, CalibrationRecord, Tie } from '../../shared/schemas/sections';

/** Great-circle length (m) between the section's end coordinates, or null when any is missing. */
export function lineLength(s: Pick<Section, 'startLon' | 'startLat' | 'endLon' | 'endLat'>): number | null {
  if (s.startLon == null || s.startLat == null || s.endLon == null || s.endLat == null) return null;
  // turf.length: haversine great circle on a sphere of radius 6371008.8 m
  const line = lineString([
    [s.startLon, s.startLat],
    [s.endLon, s.endLat],
  ]);
  return turfLength(line, { units: 'kilometers' }) * 1000;
}

/** Line length vs the calibrated x range of the image's left and right edges (at mid-height); warn beyond 5 %. */
export function calibrationChecks(section: Section, fit: CalibrationFit | null): CalibrationChecks {
  const lineLengthM = lineLength(section);
  let calibratedXRangeM: number | null = null;
  if (fit) {
    const mid = section.height / 2;
    calibratedXRangeM = Math.abs(applyCalibration(fit.affine, [section.width, mid])[0] - applyCalibration(fit.affine, [0, mid])[0]);
  }
  let lengthMismatch: CalibrationChecks['lengthMismatch'] = null;
  if (lineLengthM != null && calibratedXRangeM != null && lineLengthM > 0) {
    const relativeDifference = Math.abs(calibratedXRangeM - lineLengthM) / lineLengthM;
    if (relativeDifference > 0.05) {
      lengthMismatch = {
        lineLengthM,
        calibratedXRangeM,
        relativeDifference,
        message: `The calibrated width of the image (${Math.round(calibratedXRangeM)} m) differs by ${(relativeDifference * 100).toFixed(1)} % from the line length given by its end coordinates (${Math.round(lineLengthM)} m)`,
      };
    }
  }
  return { lineLengthM, calibratedXRangeM, lengthMismatch };
}

export function calibrationRecord(section: Section, c: SectionCalibration): CalibrationRecord {
  const fit = c.fit as CalibrationFit;
  return {
    id: c.id,
    sectionId: c.sectionId,
    version: c.version,
    mode: fit.mode,
    ties: c.ties,
    fit,
    createdAt: c.createdAt.toISOString(),
    createdBy: c.author ? { id: c.author.id, name: c.author.name } : null,
    source: c.source ?? 'ties',
    ...calibrationChecks(section, fit),
  };
}

const withAuthor = [{ model: User, as: 'author', attributes: ['id', 'name'] }];

/** The newest calibration version of a section (with its author), or null. */
export async function latestCalibration(sectionId: number, transaction?: Transaction) {
  return SectionCalibration.findOne({ where: { sectionId }, order: [['version', 'DESC']], include: withAuthor, transaction });
}

/** Newest calibration version number of each of the given sections (absent: none yet). */
export async function latestCalibrationVersions(sectionIds: number[]): Promise<Map<number, number>> {
  const versions = new Map<number, number>();
  if (!sectionIds.length) return versions;
  const { sequelize } = ctx();
  const vs = (await SectionCalibration.findAll({
    attributes: ['sectionId', [sequelize.fn('max', sequelize.col('version')), 'latest']],
    where: { sectionId: sectionIds },
    group: ['sectionId'],
    raw: true,
  })) as unknown as { sectionId: number; latest: number }[];
  for (const v of vs) versions.set(v.sectionId, Number(v.latest));
  return versions;
}

/** Fit with the shared engine; its refusals become 400 naming `ties` (or `mode`). */
export function fitTies(input: { ties: Tie[]; mode?: CalibrationMode }): CalibrationFit {
  try {
    return fitCalibration(input.ties, input.mode ?? 'affine');
  } catch (e) {
    if (e instanceof CalibrationError) {
      const detail = e.message.startsWith(`${e.path}: `) ? e.message.slice(e.path.length + 2) : e.message;
      const p = e.path === 'calibration.mode' ? 'mode' : e.path.replace(/^calibration/, 'ties');
      throw new AppError(400, 'validation_failed', `${p}: ${detail}`, [{ path: p, message: detail }]);
    }
    throw e;
  }
}

/** What a new calibration version is made of. */
export interface CalibrationVersionInput {
  /** Ties: `px` image pixels [u, v], `world` [metres along the line, TWT ms or depth m]; may be empty when `fit` is given. */
  ties: Tie[];
  /** How `ties` are fitted: `affine` (default) or `axes`. */
  mode?: CalibrationMode;
  /** A fit made elsewhere (e.g. from a SEG-Y file's own headers), stored as is instead of fitting `ties`. */
  fit?: CalibrationFit;
  /** Where the version came from (column `source`; the table's default is 'ties'). */
  source?: 'ties' | 'segy_headers';
}

export interface CreateCalibrationOptions {
  /** The caller's transaction: the version is stored (and audited) inside it. */
  transaction: Transaction;
  /** Optimistic check: the version the caller started from (0 = none yet); another one answers 409 `version_conflict`. */
  baseVersion?: number;
  /** Audit action (default `section.calibrate`) and extra details (e.g. `{ source: 'segy_headers' }`). */
  auditAction?: string;
  auditDetails?: Record<string, unknown>;
}

/**
 * Store the next calibration version of a section. Fits `ties` first unless a
 * `fit` is given (refusals: 400 naming `ties` / `mode`), locks the section row
 * so two versions never get the same number, and audits in the same
 * transaction. No access check: callers check (sectionForEditor) before.
 */
export async function createCalibrationVersion(
  sectionId: number,
  userId: number,
  input: CalibrationVersionInput,
  opts: CreateCalibrationOptions,
): Promise<SectionCalibration> {
  const { transaction } = opts;
  const fit = input.fit ?? fitTies(input);
  const section = await Section.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
  if (!section) throw notFound('Section');
  const current = ((await SectionCalibration.max('version', { where: { sectionId }, transaction })) as number | null) ?? 0;
  if (opts.baseVersion !== undefined && opts.baseVersion !== current) {
    throw new AppError(409, 'version_conflict', `The calibration changed meanwhile (now version ${current}, you started from ${opts.baseVersion})`, {
      currentVersion: current,
    });
  }
  const c = await SectionCalibration.create(
    { sectionId, version: current + 1, ties: input.ties, fit, createdBy: userId, ...(input.source ? { source: input.source } : {}) },
    { transaction },
  );
  const details = { version: c.version, rmsPx: fit.rmsPx, ...(input.source ? { source: input.source } : {}), ...opts.auditDetails };
  await audit(userId, opts.auditAction ?? 'section.calibrate', 'section', sectionId, details, transaction);
  await depthSourcesChanged(sectionId, transaction); // a depth view made from the older Ties is rebuilt
  return c;
}

// ---- HTTP-facing ----------------------------------------------------------------

export async function previewCalibration(actor: Actor, id: number, input: CalibrationInput): Promise<CalibrationPreview> {
  const s = await sectionForEditor(actor, id);
  const f = fitTies(input);
  return { fit: f, ...calibrationChecks(s, f) };
}

/** Store a new calibration version (older ones are kept). */
export async function saveCalibration(actor: Actor, id: number, input: CalibrationInput): Promise<CalibrationRecord> {
  await sectionForEditor(actor, id);
  fitTies(input); // refuse bad Ties before opening a transaction
  const created = await ctx().sequelize.transaction((transaction) =>
    createCalibrationVersion(id, actor.id, input, { transaction, baseVersion: input.baseVersion }),
  );
  const s = await loadSection(id);
  const c = (await SectionCalibration.findByPk(created.id, { include: withAuthor }))!;
  return calibrationRecord(s, c);
}

export async function listCalibrations(actor: Actor, id: number): Promise<CalibrationRecord[]> {
  const s = await sectionForViewer(actor, id);
  const cs = await SectionCalibration.findAll({ where: { sectionId: id }, order: [['version', 'DESC']], include: withAuthor });
  return cs.map((c) => calibrationRecord(s, c));
}
