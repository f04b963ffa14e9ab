/** Look-alikes: the library's analogues nearest to a buildup or entry in metric space, or by shape. */
import { QueryTypes } from 'sequelize';
import { LRUCache } from 'lru-cache';
import {
  metricsFromMeasurement,
  metricSpaceValue,
  shapeOf,
  shapePaa,
  shapeDistance,
} from '../../shared/analogue-shape';
import {
  DEFAULT_LOOKALIKE_METRICS,
  METRICS,
  METRIC_KEYS,
  SHAPE_SAMPLES,
  type LookAlikeMatch,
  type LookAlikesResponse,
  type MetricKey,
  type Metrics,
  lookAlikesSchema,
} from '../../shared/schemas/analogues';
import type { z } from 'zod';
import {
  type Actor,
  SUMMARY_COLUMNS,
  type Row,
  metricsOf,
  toSummary,
  rowById,
  invalid,
  generation,
  db,
} from './analogue-rows';
import { whereOf, Binds } from './analogue-search.service';
import { measureForLibrary } from './analogue-records.service';

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
