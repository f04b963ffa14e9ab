/**
 * Analogue search and facet counts in PostgreSQL. Answers are cached in this
 * process by query and library generation (`analogue_library_state.generation`,
 * bumped by a trigger on every statement that changes analogues or the lists),
 * so a repeated search costs one single-row read; any change anywhere makes
 * every cached answer stale.
 */
import crypto from 'node:crypto';
import { QueryTypes, Transaction } from 'sequelize';
import {
  FACETS,
  type AnalogueSearchQuery,
  type AnalogueSearchResponse,
  type Facet,
  type FacetCount,
  type MetricKey,
  type RangeField,
} from '../../shared/schemas/analogues';
import {
  type Actor,
  METRIC_COLUMN,
  RANGE_COLUMN,
  SUMMARY_COLUMNS,
  type Row,
  toSummary,
  searchCache,
  facetCache,
  pageEnds,
  type PageEnd,
  type FacetTotals,
  generation,
  db,
  normTags,
} from './analogue-rows';

// ---- search ---------------------------------------------------------------------------------------

const FACET_COLUMN: Record<Exclude<Facet, 'tags'>, string> = { setting: 'setting', factory: 'factory', climate: 'climate', class: 'class', period: 'period' };

export class Binds {
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

/** A search's sort key: SQL, type, direction, and whether NULLs sort last; null when pages cannot seek (relevance ranking). */
interface SortKey {
  expr: string;
  type: 'text' | 'timestamptz' | 'float8';
  desc: boolean;
  nullable: boolean;
}
function sortKeyOf(q: AnalogueSearchQuery): SortKey | null {
  const desc = q.dir === 'desc';
  switch (q.sort) {
    case 'name':
      return { expr: 'lower(name)', type: 'text', desc, nullable: false };
    case 'updatedAt':
      return { expr: 'updated_at', type: 'timestamptz', desc, nullable: false };
    case 'ageMa':
      return { expr: 'age_ma', type: 'float8', desc, nullable: true };
    case 'relevance':
      return q.q ? null : { expr: 'lower(name)', type: 'text', desc: false, nullable: false };
    default:
      return { expr: METRIC_COLUMN[q.sort as MetricKey], type: 'float8', desc, nullable: true };
  }
}

/** Pages served by seeking from a known page end (`adjacent`: from the page just before), and by OFFSET from the start (tests, benchmarks). */
export const listPageStats = { seeks: 0, adjacent: 0, offsets: 0 };

/** Most pages looked back for a known page end before skipping from the start. */
const SEEK_LOOKBACK = 500;
/** Most page ends kept per search. */
const PAGE_ENDS_MAX = 2_000;

/**
 * One page of a search's rows. Page 1, a search ranked by relevance, or a page
 * with no known page end in the `SEEK_LOOKBACK` pages before it: `LIMIT …
 * OFFSET …`. Otherwise it seeks: rows after the nearest earlier page's end in
 * the sort order — (key, id) after (k, i): key beyond k, or key = k and id
 * greater; NULL keys last, then by id — with an index-usable bound on the key,
 * and skips only the pages between. The end of every full page is kept, so
 * paging forward costs about one page's rows each time. The first row count
 * on the NULL boundary that cannot be told apart is left to OFFSET. A page
 * asked for while the page before it is still being read waits for that
 * read, then seeks from its end.
 */
async function listPage(q: AnalogueSearchQuery, where: string, b: Binds, endsKey: string): Promise<Row[]> {
  const sk = sortKeyOf(q);
  if (!sk) return listPageNow(q, where, b, endsKey, null);
  // a page whose predecessor is being read right now waits for that page's end (pages asked for in quick
  // succession: each then seeks from the one before instead of all skipping from an older end)
  const flight = (page: number) => `${endsKey}#${page}`;
  let finish!: () => void;
  const mine = new Promise<void>((resolve) => (finish = resolve));
  pagesInFlight.set(flight(q.page), mine);
  try {
    const before = q.page > 1 && !pageEnds.get(endsKey)?.has(q.page - 1) ? pagesInFlight.get(flight(q.page - 1)) : undefined;
    if (before) await before; // resolves when that read ends, whether it succeeded or not
    return await listPageNow(q, where, b, endsKey, sk);
  } finally {
    if (pagesInFlight.get(flight(q.page)) === mine) pagesInFlight.delete(flight(q.page));
    finish();
  }
}

/** Pages being read now, by search and page number (`listPage`). */
const pagesInFlight = new Map<string, Promise<void>>();

async function listPageNow(q: AnalogueSearchQuery, where: string, b: Binds, endsKey: string, sk: SortKey | null): Promise<Row[]> {
  const order = SORT_SQL(q, b);
  const keyCol = sk ? `, (${sk.expr})::text AS sort_key` : '';
  const run = (extra: string, bind: unknown[], orderBy: string, offset: number) =>
    db().query<Row>(`SELECT ${SUMMARY_COLUMNS}${keyCol} FROM analogues WHERE ${where}${extra} ORDER BY ${orderBy} LIMIT ${q.pageSize} OFFSET ${offset}`, {
      bind,
      type: QueryTypes.SELECT,
    });
  const ends = sk ? pageEnds.get(endsKey) : undefined;
  let from: { page: number; end: PageEnd } | null = null;
  for (let p = q.page - 1; ends && p >= Math.max(1, q.page - SEEK_LOOKBACK); p--) {
    const end = ends.get(p);
    if (end) {
      from = { page: p, end };
      break;
    }
  }
  let rows: Row[] | null = null;
  if (sk && from) {
    const skip = (q.page - 1 - from.page) * q.pageSize;
    const s = new Binds();
    s.values = [...b.values];
    const id = s.add(from.end.id);
    if (from.end.key === null) {
      rows = await run(` AND ${sk.expr} IS NULL AND id > ${id}`, s.values, 'id', skip);
    } else {
      const k = `${s.add(from.end.key)}::${sk.type}`;
      const seek = ` AND ${sk.expr} ${sk.desc ? '<=' : '>='} ${k} AND (${sk.expr} ${sk.desc ? '<' : '>'} ${k} OR id > ${id})`;
      rows = await run(seek, s.values, order, skip);
      // the page runs on into the NULL keys: how many non-NULL rows were skipped is not known here
      if (sk.nullable && rows.length < q.pageSize) rows = null;
    }
    if (rows) {
      listPageStats.seeks++;
      if (from.page === q.page - 1) listPageStats.adjacent++;
    }
  }
  if (!rows) {
    listPageStats.offsets++;
    rows = await run('', b.values, order, (q.page - 1) * q.pageSize);
  }
  if (sk && rows.length === q.pageSize) {
    let m = pageEnds.get(endsKey);
    if (!m) pageEnds.set(endsKey, (m = new Map()));
    if (m.size < PAGE_ENDS_MAX) {
      const last = rows[rows.length - 1];
      m.set(q.page, { key: (last.sort_key as string | null) ?? null, id: last.id as number });
    }
  }
  return rows;
}

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

async function facetCounts(q: AnalogueSearchQuery): Promise<FacetTotals> {
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

/**
 * A search's answer as the UTF-8 bytes of the JSON the route sends, with its
 * entity tag (both kept in the cache, so a repeated search is not serialised,
 * encoded or hashed again).
 */
export interface SearchBody {
  json: Buffer;
  etag: string;
}

function body(out: AnalogueSearchResponse): SearchBody {
  const json = Buffer.from(JSON.stringify(out), 'utf8');
  return { json, etag: `W/"${crypto.createHash('sha1').update(json).digest('base64url')}"` };
}

/** Facet counts in flight, by the facet cache's key: requests that ask for the same counts at once share one statement. */
const counting = new Map<string, Promise<FacetTotals>>();

function countedOnce(key: string, count: () => Promise<FacetTotals>) {
  const cached = facetCache.get(key);
  if (cached) return Promise.resolve(cached);
  let p = counting.get(key);
  if (!p) {
    p = count().then(
      (fc) => {
        counting.delete(key);
        facetCache.set(key, fc);
        return fc;
      },
      (e: unknown) => {
        counting.delete(key);
        throw e;
      },
    );
    counting.set(key, p);
  }
  return p;
}

export async function searchBody(_actor: Actor, q: AnalogueSearchQuery): Promise<SearchBody> {
  const key = `${await generation()}|${JSON.stringify(q)}`;
  const hit = searchCache.get(key);
  if (hit) return hit;
  const b = new Binds();
  const where = whereOf(q, b);
  const list = listPage(q, where, b, `${key.slice(0, key.indexOf('|'))}|${JSON.stringify({ ...q, page: 0 })}`);
  let out: AnalogueSearchResponse;
  if (q.facets) {
    const { sort: _s, dir: _d, page: _p, pageSize: _z, ...filters } = q;
    const fkey = `${key.slice(0, key.indexOf('|'))}|${JSON.stringify(filters)}`;
    const [rows, fc] = await Promise.all([list, countedOnce(fkey, () => facetCounts(q))]);
    out = { total: fc.total, page: q.page, pageSize: q.pageSize, items: rows.map(toSummary), facets: fc.facets };
  } else {
    const cb = new Binds();
    const [rows, [{ n }]] = await Promise.all([list, db().query<{ n: number }>(`SELECT count(*)::int AS n FROM analogues WHERE ${whereOf(q, cb)}`, { bind: cb.values, type: QueryTypes.SELECT })]);
    out = { total: n, page: q.page, pageSize: q.pageSize, items: rows.map(toSummary), facets: {} };
  }
  const made = body(out);
  searchCache.set(key, made);
  return made;
}

/** Seconds an export may wait for its reader between two pages before its database session is ended. */
export const EXPORT_STALL_SECONDS = 60;

/**
 * Every row of a search (exports), in the search's order, at most `limit`, in
 * pages of `pageRows` read through a server-side cursor in one read-only,
 * repeatable-read transaction (one consistent snapshot, bounded memory and
 * work per page). Stopping the loop early closes the cursor.
 */
export async function* searchPages(q: AnalogueSearchQuery, pageRows = 2000, limit = 200_000, stallSeconds = EXPORT_STALL_SECONDS): AsyncGenerator<Row[]> {
  const b = new Binds();
  const where = whereOf(q, b);
  const order = SORT_SQL(q, b);
  const transaction = await db().transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.REPEATABLE_READ, readOnly: true });
  try {
    // a reader that stops reading must not hold a database connection: PostgreSQL ends the session
    // when the transaction waits longer than this between pages, and the export fails
    await db().query(`SET LOCAL idle_in_transaction_session_timeout = '${Math.max(1, Math.round(stallSeconds))}s'`, { transaction });
    await db().query(`DECLARE analogue_export NO SCROLL CURSOR FOR SELECT ${SUMMARY_COLUMNS} FROM analogues WHERE ${where} ORDER BY ${order} LIMIT ${limit}`, {
      bind: b.values,
      transaction,
    });
    for (;;) {
      const rows = await db().query<Row>(`FETCH ${Math.max(1, Math.floor(pageRows))} FROM analogue_export`, { type: QueryTypes.SELECT, transaction });
      if (!rows.length) break;
      yield rows;
    }
  } finally {
    // read only: nothing to keep; closes the cursor (fails when the server has ended a stalled session)
    await transaction.rollback().catch(() => {});
  }
}
