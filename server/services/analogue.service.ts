/**
 * Analogue library (issue #9): records, promotion from a measured buildup,
 * entry by hand, curator decisions, controlled lists, faceted search in
 * PostgreSQL, saved searches and Look-alikes. Everybody signed in reads; the
 * routes let only curators and admins change the library (interpreters may ask
 * for a promotion, which waits as `pending`).
 *
 * Search answers are cached in this process by query and library generation
 * (`analogue_library_state.generation`, bumped by a trigger on every statement
 * that changes analogues or the lists), so a repeated search costs one
 * single-row read; any change anywhere makes every cached answer stale.
 */
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { LRUCache } from 'lru-cache';
import { ctx } from '../context';
import { AppError, notFound, forbidden } from '../errors';
import { audit } from './audit.service';
import { getBuildup, measureContext } from './buildup.service';
import { Section } from '../models/section';
import { fileStoreFor, randomName } from '../storage/fileStore';
import { measureWithProfilesOffLoop } from '../measure/pool';
import { fromGeometry, toInterpretationInput, ModelError } from '../../shared/editor/model';
import { MeasureInputError, OUTPUT_FORMAT } from '../../shared/measure/index';
import { metricsFromMeasurement, metricVector, metricSpaceValue, shapeOf, shapePaa, shapeDistance } from '../../shared/analogue-shape';
import { icsPlacement, icsUnit, ICS_EDITION, ICS_UNITS } from '../../shared/ics-chart';
import { cropBuildup } from './analogue-crop';
import {
  DEFAULT_LOOKALIKE_METRICS,
  FACETS,
  LIST_NAMES,
  METRICS,
  METRIC_KEYS,
  SHAPE_SAMPLES,
  type AnalogueDetail,
  type AnalogueSearchQuery,
  type AnalogueSearchResponse,
  type AnalogueSummary,
  type AnalogueUpdateInput,
  type Citation,
  type ControlledLists,
  type DepthProfile,
  type EvolutionClass,
  type Facet,
  type FacetCount,
  type HandEntryInput,
  type IcsChartResponse,
  type ListItem,
  type ListItemInput,
  type ListName,
  type LookAlikeMatch,
  type LookAlikesResponse,
  type MetricKey,
  type Metrics,
  type PercentileRange,
  type PromoteInput,
  type PromotionSnapshot,
  type RangeField,
  type SavedSearch,
  type SavedSearchInput,
  lookAlikesSchema,
} from '../../shared/schemas/analogues';
import type { z } from 'zod';

export interface Actor {
  id: number;
  role: string;
}

const db = () => ctx().sequelize;
const store = () => fileStoreFor(ctx().config.storageDir);

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
const RANGE_COLUMN: Record<RangeField, string> = { ...METRIC_COLUMN, ageMa: 'age_ma', latitude: 'latitude', longitude: 'longitude', year: 'year' };

const SUMMARY_COLUMNS = `id, name, status, source, setting, factory, climate, class, period, epoch, stage, age_ma, latitude, longitude, tags, citation, updated_at, ${METRIC_KEYS.map((k) => METRIC_COLUMN[k]).join(', ')}`;

type Row = Record<string, any>;

function citationShort(c: Citation | null): string | null {
  if (!c) return null;
  return `${c.authors} (${c.year})`;
}

function metricsOf(r: Row): Metrics {
  const m: Metrics = {};
  for (const k of METRIC_KEYS) m[k] = r[METRIC_COLUMN[k]] ?? null;
  return m;
}

function toSummary(r: Row): AnalogueSummary {
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

async function userName(id: number | null): Promise<{ id: number; name: string } | null> {
  if (id == null) return null;
  const [u] = await db().query<{ id: number; name: string }>('SELECT id, name FROM users WHERE id = $1', { bind: [id], type: QueryTypes.SELECT });
  return u ?? null;
}

async function toDetail(r: Row): Promise<AnalogueDetail> {
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

async function rowById(id: number, transaction?: Transaction): Promise<Row> {
  if (!Number.isInteger(id) || id <= 0) throw notFound('Analogue');
  const [r] = await db().query<Row>('SELECT * FROM analogues WHERE id = $1', { bind: [id], type: QueryTypes.SELECT, transaction });
  if (!r) throw notFound('Analogue');
  return r;
}

export async function getAnalogue(_actor: Actor, id: number): Promise<AnalogueDetail> {
  return toDetail(await rowById(id));
}

// ---- writing -----------------------------------------------------------------------------------

function invalid(status: number, code: string, path: string, message: string): AppError {
  return new AppError(status, code, `${path}: ${message}`, [{ path, message }]);
}

/** Refuse list values that are not in the controlled lists (422 unknown_tag naming the field). */
async function checkLists(v: { setting?: string | null; factory?: string | null; climate?: string | null }, transaction?: Transaction) {
  const lists = await readLists(transaction);
  for (const l of LIST_NAMES) {
    const value = v[l];
    if (value != null && !lists[l].some((i) => i.value === value))
      throw invalid(422, 'unknown_tag', l, `"${value}" is not in the ${l} list (${lists[l].map((i) => i.value).join(', ')})`);
  }
}

function checkIcs(unit: string | null | undefined) {
  if (unit && !icsUnit(unit)) throw invalid(422, 'unknown_ics_unit', 'icsUnit', `"${unit}" is not a unit of the ${ICS_EDITION}`);
}

const normTags = (tags: string[] | undefined) => [...new Set((tags ?? []).map((t) => t.trim().toLowerCase()).filter(Boolean))].sort();

/** The columns a record's derived fields fill (age placement, vectors, citation text). */
function derived(v: { icsUnit?: string | null; ageMa?: number | null; citation?: Citation | null; metrics: Metrics; profile?: DepthProfile | null }) {
  const place = icsPlacement(v.icsUnit ?? null, v.ageMa ?? null);
  const unit = v.icsUnit ? icsUnit(v.icsUnit) : undefined;
  const ageMa = v.ageMa ?? (unit ? (unit.baseMa + unit.topMa) / 2 : null);
  const c = v.citation ?? null;
  const shape = v.profile ? shapeOf(v.profile) : null;
  return {
    ics_unit: unit?.name ?? null,
    period: place.period,
    epoch: place.epoch,
    stage: place.stage,
    age_ma: ageMa,
    citation: c,
    citation_text: c ? [c.authors, c.year, c.title, c.container, c.doi].filter((s) => s != null && s !== '').join(' ') : null,
    year: c?.year ?? null,
    metric_vec: metricVector(v.metrics),
    shape,
    shape_paa: shape ? shapePaa(shape) : null,
    profile: v.profile ?? null,
  };
}

type Columns = Record<string, unknown>;

const JSON_COLUMNS = new Set(['citation', 'profile', 'snapshot', 'ranges']);

function bindValue(col: string, v: unknown) {
  if (JSON_COLUMNS.has(col)) return v == null ? null : JSON.stringify(v);
  return v === undefined ? null : v;
}

export async function insertRow(cols: Columns, transaction: Transaction, sequelize: Sequelize = db()): Promise<number> {
  const names = Object.keys(cols);
  const [rows] = (await sequelize.query(`INSERT INTO analogues (${names.join(', ')}) VALUES (${names.map((n, i) => `$${i + 1}${JSON_COLUMNS.has(n) ? '::jsonb' : ''}`).join(', ')}) RETURNING id`, {
    bind: names.map((n) => bindValue(n, cols[n])),
    transaction,
  })) as [{ id: number }[], unknown];
  return rows[0].id;
}

/** All the columns of a new record from entry fields (hand entry and import share this). */
export function handColumns(v: HandEntryInput, source: 'hand' | 'import', actorId: number | null): Columns {
  const metrics: Metrics = {};
  const ft = v.lengthUnit === 'ft';
  for (const k of METRIC_KEYS) {
    let x = v.metrics[k] ?? null;
    if (x != null && ft) x = convertFromFeet(k, x);
    metrics[k] = x;
  }
  const cols: Columns = {
    name: v.name,
    status: 'accepted',
    source,
    setting: v.setting ?? null,
    factory: v.factory ?? null,
    climate: v.climate ?? null,
    engine_class: v.evolutionClass ?? null,
    latitude: v.latitude ?? null,
    longitude: v.longitude ?? null,
    tags: normTags(v.tags),
    notes: v.notes ?? '',
    basis: v.basis,
    basis_velocity_ms: v.basisVelocityMs ?? null,
    created_by_id: actorId,
    ...derived({ icsUnit: v.icsUnit, ageMa: v.ageMa, citation: v.citation, metrics, profile: v.profile ?? null }),
  };
  for (const k of METRIC_KEYS) cols[METRIC_COLUMN[k]] = metrics[k] ?? null;
  return cols;
}

/** International foot, 0.3048 m exactly (1959 agreement); areas and volumes by its square and cube. */
export function convertFromFeet(k: MetricKey, v: number): number {
  const FT = 0.3048;
  if (k === 'areaM2') return v * FT * FT;
  if (k === 'volumeM3') return v * FT * FT * FT;
  if (k === 'heightM' || k === 'baseWidthM' || k === 'topWidthM' || k === 'netBackstepM' || k === 'netAggradationM') return v * FT;
  return v;
}

export async function createByHand(actor: Actor, v: HandEntryInput): Promise<AnalogueDetail> {
  checkIcs(v.icsUnit);
  const id = await write(async (transaction) => {
    await checkLists(v, transaction);
    const id = await insertRow(handColumns(v, 'hand', actor.id), transaction);
    await audit(actor.id, 'analogue.create', 'analogue', id, { name: v.name, source: 'hand' }, transaction);
    return id;
  });
  return getAnalogue(actor, id);
}

function flatRanges(r: { heightM: PercentileRange; areaM2: PercentileRange; volumeM3: PercentileRange; cycles: { index: number; left: { flankAngleDeg: PercentileRange | null }; right: { flankAngleDeg: PercentileRange | null } }[] } | null) {
  if (!r) return null;
  const out: Record<string, PercentileRange> = { heightM: r.heightM, areaM2: r.areaM2, volumeM3: r.volumeM3 };
  for (const c of r.cycles) {
    if (c.left.flankAngleDeg) out[`cycles.${c.index}.left.flankAngleDeg`] = c.left.flankAngleDeg;
    if (c.right.flankAngleDeg) out[`cycles.${c.index}.right.flankAngleDeg`] = c.right.flankAngleDeg;
  }
  return out;
}

/** Measure a stored buildup on the pool, with its depth profile (404 for buildups the asker cannot see). */
async function measureForLibrary(actor: Actor, buildupId: number) {
  const record = await getBuildup(actor as never, buildupId);
  const section = await Section.findByPk(record.sectionId);
  if (!section) throw notFound('Buildup');
  const context = await measureContext(section);
  try {
    const input = toInterpretationInput(fromGeometry(record), context);
    const { output, profiles } = await measureWithProfilesOffLoop(input, {});
    return { record, section, context, output, measurement: output.buildups[0], profile: profiles[0] };
  } catch (e) {
    if (e instanceof ModelError || e instanceof MeasureInputError) throw new AppError(422, 'not_measurable', e.message, { path: (e as { path?: string }).path });
    throw e;
  }
}

/**
 * Promote a measured buildup: a snapshot of the engine's numbers (the whole
 * `cayline.measurements/1` buildup entry, options, velocity used and the
 * section's model), the depth profile, a crop of the marked-up section, and
 * the source buildup id and version. Curators and admins promote directly;
 * interpreters ask (status `pending`); reviewers may not.
 */
export async function promote(actor: Actor, buildupId: number, v: PromoteInput): Promise<AnalogueDetail> {
  if (!(isCurator(actor) || actor.role === 'interpreter')) throw forbidden('Only curators and admins promote buildups; interpreters may ask a curator to accept one');
  checkIcs(v.icsUnit);
  await checkLists(v);
  const m = await measureForLibrary(actor, buildupId);
  const { record, section, context, output, measurement, profile } = m;
  const snapshot: PromotionSnapshot = {
    format: OUTPUT_FORMAT,
    measurement: measurement as unknown as PromotionSnapshot['measurement'],
    options: output.options as unknown as Record<string, unknown>,
    velocityUsed: output.velocityUsed,
    velocityModel: context.velocity,
    verticalDomain: output.verticalDomain,
    assumptions: output.assumptions,
  };
  const metrics = metricsFromMeasurement(measurement);
  const hasLine = section.startLat != null && section.endLat != null && section.startLon != null && section.endLon != null;
  let cropKey: string | null = null;
  try {
    const jpeg = await cropBuildup(section, record.geometry);
    if (jpeg) {
      cropKey = `analogues/crops/${randomName()}.jpg`;
      await store().put(cropKey, jpeg);
    }
  } catch {
    cropKey = null; // a section without tiles yet: no crop
  }
  const pending = !isCurator(actor);
  const cols: Columns = {
    name: v.name ?? record.name,
    status: pending ? 'pending' : 'accepted',
    source: 'promoted',
    setting: v.setting ?? null,
    factory: v.factory ?? null,
    climate: v.climate ?? null,
    engine_class: measurement.classification,
    // location from the section's line geography (its midpoint) when known
    latitude: v.latitude ?? (hasLine ? (Number(section.startLat) + Number(section.endLat)) / 2 : null),
    longitude: v.longitude ?? (hasLine ? (Number(section.startLon) + Number(section.endLon)) / 2 : null),
    tags: normTags(v.tags),
    notes: v.notes ?? '',
    basis: 'depth',
    snapshot,
    ranges: flatRanges(measurement.ranges as never),
    crop_key: cropKey,
    buildup_id: record.id,
    buildup_version: record.version,
    section_id: section.id,
    project_id: section.projectId,
    requested_by_id: actor.id,
    decided_by_id: pending ? null : actor.id,
    created_by_id: actor.id,
    ...derived({ icsUnit: v.icsUnit, ageMa: v.ageMa ?? measurement.baseAgeMa, citation: null, metrics, profile }),
  };
  for (const k of METRIC_KEYS) cols[METRIC_COLUMN[k]] = metrics[k] ?? null;
  let id: number;
  try {
    id = await write(async (transaction) => {
      const id = await insertRow(cols, transaction);
      await audit(actor.id, pending ? 'analogue.request' : 'analogue.promote', 'analogue', id, { buildupId, buildupVersion: record.version }, transaction);
      return id;
    });
  } catch (e) {
    if (cropKey) await store().removePrefix(cropKey).catch(() => {});
    throw e;
  }
  return getAnalogue(actor, id);
}

/** Pending → accepted or declined (curators and admins). */
export async function decide(actor: Actor, id: number, accept: boolean, reason?: string): Promise<AnalogueDetail> {
  await write(async (transaction) => {
    const r = await rowById(id, transaction);
    if (r.status !== 'pending') throw new AppError(409, 'not_pending', `The analogue is ${r.status}, not waiting for a decision`);
    await db().query(`UPDATE analogues SET status = $2, decided_by_id = $3, decline_reason = $4, version = version + 1, updated_at = now() WHERE id = $1`, {
      bind: [id, accept ? 'accepted' : 'declined', actor.id, accept ? null : (reason ?? null)],
      transaction,
    });
    await audit(actor.id, accept ? 'analogue.accept' : 'analogue.decline', 'analogue', id, accept ? null : { reason }, transaction);
  });
  return getAnalogue(actor, id);
}

/** Change tags, numbers, citation, profile or the curator's class override, with optimistic locking. */
export async function updateAnalogue(actor: Actor, id: number, v: AnalogueUpdateInput): Promise<AnalogueDetail> {
  checkIcs(v.icsUnit);
  await write(async (transaction) => {
    const r = await rowById(id, transaction);
    if (r.version !== v.version) throw new AppError(409, 'version_conflict', `The analogue was changed by someone else (version ${r.version}, yours ${v.version}); reload it`, { current: await toDetail(r) });
    await checkLists(v, transaction);
    const cols: Columns = {};
    const set = (c: string, val: unknown) => {
      if (val !== undefined) cols[c] = val;
    };
    set('name', v.name);
    set('setting', v.setting);
    set('factory', v.factory);
    set('climate', v.climate);
    set('latitude', v.latitude);
    set('longitude', v.longitude);
    set('notes', v.notes);
    if (v.tags !== undefined) cols.tags = normTags(v.tags);
    if (v.classOverride !== undefined) {
      cols.class_override = v.classOverride;
      cols.class_override_reason = v.classOverride ? v.classOverrideReason!.trim() : null;
    }
    const metrics: Metrics = { ...metricsOf(r), ...(v.metrics ?? {}) };
    if (v.metrics) for (const k of METRIC_KEYS) cols[METRIC_COLUMN[k]] = metrics[k] ?? null;
    if (v.icsUnit !== undefined || v.ageMa !== undefined || v.citation !== undefined || v.metrics || v.profile !== undefined) {
      const d = derived({
        icsUnit: v.icsUnit !== undefined ? v.icsUnit : r.ics_unit,
        ageMa: v.ageMa !== undefined ? v.ageMa : v.icsUnit !== undefined ? null : r.age_ma,
        citation: v.citation !== undefined ? v.citation : r.citation,
        metrics,
        profile: v.profile !== undefined ? v.profile : r.profile,
      });
      Object.assign(cols, d);
    }
    const names = Object.keys(cols);
    const sets = names.map((n, i) => `${n} = $${i + 2}${JSON_COLUMNS.has(n) ? '::jsonb' : ''}`);
    await db().query(`UPDATE analogues SET ${[...sets, 'version = version + 1', 'updated_at = now()'].join(', ')} WHERE id = $1`, {
      bind: [id, ...names.map((n) => bindValue(n, cols[n]))],
      transaction,
    });
    await audit(actor.id, 'analogue.update', 'analogue', id, { fields: names }, transaction);
  });
  return getAnalogue(actor, id);
}

export async function deleteAnalogue(actor: Actor, id: number) {
  let cropKey: string | null = null;
  await write(async (transaction) => {
    const r = await rowById(id, transaction);
    cropKey = r.crop_key;
    await db().query('DELETE FROM analogues WHERE id = $1', { bind: [id], transaction });
    await audit(actor.id, 'analogue.delete', 'analogue', id, { name: r.name }, transaction);
  });
  if (cropKey) await store().removePrefix(cropKey).catch(() => {});
}

export async function openCrop(_actor: Actor, id: number) {
  const r = await rowById(id);
  if (!r.crop_key) throw notFound('Crop image');
  const obj = await store().get(r.crop_key);
  if (!obj) throw notFound('Crop image');
  return obj;
}

/** Insert many records (seeding, benchmark): multi-row INSERTs of up to 500 rows with the same columns. */
export async function insertMany(all: Columns[], transaction: Transaction, sequelize: Sequelize): Promise<void> {
  for (let at = 0; at < all.length; at += 500) {
    const chunk = all.slice(at, at + 500);
    const names = Object.keys(chunk[0]);
    const bind: unknown[] = [];
    const tuples = chunk.map((c) => `(${names.map((n) => `$${bind.push(bindValue(n, c[n]))}${JSON_COLUMNS.has(n) ? '::jsonb' : ''}`).join(', ')})`);
    await sequelize.query(`INSERT INTO analogues (${names.join(', ')}) VALUES ${tuples.join(', ')}`, { bind, transaction });
  }
}

// ---- lists, chart, saved searches ----------------------------------------------------------------

export async function readLists(transaction?: Transaction): Promise<ControlledLists> {
  const rows = await db().query<{ list: ListName; value: string; label: string }>('SELECT list, value, label FROM analogue_lists ORDER BY list, position, value', {
    type: QueryTypes.SELECT,
    transaction,
  });
  const out = { setting: [], factory: [], climate: [] } as ControlledLists;
  for (const r of rows) out[r.list].push({ value: r.value, label: r.label });
  return out;
}

export async function addListItem(actor: Actor, list: ListName, v: ListItemInput): Promise<ListItem> {
  await write(async (transaction) => {
    const [exists] = await db().query('SELECT 1 FROM analogue_lists WHERE list = $1 AND value = $2', { bind: [list, v.value], type: QueryTypes.SELECT, transaction });
    if (exists) throw invalid(409, 'list_value_exists', 'value', `"${v.value}" is already in the ${list} list`);
    await db().query('INSERT INTO analogue_lists (list, value, label, position) VALUES ($1::varchar, $2, $3, (SELECT coalesce(max(position), 0) + 1 FROM analogue_lists WHERE list = $1::varchar))', {
      bind: [list, v.value, v.label],
      transaction,
    });
    await audit(actor.id, 'analogue.list.add', 'analogue_list', list, v, transaction);
  });
  return { value: v.value, label: v.label };
}

export async function removeListItem(actor: Actor, list: ListName, value: string) {
  await write(async (transaction) => {
    const [row] = await db().query('SELECT 1 FROM analogue_lists WHERE list = $1 AND value = $2', { bind: [list, value], type: QueryTypes.SELECT, transaction });
    if (!row) throw notFound('List value');
    const [{ n }] = await db().query<{ n: number }>(`SELECT count(*)::int AS n FROM analogues WHERE ${list} = $1`, { bind: [value], type: QueryTypes.SELECT, transaction });
    if (n > 0) throw invalid(409, 'list_value_in_use', 'value', `"${value}" is used by ${n} analogue(s); change them first`);
    await db().query('DELETE FROM analogue_lists WHERE list = $1 AND value = $2', { bind: [list, value], transaction });
    await audit(actor.id, 'analogue.list.remove', 'analogue_list', list, { value }, transaction);
  });
}

export function icsChart(): IcsChartResponse {
  return { edition: ICS_EDITION, units: [...ICS_UNITS] };
}

export async function listSavedSearches(actor: Actor): Promise<SavedSearch[]> {
  const rows = await db().query<Row>('SELECT id, name, query, created_at FROM analogue_saved_searches WHERE user_id = $1 ORDER BY id', { bind: [actor.id], type: QueryTypes.SELECT });
  return rows.map((r) => ({ id: r.id, name: r.name, query: r.query, createdAt: new Date(r.created_at).toISOString() }));
}

export async function saveSearch(actor: Actor, v: SavedSearchInput): Promise<SavedSearch> {
  const id = await write(async (transaction) => {
    const [rows] = (await db().query('INSERT INTO analogue_saved_searches (user_id, name, query) VALUES ($1, $2, $3) RETURNING id', { bind: [actor.id, v.name, v.query], transaction })) as [{ id: number }[], unknown];
    await audit(actor.id, 'analogue.search.save', 'analogue_saved_search', rows[0].id, { name: v.name }, transaction);
    return rows[0].id;
  });
  return (await listSavedSearches(actor)).find((s) => s.id === id)!;
}

export async function deleteSavedSearch(actor: Actor, id: number) {
  await write(async (transaction) => {
    const [rows] = (await db().query('DELETE FROM analogue_saved_searches WHERE id = $1 AND user_id = $2 RETURNING id', { bind: [id, actor.id], transaction })) as [unknown[], unknown];
    if (!rows.length) throw notFound('Saved search');
    await audit(actor.id, 'analogue.search.delete', 'analogue_saved_search', id, null, transaction);
  });
}

// ---- search ---------------------------------------------------------------------------------------

const FACET_COLUMN: Record<Exclude<Facet, 'tags'>, string> = { setting: 'setting', factory: 'factory', climate: 'climate', class: 'class', period: 'period' };

class Binds {
  values: unknown[] = [];
  add(v: unknown): string {
    this.values.push(v);
    return `$${this.values.length}`;
  }
}

type Filter = AnalogueSearchQuery | Partial<AnalogueSearchQuery>;

/** SQL conditions for everything but the OR-facets (setting, factory, climate, class, period). */
function baseConditions(q: Filter, b: Binds): string[] {
  const w: string[] = [];
  const status = q.status ?? 'accepted';
  if (status !== 'any') w.push(`status = ${b.add(status)}`);
  if (q.source) w.push(`source = ${b.add(q.source)}`);
  if (q.q) w.push(`tsv @@ websearch_to_tsquery('english', ${b.add(q.q)})`);
  if (q.tags?.length) w.push(`tags @> ${b.add(normTags(q.tags))}::text[]`);
  for (const [f, r] of Object.entries(q.ranges ?? {}) as [RangeField, { min?: number; max?: number }][]) {
    const col = RANGE_COLUMN[f];
    if (r.min !== undefined) w.push(`${col} >= ${b.add(r.min)}`);
    if (r.max !== undefined) w.push(`${col} <= ${b.add(r.max)}`);
  }
  if (q.bbox) {
    const [west, south, east, north] = q.bbox;
    w.push(`latitude BETWEEN ${b.add(south)} AND ${b.add(north)}`);
    if (west <= east) w.push(`longitude BETWEEN ${b.add(west)} AND ${b.add(east)}`);
    else w.push(`(longitude >= ${b.add(west)} OR longitude <= ${b.add(east)})`); // across the antimeridian
  }
  if (q.near) {
    // great-circle distance (haversine, mean Earth radius 6371.0 km), after a latitude band that an index can use
    const { lat, lon, km } = q.near;
    const dLat = (km / 6371.0) * (180 / Math.PI);
    w.push(`latitude BETWEEN ${b.add(lat - dLat)} AND ${b.add(lat + dLat)}`);
    const la = b.add(lat);
    const lo = b.add(lon);
    w.push(
      `2 * 6371.0 * asin(sqrt(power(sin(radians(latitude - ${la}) / 2), 2) + cos(radians(${la})) * cos(radians(latitude)) * power(sin(radians(longitude - ${lo}) / 2), 2))) <= ${b.add(km)}`,
    );
  }
  return w;
}

function facetCondition(f: Exclude<Facet, 'tags'>, values: string[], b: Binds): string {
  return `${FACET_COLUMN[f]} = ANY(${b.add(values)}::text[])`;
}

const activeFacets = (q: Filter) => (['setting', 'factory', 'climate', 'class', 'period'] as const).filter((f) => (q[f]?.length ?? 0) > 0);

/** All conditions of a search (for lists, exports and Look-alikes candidates). */
export function whereOf(q: Filter, b: Binds): string {
  const w = baseConditions(q, b);
  for (const f of activeFacets(q)) w.push(facetCondition(f, q[f] as string[], b));
  return w.length ? w.join(' AND ') : 'true';
}

const SORT_SQL = (q: AnalogueSearchQuery, b: Binds): string => {
  const dir = q.dir === 'desc' ? 'DESC' : 'ASC';
  switch (q.sort) {
    case 'name':
      return `lower(name) ${dir}, id`;
    case 'updatedAt':
      return `updated_at ${dir}, id`;
    case 'ageMa':
      return `age_ma ${dir} NULLS LAST, id`;
    case 'relevance':
      return q.q ? `ts_rank(tsv, websearch_to_tsquery('english', ${b.add(q.q)})) DESC, id` : 'lower(name), id';
    default:
      return `${METRIC_COLUMN[q.sort as MetricKey]} ${dir} NULLS LAST, id`;
  }
};

/**
 * Facet counts, tag counts and the total in ONE statement (one scan of the
 * rows matching every non-facet filter). Each row carries one boolean per
 * active facet; rows matching every facet also fan out into their tags
 * (`unnest … WITH ORDINALITY`, so `o = 1` marks the first of a row's tags and
 * a row without fan-out has `o` NULL). One hash aggregate builds two grouping
 * sets:
 * - the five list facets' values with the active-facet flags (a few thousand
 *   groups at most), counting each row once; each facet's counts are then
 *   summed here over the groups that match every *other* facet, so a value's
 *   count is what the result would hold if it were added to that facet's
 *   selection, and the total is the sum over groups matching every facet;
 * - the free tags of the rows matching every filter (tags combine with AND:
 *   how many of the current results also carry the tag).
 * The list page is a separate LIMIT query (index order where one fits).
 */
const LIST_FACETS = ['setting', 'factory', 'climate', 'class', 'period'] as const;

export function facetCountsSql(q: Filter): { sql: string; bind: unknown[] } {
  const b = new Binds();
  const base = baseConditions(q, b);
  const active = activeFacets(q);
  const flags = active.map((f) => `(${facetCondition(f, q[f] as string[], b)}) AS ok_${f}`);
  const all = active.length ? active.map((f) => `a.ok_${f}`).join(' AND ') : 'true';
  const keys = [...LIST_FACETS.map((f) => `a.${FACET_COLUMN[f]}`), ...active.map((f) => `a.ok_${f}`)];
  const sql = `SELECT ${keys.join(', ')}, u.t AS tag, GROUPING(u.t) = 1 AS by_facets,
         count(*) FILTER (WHERE u.o IS NULL OR u.o = 1)::int AS n, count(u.t)::int AS n_tag
    FROM (SELECT ${LIST_FACETS.map((f) => FACET_COLUMN[f]).join(', ')}${flags.length ? ', ' + flags.join(', ') : ''}, tags
            FROM analogues WHERE ${base.length ? base.join(' AND ') : 'true'}) a
    LEFT JOIN LATERAL unnest(CASE WHEN ${all} THEN a.tags END) WITH ORDINALITY AS u(t, o) ON true
   GROUP BY GROUPING SETS ((${keys.join(', ')}), (u.t))`;
  return { sql, bind: b.values };
}

async function facetCounts(q: AnalogueSearchQuery): Promise<{ facets: Partial<Record<Facet, FacetCount[]>>; total: number }> {
  const active = activeFacets(q);
  const { sql, bind } = facetCountsSql(q);
  const all = await db().query<Row>(sql, { bind, type: QueryTypes.SELECT });
  const rows = all.filter((r) => r.by_facets);
  const facets: Partial<Record<Facet, FacetCount[]>> = {};
  const okBut = (r: Row, f: Facet | null) => active.every((a) => a === f || r[`ok_${a}`]);
  let total = 0;
  for (const f of LIST_FACETS) {
    const m = new Map<string, number>();
    for (const r of rows) {
      const v = r[FACET_COLUMN[f]];
      if (v != null && okBut(r, f)) m.set(v, (m.get(v) ?? 0) + r.n);
    }
    facets[f] = [...m].map(([value, count]) => ({ value, count }));
  }
  for (const r of rows) if (okBut(r, null)) total += r.n;
  facets.tags = all
    .filter((r) => !r.by_facets && r.tag != null && r.n_tag > 0)
    .map((r) => ({ value: r.tag as string, count: r.n_tag as number }))
    .sort((x, y) => y.count - x.count || x.value.localeCompare(y.value))
    .slice(0, 50);
  for (const f of FACETS) facets[f]!.sort((a, b) => b.count - a.count || a.value.localeCompare(b.value));
  return { facets, total };
}

const searchCache = new LRUCache<string, AnalogueSearchResponse>({ max: 500 });

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
}

async function generation(): Promise<string> {
  if (known && Date.now() - known.at < GENERATION_TTL_MS) return known.g;
  const at = Date.now();
  const [r] = await db().query<{ g: string }>('SELECT generation::text AS g FROM analogue_library_state WHERE id = 1', { type: QueryTypes.SELECT });
  known = { g: r?.g ?? '0', at };
  return known.g;
}

export async function search(_actor: Actor, q: AnalogueSearchQuery): Promise<AnalogueSearchResponse> {
  const key = `${await generation()}|${JSON.stringify(q)}`;
  const hit = searchCache.get(key);
  if (hit) return hit;
  const b = new Binds();
  const where = whereOf(q, b);
  const order = SORT_SQL(q, b);
  const list = db().query<Row>(`SELECT ${SUMMARY_COLUMNS} FROM analogues WHERE ${where} ORDER BY ${order} LIMIT ${q.pageSize} OFFSET ${(q.page - 1) * q.pageSize}`, {
    bind: b.values,
    type: QueryTypes.SELECT,
  });
  let facets: Partial<Record<Facet, FacetCount[]>> = {};
  let total: number;
  if (q.facets) {
    const [rows, fc] = await Promise.all([list, facetCounts(q)]);
    facets = fc.facets;
    total = fc.total;
    const out = { total, page: q.page, pageSize: q.pageSize, items: rows.map(toSummary), facets };
    searchCache.set(key, out);
    return out;
  }
  const cb = new Binds();
  const [rows, [{ n }]] = await Promise.all([list, db().query<{ n: number }>(`SELECT count(*)::int AS n FROM analogues WHERE ${whereOf(q, cb)}`, { bind: cb.values, type: QueryTypes.SELECT })]);
  total = n;
  const out = { total, page: q.page, pageSize: q.pageSize, items: rows.map(toSummary), facets };
  searchCache.set(key, out);
  return out;
}

/** Every row of a search (export), in the search's order, at most `limit`. */
export async function searchAll(q: AnalogueSearchQuery, limit = 200_000): Promise<Row[]> {
  const b = new Binds();
  const where = whereOf(q, b);
  const order = SORT_SQL(q, b);
  return db().query<Row>(`SELECT ${SUMMARY_COLUMNS} FROM analogues WHERE ${where} ORDER BY ${order} LIMIT ${limit}`, { bind: b.values, type: QueryTypes.SELECT });
}
export { toSummary };

// ---- Look-alikes ---------------------------------------------------------------------------------

type LookAlikesInput = z.output<typeof lookAlikesSchema>;

const sdCache = new LRUCache<string, number[]>({ max: 4 });
const countCache = new LRUCache<string, { compared: number; skipped: number }>({ max: 200 });

/** Population standard deviation of every metric (Look-alikes space) over the accepted library, cached per library generation. */
async function librarySds(): Promise<number[]> {
  const g = await generation();
  const hit = sdCache.get(g);
  if (hit) return hit;
  const [r] = await db().query<Row>(`SELECT ${METRIC_KEYS.map((_, i) => `stddev_pop(metric_vec[${i + 1}]) AS s${i}`).join(', ')} FROM analogues WHERE status = 'accepted'`, { type: QueryTypes.SELECT });
  const sds = METRIC_KEYS.map((_, i) => Number(r[`s${i}`] ?? 0));
  sdCache.set(g, sds);
  return sds;
}

/**
 * The k analogues most like a buildup or an analogue (analogues lacking what is compared are counted in `skipped`).
 *
 * - `metrics`: weighted Euclidean distance of z-scores,
 *   d = √( Σ wᵢ·((vᵢ − qᵢ)/σᵢ)² / Σ wᵢ ), with σᵢ the population standard
 *   deviation of the metric over the accepted library (log10 values for
 *   metrics that span decades, METRICS[].log); the means cancel in the
 *   differences. Analogues lacking a chosen metric are left out (`skipped`).
 * - `shape`: the L2 distance of the normalised profiles resampled at
 *   SHAPE_SAMPLES equally spaced x, divided by √N (shared/analogue-shape.ts).
 *
 * Metrics: one sequential scan in SQL over the precomputed `metric_vec`
 * array (no per-row JSON), top k by distance. Shape: nearest candidates on
 * the GiST index of the shapes' piecewise aggregate approximation (a lower
 * bound, the `cube` extension's `<->`), exact distances on those, and more
 * candidates until the bound proves the k found are the nearest.
 */
export async function lookAlikes(actor: Actor, v: LookAlikesInput): Promise<LookAlikesResponse> {
  let qMetrics: Metrics;
  let qShape: number[] | null;
  let qName: string;
  let selfId: number | null = null;
  if ('analogueId' in v.from) {
    const r = await rowById(v.from.analogueId);
    qMetrics = metricsOf(r);
    qShape = r.shape;
    qName = r.name;
    selfId = r.id;
  } else {
    const m = await measureForLibrary(actor, v.from.buildupId);
    qMetrics = metricsFromMeasurement(m.measurement);
    qShape = shapeOf(m.profile);
    qName = m.record.name;
  }
  const b = new Binds();
  const filter = { status: 'accepted' as const, ...(v.filter ?? {}) };
  const where = [whereOf(filter, b)];
  if (selfId != null) where.push(`id <> ${b.add(selfId)}`);
  let metricInfo: LookAlikesResponse['metrics'] = [];
  let method: string;
  let top: { id: number; d: number }[];
  const where_ = where.join(' AND ');
  let usable: string;
  if (v.mode === 'metrics') {
    // the default metrics drop those the query lacks (a one-cycle buildup has no trajectory); chosen ones must exist
    const chosen = (v.metrics ?? DEFAULT_LOOKALIKE_METRICS.filter((m) => metricSpaceValue(m.key, qMetrics[m.key]) != null)).filter((m) => m.weight > 0);
    if (!chosen.length) throw invalid(400, 'validation_failed', 'metrics', 'give at least one metric a weight above 0');
    const idx = (k: MetricKey) => METRIC_KEYS.indexOf(k) + 1;
    const sds = await librarySds();
    metricInfo = chosen.map((m) => ({ key: m.key, weight: m.weight, sd: sds[idx(m.key) - 1], log: METRICS.find((d) => d.key === m.key)!.log }));
    const missing = metricInfo.filter((m) => metricSpaceValue(m.key, qMetrics[m.key]) == null);
    if (missing.length)
      throw invalid(422, 'query_lacks_metric', 'metrics', `${qName} has no value for ${missing.map((m) => m.key).join(', ')}${missing.some((m) => m.log) ? ' (or it is not positive, needed for the log scale)' : ''}`);
    const live = metricInfo.filter((m) => m.sd > 0);
    const wsum = live.reduce((s, m) => s + m.weight, 0) || 1;
    // Σ (cᵢ·(vᵢ − qᵢ))² with cᵢ = √(wᵢ / Σw) / σᵢ; the square root is taken on the k rows kept
    const terms = live.map((m) => `power(${b.add(Math.sqrt(m.weight / wsum) / m.sd)} * (metric_vec[${idx(m.key)}] - ${b.add(metricSpaceValue(m.key, qMetrics[m.key]))}), 2)`);
    usable = metricInfo.map((m) => `metric_vec[${idx(m.key)}] IS NOT NULL`).join(' AND ');
    const sq = terms.length ? terms.join(' + ') : '0';
    const rows = await db().query<{ id: number; d2: number }>(`SELECT id, ${sq} AS d2 FROM analogues WHERE ${where_} AND ${usable} ORDER BY 2, id LIMIT ${v.k}`, { bind: b.values, type: QueryTypes.SELECT });
    top = rows.map((r) => ({ id: r.id, d: Math.sqrt(r.d2) }));
    method = `Weighted Euclidean distance of z-scores over the accepted library (standard deviations ${metricInfo.map((m) => `${m.key} ${m.sd.toPrecision(3)}${m.log ? ' in log10' : ''}`).join(', ')}).`;
  } else {
    if (!qShape) throw invalid(422, 'query_lacks_profile', 'from', `${qName} has no depth profile to compare`);
    usable = 'shape IS NOT NULL';
    // candidates nearest on the lower-bound index, exact distances on them; when the k-th exact distance
    // exceeds the largest bound among the candidates, ask for more candidates (at last: all of them)
    const qp = b.add(shapePaa(qShape));
    let m = Math.max(50, 5 * v.k);
    for (;;) {
      const cand = await db().query<{ id: number; shape: number[]; lb: number }>(
        `SELECT id, shape, cube(shape_paa) <-> cube(${qp}::float8[]) AS lb FROM analogues WHERE ${where_} AND ${usable} ORDER BY cube(shape_paa) <-> cube(${qp}::float8[]) LIMIT ${m}`,
        { bind: b.values, type: QueryTypes.SELECT },
      );
      const exact = cand.map((r) => ({ id: r.id, d: shapeDistance(qShape, r.shape) })).sort((x, y) => x.d - y.d || x.id - y.id);
      top = exact.slice(0, v.k);
      const bound = cand.length ? cand[cand.length - 1].lb / Math.sqrt(SHAPE_SAMPLES) : Infinity;
      if (cand.length < m || top.length < v.k || top[top.length - 1].d <= bound) break;
      m *= 4;
    }
    method = `L2 distance of depth profiles normalised to unit height and width and resampled at ${SHAPE_SAMPLES} equally spaced points, divided by √${SHAPE_SAMPLES} (root-mean-square height difference; 0 = same shape).`;
  }
  const cb = new Binds();
  const cw = [whereOf(filter, cb)];
  if (selfId != null) cw.push(`id <> ${cb.add(selfId)}`);
  const countSql = `SELECT count(*) FILTER (WHERE ${usable})::int AS compared, count(*) FILTER (WHERE NOT (${usable}))::int AS skipped FROM analogues WHERE ${cw.join(' AND ')}`;
  // the counts need a full scan: kept per library generation and statement
  const countKey = `${await generation()}|${countSql}|${JSON.stringify(cb.values)}`;
  let cnt = countCache.get(countKey);
  if (!cnt) {
    [cnt] = await db().query<{ compared: number; skipped: number }>(countSql, { bind: cb.values, type: QueryTypes.SELECT });
    countCache.set(countKey, cnt);
  }
  const ids = top.map((t) => t.id);
  const rows = ids.length ? await db().query<Row>(`SELECT ${SUMMARY_COLUMNS}, shape FROM analogues WHERE id = ANY($1::int[])`, { bind: [ids], type: QueryTypes.SELECT }) : [];
  const byId = new Map(rows.map((r) => [r.id, r]));
  const matches: LookAlikeMatch[] = top.map((t) => {
    const r = byId.get(t.id)!;
    const mm = metricsOf(r);
    return {
      analogue: toSummary(r),
      distance: t.d,
      shape: r.shape,
      differences:
        v.mode === 'metrics'
          ? metricInfo.map((m) => {
              const qv = qMetrics[m.key]!;
              const mv = mm[m.key]!;
              return { key: m.key, query: qv, match: mv, difference: mv - qv, zDifference: m.sd > 0 ? (metricSpaceValue(m.key, mv)! - metricSpaceValue(m.key, qv)!) / m.sd : 0 };
            })
          : [],
    };
  });
  const { compared, skipped } = cnt;
  return { mode: v.mode, query: { name: qName, metrics: qMetrics, shape: qShape }, metrics: metricInfo, compared, skipped, matches, method };
}

export type { EvolutionClass };
