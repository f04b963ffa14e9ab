/**
 * Analogue records: entry by hand, promotion from a measured buildup (its
 * figures and Monte Carlo ranges measured off the event loop), curator
 * decisions, edits, deletion, the promoted crop, and the row builders the
 * CSV import and the demo seeder share.
 */
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { AppError, notFound, forbidden } from '../errors';
import { audit } from './audit.service';
import { getBuildup, measureContext } from './buildup.service';
import { Section } from '../models/section';
import { randomName } from '../storage/fileStore';
import { measureWithProfilesOffLoop } from '../measure/pool';
import { fromGeometry, toInterpretationInput, ModelError } from '../../shared/editor/model';
import { MeasureInputError, OUTPUT_FORMAT } from '../../shared/measure/index';
import { metricsFromMeasurement, metricVector, shapeOf, shapePaa } from '../../shared/analogue-shape';
import { icsPlacement, icsUnit, ICS_EDITION } from '../../shared/ics-chart';
import { cropBuildup } from './analogue-crop';
import {
  LIST_NAMES,
  METRIC_KEYS,
  type AnalogueDetail,
  type AnalogueUpdateInput,
  type Citation,
  type DepthProfile,
  type HandEntryInput,
  type ListName,
  type MetricKey,
  type Metrics,
  type PercentileRange,
  type PromoteInput,
  type PromotionSnapshot,
} from '../../shared/schemas/analogues';
import {
  type Actor,
  write,
  isCurator,
  METRIC_COLUMN,
  metricsOf,
  toDetail,
  rowById,
  getAnalogue,
  invalid,
  db,
  store,
  normTags,
} from './analogue-rows';
import { readLists } from './analogue-lists.service';

// ---- writing -----------------------------------------------------------------------------------


/**
 * Refuse list values that are not in the controlled lists (422 unknown_tag naming the field). Within a write `transaction` the values used are
 * held (FOR SHARE) until it ends, so a curator removing one of them at the same moment waits and then
 * finds it in use (analogue-lists.service.ts locks the value FOR UPDATE before counting its uses).
 */
async function checkLists(v: { setting?: string | null; factory?: string | null; climate?: string | null }, transaction?: Transaction) {
  const lists = await readLists(transaction);
  const unknown = (l: ListName, value: string) => invalid(422, 'unknown_tag', l, `"${value}" is not in the ${l} list (${lists[l].map((i) => i.value).join(', ')})`);
  for (const l of LIST_NAMES) {
    const value = v[l];
    if (value == null) continue;
    if (!lists[l].some((i) => i.value === value)) throw unknown(l, value);
    if (!transaction) continue;
    const held = await db().query('SELECT 1 FROM analogue_lists WHERE list = $1 AND value = $2 FOR SHARE', { bind: [l, value], type: QueryTypes.SELECT, transaction });
    if (!held.length) throw unknown(l, value); // removed by a curator meanwhile
  }
}

function checkIcs(unit: string | null | undefined) {
  if (unit && !icsUnit(unit)) throw invalid(422, 'unknown_ics_unit', 'icsUnit', `"${unit}" is not a unit of the ${ICS_EDITION}`);
}


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
export async function measureForLibrary(actor: Actor, buildupId: number) {
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
