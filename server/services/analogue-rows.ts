/**
 * Analogue library rows: the columns, a row as the API's summary or detail,
 * one analogue by id, and the write wrapper every change goes through (one
 * transaction; afterwards this process reads the library generation again,
 * which also empties its search cache).
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { LRUCache } from 'lru-cache';
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { fileStoreFor } from '../storage/fileStore';
import { icsUnit } from '../../shared/ics-chart';
import {
  METRIC_KEYS,
  type AnalogueDetail,
  type Facet,
  type FacetCount,
  type AnalogueSummary,
  type Citation,
  type MetricKey,
  type Metrics,
  type RangeField,
} from '../../shared/schemas/analogues';

export interface Actor {
  id: number;
  role: string;
}

export const db = () => ctx().sequelize;
export const store = () => fileStoreFor(ctx().config.storageDir);

/** A change to the library: one transaction; afterwards this process reads the library generation again. */
export async function write<T>(fn: (transaction: Transaction) => Promise<T>): Promise<T> {
  try {
    return await db().transaction(fn);
  } finally {
    forgetGeneration();
  }
}

export const isCurator = (a: Actor) => a.role === 'curator' || a.role === 'admin';

/** Metric key → column. */
export const METRIC_COLUMN: Record<MetricKey, string> = {
  heightM: 'height_m',
  baseWidthM: 'base_width_m',
  aspectRatio: 'aspect_ratio',
  areaM2: 'area_m2',
  volumeM3: 'volume_m3',
  topWidthM: 'top_width_m',
  trajectoryDeg: 'trajectory_deg',
  netBackstepM: 'net_backstep_m',
  netAggradationM: 'net_aggradation_m',
  flankAngleDeg: 'flank_angle_deg',
  flankMaxDeg: 'flank_max_deg',
  cycleCount: 'cycle_count',
};
export const RANGE_COLUMN: Record<RangeField, string> = { ...METRIC_COLUMN, ageMa: 'age_ma', latitude: 'latitude', longitude: 'longitude', year: 'year' };

export const SUMMARY_COLUMNS = `id, name, status, source, setting, factory, climate, class, period, epoch, stage, age_ma, latitude, longitude, tags, citation, updated_at, ${METRIC_KEYS.map((k) => METRIC_COLUMN[k]).join(', ')}`;

export type Row = Record<string, any>;

export function citationShort(c: Citation | null): string | null {
  if (!c) return null;
  return `${c.authors} (${c.year})`;
}

export function metricsOf(r: Row): Metrics {
  const m: Metrics = {};
  for (const k of METRIC_KEYS) m[k] = r[METRIC_COLUMN[k]] ?? null;
  return m;
}

export function toSummary(r: Row): AnalogueSummary {
  return {
    id: r.id,
    name: r.name,
    status: r.status,
    source: r.source,
    setting: r.setting,
    factory: r.factory,
    climate: r.climate,
    class: r.class,
    period: r.period,
    epoch: r.epoch,
    stage: r.stage,
    ageMa: r.age_ma,
    latitude: r.latitude,
    longitude: r.longitude,
    tags: r.tags ?? [],
    metrics: metricsOf(r),
    citationShort: citationShort(r.citation),
    updatedAt: new Date(r.updated_at).toISOString(),
  };
}

export async function userName(id: number | null): Promise<{ id: number; name: string } | null> {
  if (id == null) return null;
  const [u] = await db().query<{ id: number; name: string }>('SELECT id, name FROM users WHERE id = $1', { bind: [id], type: QueryTypes.SELECT });
  return u ?? null;
}

export async function toDetail(r: Row): Promise<AnalogueDetail> {
  let liveChanged = false;
  let liveDeleted = false;
  if (r.buildup_id != null) {
    const [b] = await db().query<{ version: number }>('SELECT version FROM buildups WHERE id = $1', { bind: [r.buildup_id], type: QueryTypes.SELECT });
    liveDeleted = !b;
    liveChanged = !b || b.version !== r.buildup_version;
  }
  return {
    ...toSummary(r),
    version: r.version,
    engineClass: r.engine_class,
    classOverride: r.class_override,
    classOverrideReason: r.class_override_reason,
    icsUnit: r.ics_unit,
    notes: r.notes,
    citation: r.citation,
    basis: r.basis,
    basisVelocityMs: r.basis_velocity_ms,
    profile: r.profile,
    shape: r.shape,
    snapshot: r.snapshot,
    ranges: r.ranges,
    hasCrop: !!r.crop_key,
    origin: r.buildup_id != null ? { buildupId: r.buildup_id, buildupVersion: r.buildup_version, sectionId: r.section_id, projectId: r.project_id } : null,
    liveChanged,
    liveDeleted,
    requestedBy: await userName(r.requested_by_id),
    decidedBy: await userName(r.decided_by_id),
    declineReason: r.decline_reason,
    createdAt: new Date(r.created_at).toISOString(),
  };
}

/**
 * One analogue row. Within a write `transaction` the row is locked (FOR UPDATE) until it ends, so a
 * check made on it (version, pending) still holds when the write lands: of two saves from the same
 * version one wins and the other meets the conflict, instead of both passing and the later one
 * overwriting the earlier unseen.
 */
export async function rowById(id: number, transaction?: Transaction): Promise<Row> {
  if (!Number.isInteger(id) || id <= 0) throw notFound('Analogue');
  const [r] = await db().query<Row>(`SELECT * FROM analogues WHERE id = $1${transaction ? ' FOR UPDATE' : ''}`, { bind: [id], type: QueryTypes.SELECT, transaction });
  if (!r) throw notFound('Analogue');
  return r;
}

export async function getAnalogue(_actor: Actor, id: number): Promise<AnalogueDetail> {
  return toDetail(await rowById(id));
}


export function invalid(status: number, code: string, path: string, message: string): AppError {
  return new AppError(status, code, `${path}: ${message}`, [{ path, message }]);
}

/** Search answers as sent (JSON bytes and entity tag), by library generation and query. */
export const searchCache = new LRUCache<string, { json: Buffer; etag: string }>({ max: 500 });
/** Facet counts and totals by library generation and filters alone (sort and page left out): paging or re-sorting a search does not count again. */
export const facetCache = new LRUCache<string, FacetTotals>({ max: 500 });
/**
 * Where each page served of a search ended (the last row's sort key as text and
 * id), by library generation and the search without its page number: the
 * next pages seek from the nearest known end instead of skipping every row
 * before them (analogue-search.service.ts `listPage`).
 */
export const pageEnds = new LRUCache<string, Map<number, PageEnd>>({ max: 100 }); // ≤ 2,000 ends each (PAGE_ENDS_MAX): a few MB at most
export interface PageEnd {
  key: string | null;
  id: number;
}

/** Facet counts per facet and the total of a search's filters. */
export interface FacetTotals {
  facets: Partial<Record<Facet, FacetCount[]>>;
  total: number;
}

/**
 * How long this process trusts the library generation it last read. Changes
 * made in this process forget it at once (`forgetGeneration`); a change made
 * by another server process shows in this one's cached searches within this
 * many milliseconds.
 */
export const GENERATION_TTL_MS = 1000;
let known: { g: string; at: number } | null = null;

/** After a change commits in this process: read the generation again on the next search. */
export function forgetGeneration() {
  known = null;
  searchCache.clear();
  facetCache.clear();
  pageEnds.clear();
}

export async function generation(): Promise<string> {
  if (known && Date.now() - known.at < GENERATION_TTL_MS) return known.g;
  const at = Date.now();
  const [r] = await db().query<{ g: string }>('SELECT generation::text AS g FROM analogue_library_state WHERE id = 1', { type: QueryTypes.SELECT });
  known = { g: r?.g ?? '0', at };
  return known.g;
}

/** Free tags: trimmed, lower case, distinct, sorted. */
export const normTags = (tags: string[] | undefined) => [...new Set((tags ?? []).map((t) => t.trim().toLowerCase()).filter(Boolean))].sort();
