/**
 * The project buildup register: every buildup of a project with its measured
 * figures, sorted, filtered and paged in SQL over the per-buildup summaries
 * (buildup_summaries, kept by summary-store.ts and the `buildup-summary`
 * job). Figures of a summary that no longer matches the buildup's version,
 * calibration or velocity model are not shown (status `pending`) and a
 * refresh is queued.
 *
 * Exports: CSV (papaparse, RFC 4180, header row with units, optional UTF-8
 * BOM) and GeoJSON (RFC 7946: one Point per buildup at its crest, placed
 * along the section's line between its start and end coordinates with turf;
 * buildups that cannot be placed are listed in the `skipped` foreign member).
 */
import Papa from 'papaparse';
import { lineString } from '@turf/helpers';
import lineLength from '@turf/length';
import along from '@turf/along';
import type { Feature, FeatureCollection, Point } from 'geojson';
import { QueryTypes } from 'sequelize';
import { ctx } from '../context';
import { projectForViewer, type Actor } from './project.service';
import { CURRENT_SUMMARY_SQL } from './summary-store';
import { sendSummaryJob } from '../jobs/summary-queue';
import { logger } from '../logger';
import { REGISTER_NUMERIC, REGISTER_NUMERIC_KEYS, type RegisterExportQuery, type RegisterPage, type RegisterQuery, type RegisterRow, type RegisterSort } from '../../shared/schemas/register';
import { REVIEW_STATE_LABELS, type ReviewState } from '../../shared/schemas/review';
import { toDisplay, withUnit, quantityLabel, type LengthUnit } from '../../shared/units';
import { lengthUnitOf } from './preferences.service';

/** Column of each numeric key in the register's SQL. */
const NUMERIC_SQL: Record<(typeof REGISTER_NUMERIC_KEYS)[number], string> = {
  heightM: 'height_m',
  baseWidthM: 'base_width_m',
  aspectRatio: 'aspect_ratio',
  trajectoryDeg: 'trajectory_deg',
  areaM2: 'area_m2',
  volumeP50M3: 'volume_p50_m3',
};

const SORT_SQL: Record<RegisterSort, string> = {
  section: 'lower(section)',
  name: 'lower(name)',
  classification: 'classification',
  heightM: 'height_m',
  baseWidthM: 'base_width_m',
  aspectRatio: 'aspect_ratio',
  trajectoryDeg: 'trajectory_deg',
  areaM2: 'area_m2',
  volumeP50M3: 'volume_p50_m3',
  // the order of the review workflow
  reviewState: `CASE review_state WHEN 'draft' THEN 0 WHEN 'out_for_review' THEN 1 WHEN 'needs_rework' THEN 2 WHEN 'signed_off' THEN 3 ELSE 4 END`,
  updatedAt: 'updated_at',
};

const FIGURES = ['classification', 'height_m', 'base_width_m', 'aspect_ratio', 'trajectory_deg', 'area_m2', 'volume_p50_m3', 'crest_fraction'];

/** Every buildup of the project with its figures when the summary is current (null otherwise). */
const BASE_SQL = `
  SELECT b.id, b.name, b.section_id, s.title AS section, s.line_name, b.version, b.review_state, b.updated_at,
         u.id AS updated_by_id, u.name AS updated_by_name,
         s.start_lon, s.start_lat, s.end_lon, s.end_lat,
         CASE WHEN cur.ok THEN sm.status ELSE 'pending' END AS status,
         CASE WHEN cur.ok THEN sm.problem END AS problem,
         ${FIGURES.map((f) => `CASE WHEN cur.ok AND sm.status = 'ok' THEN sm.${f} END AS ${f}`).join(',\n         ')}
    FROM buildups b
    JOIN sections s ON s.id = b.section_id
    LEFT JOIN buildup_summaries sm ON sm.buildup_id = b.id
    LEFT JOIN users u ON u.id = b.updated_by_id
    CROSS JOIN LATERAL (SELECT ${CURRENT_SUMMARY_SQL} AS ok) cur
   WHERE s.project_id = $projectId`;

interface SqlRow {
  id: number;
  name: string;
  section_id: number;
  section: string;
  line_name: string;
  version: number;
  review_state: ReviewState;
  updated_at: Date;
  updated_by_id: number | null;
  updated_by_name: string | null;
  start_lon: number | null;
  start_lat: number | null;
  end_lon: number | null;
  end_lat: number | null;
  status: RegisterRow['status'];
  problem: string | null;
  classification: RegisterRow['classification'];
  height_m: number | null;
  base_width_m: number | null;
  aspect_ratio: number | null;
  trajectory_deg: number | null;
  area_m2: number | null;
  volume_p50_m3: number | null;
  crest_fraction: number | null;
  total?: string;
}

/** `%`, `_` and `\` taken literally in ILIKE. */
const likeLiteral = (s: string) => `%${s.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

type Filters = Omit<RegisterQuery, 'page' | 'pageSize'> | RegisterExportQuery;

function whereOf(q: Filters, bind: Record<string, unknown>): string {
  const parts: string[] = [];
  if (q.q) {
    bind.q = likeLiteral(q.q);
    parts.push(`(name ILIKE $q OR section ILIKE $q OR line_name ILIKE $q)`);
  }
  if (q.classification?.length) {
    bind.classes = q.classification;
    parts.push(`classification = ANY($classes::text[])`);
  }
  if (q.reviewState?.length) {
    bind.states = q.reviewState;
    parts.push(`review_state = ANY($states::text[])`);
  }
  for (const k of REGISTER_NUMERIC_KEYS) {
    const lo = q[`${k}Min`];
    const hi = q[`${k}Max`];
    if (lo !== undefined) {
      bind[`${k}Min`] = lo;
      parts.push(`${NUMERIC_SQL[k]} >= $${k}Min::double precision`);
    }
    if (hi !== undefined) {
      bind[`${k}Max`] = hi;
      parts.push(`${NUMERIC_SQL[k]} <= $${k}Max::double precision`);
    }
  }
  return parts.length ? `WHERE ${parts.join(' AND ')}` : '';
}

const orderOf = (q: Filters) => `ORDER BY ${SORT_SQL[q.sort]} ${q.dir === 'asc' ? 'ASC' : 'DESC'} NULLS LAST, id ASC`;

function toRow(r: SqlRow): RegisterRow {
  return {
    id: r.id,
    name: r.name,
    sectionId: r.section_id,
    section: r.section,
    lineName: r.line_name,
    version: r.version,
    reviewState: r.review_state,
    updatedAt: new Date(r.updated_at).toISOString(),
    updatedBy: r.updated_by_id ? { id: r.updated_by_id, name: r.updated_by_name ?? '' } : null,
    status: r.status,
    problem: r.problem,
    classification: r.classification,
    heightM: r.height_m,
    baseWidthM: r.base_width_m,
    aspectRatio: r.aspect_ratio,
    trajectoryDeg: r.trajectory_deg,
    areaM2: r.area_m2,
    volumeP50M3: r.volume_p50_m3,
  };
}

async function selectRows(projectId: number, q: Filters, page?: { limit: number; offset: number }): Promise<SqlRow[]> {
  const bind: Record<string, unknown> = { projectId };
  const where = whereOf(q, bind);
  let limit = '';
  if (page) {
    bind.limit = page.limit;
    bind.offset = page.offset;
    limit = 'LIMIT $limit OFFSET $offset';
  }
  return ctx().sequelize.query<SqlRow>(`WITH r AS (${BASE_SQL}) SELECT r.*, count(*) OVER () AS total FROM r ${where} ${orderOf(q)} ${limit}`, {
    bind,
    type: QueryTypes.SELECT,
  });
}

/** Queue a refresh of every buildup of the project whose summary is missing or stale; returns how many there are. */
async function refreshStale(projectId: number): Promise<number> {
  const stale = await ctx().sequelize.query<{ id: number }>(`WITH r AS (${BASE_SQL}) SELECT id FROM r WHERE status = 'pending' ORDER BY id`, {
    bind: { projectId },
    type: QueryTypes.SELECT,
  });
  for (const { id } of stale.slice(0, 500)) {
    await sendSummaryJob(id).catch((err) => logger.warn({ err, buildupId: id }, 'could not queue a register summary'));
  }
  return stale.length;
}

export async function listRegister(actor: Actor, projectId: number, q: RegisterQuery): Promise<RegisterPage> {
  await projectForViewer(actor, projectId);
  const pending = await refreshStale(projectId);
  let rows = await selectRows(projectId, q, { limit: q.pageSize, offset: (q.page - 1) * q.pageSize });
  let total = rows.length ? Number(rows[0].total) : 0;
  if (!rows.length && q.page > 1) {
    // past the last page: the count still tells the client where the rows are
    const all = await selectRows(projectId, q, { limit: 1, offset: 0 });
    total = all.length ? Number(all[0].total) : 0;
    rows = [];
  }
  return { items: rows.map(toRow), total, page: q.page, pageSize: q.pageSize, pending };
}

// ---------------------------------------------------------------------------
// exports

export interface ExportFile {
  fileName: string;
  contentType: string;
  body: string;
}

function slug(s: string): string {
  const out = s
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60);
  return out || 'project';
}

/** The register's numbers in the chosen unit (null stays null). */
function displayed(r: SqlRow, unit: LengthUnit) {
  const out: Record<string, number | null> = {};
  for (const k of REGISTER_NUMERIC_KEYS) {
    const v = r[NUMERIC_SQL[k] as keyof SqlRow] as number | null;
    out[k] = v === null || v === undefined ? null : toDisplay(REGISTER_NUMERIC[k].quantity, v, unit);
  }
  return out;
}

/** Header of each CSV column, with its unit. */
export function csvHeaders(unit: LengthUnit): string[] {
  return [
    'Buildup id',
    'Section',
    'Line',
    'Buildup',
    'Class',
    ...REGISTER_NUMERIC_KEYS.map((k) => withUnit(REGISTER_NUMERIC[k].title, REGISTER_NUMERIC[k].quantity, unit)),
    'Review state',
    'Last edit (UTC)',
    'Figures',
  ];
}

export async function exportRegisterCsv(actor: Actor, projectId: number, q: RegisterExportQuery): Promise<ExportFile> {
  const project = await projectForViewer(actor, projectId);
  const unit = q.unit ?? (await lengthUnitOf(actor.id));
  const rows = await selectRows(projectId, q);
  const data = rows.map((r) => {
    const n = displayed(r, unit);
    return [
      r.id,
      r.section,
      r.line_name,
      r.name,
      r.classification ?? '',
      ...REGISTER_NUMERIC_KEYS.map((k) => n[k] ?? ''),
      REVIEW_STATE_LABELS[r.review_state] ?? r.review_state,
      new Date(r.updated_at).toISOString(),
      r.status === 'ok' ? 'current' : r.problem ? `${r.status}: ${r.problem}` : r.status,
    ];
  });
  // RFC 4180: CRLF line ends, fields with commas, quotes or line breaks quoted; cells that a spreadsheet
  // would run as a formula (= + - @ at the start of text) are prefixed with ' (common practice)
  const csv = Papa.unparse({ fields: csvHeaders(unit), data }, { newline: '\r\n', escapeFormulae: true });
  return {
    fileName: `${slug(project.name)}-buildups-${unit}.csv`,
    contentType: 'text/csv; charset=utf-8; header=present',
    body: (q.bom ? '\uFEFF' : '') + csv + '\r\n',
  };
}

/** Property name of a numeric column in GeoJSON: snake case with its unit (`height_ft`, `area_m2`). */
export function geoPropertyName(key: (typeof REGISTER_NUMERIC_KEYS)[number], unit: LengthUnit): string {
  const base = { heightM: 'height', baseWidthM: 'base_width', aspectRatio: 'aspect_ratio', trajectoryDeg: 'net_trajectory', areaM2: 'area', volumeP50M3: 'volume_p50' }[key];
  const q = REGISTER_NUMERIC[key].quantity;
  const suffix = q === 'ratio' ? '' : q === 'angle' ? '_deg' : `_${quantityLabel(q, unit).replace('²', '2').replace('³', '3')}`;
  return base + suffix;
}

export interface SkippedBuildup {
  id: number;
  name: string;
  section: string;
  reason: string;
}

const round7 = (v: number) => Math.round(v * 1e7) / 1e7;

export async function exportRegisterGeoJson(actor: Actor, projectId: number, q: RegisterExportQuery): Promise<ExportFile> {
  const project = await projectForViewer(actor, projectId);
  const unit = q.unit ?? (await lengthUnitOf(actor.id));
  const rows = await selectRows(projectId, q);
  const features: Feature<Point>[] = [];
  const skipped: SkippedBuildup[] = [];
  for (const r of rows) {
    const skip = (reason: string) => skipped.push({ id: r.id, name: r.name, section: r.section, reason });
    if (r.start_lon === null || r.start_lat === null || r.end_lon === null || r.end_lat === null) {
      skip(`section "${r.section}" has no line geography (start and end coordinates); add them to the section to place its buildups`);
      continue;
    }
    if (r.status !== 'ok' || r.crest_fraction === null) {
      skip(r.status === 'pending' ? 'its figures are being computed; export again in a moment' : `not measured: ${r.problem ?? r.status}`);
      continue;
    }
    if (r.crest_fraction < -0.01 || r.crest_fraction > 1.01) {
      skip('its crest lies outside the section image, so it cannot be placed along the line');
      continue;
    }
    const line = lineString([
      [r.start_lon, r.start_lat],
      [r.end_lon, r.end_lat],
    ]);
    const km = lineLength(line, { units: 'kilometers' });
    const f = Math.min(1, Math.max(0, r.crest_fraction));
    const pt = along(line, f * km, { units: 'kilometers' });
    const [lon, lat] = pt.geometry.coordinates;
    const n = displayed(r, unit);
    features.push({
      type: 'Feature',
      id: r.id,
      geometry: { type: 'Point', coordinates: [round7(lon), round7(lat)] },
      properties: {
        buildup_id: r.id,
        name: r.name,
        section: r.section,
        line: r.line_name,
        class: r.classification,
        ...Object.fromEntries(REGISTER_NUMERIC_KEYS.map((k) => [geoPropertyName(k, unit), n[k]])),
        review_state: r.review_state,
        last_edit: new Date(r.updated_at).toISOString(),
        length_unit: unit,
        position_along_line: f,
      },
    });
  }
  const collection: FeatureCollection<Point> & { skipped: SkippedBuildup[]; lengthUnit: LengthUnit } = {
    type: 'FeatureCollection',
    features,
    // foreign members (RFC 7946 §6.1): buildups that could not be placed, and the unit of the properties
    lengthUnit: unit,
    skipped,
  };
  return {
    fileName: `${slug(project.name)}-buildups-${unit}.geojson`,
    contentType: 'application/geo+json; charset=utf-8',
    body: JSON.stringify(collection),
  };
}
