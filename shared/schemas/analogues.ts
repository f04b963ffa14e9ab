// Over 500 lines: every schema and response shape of the Analogue library (records, lists, search, Look-alikes, import, export) in one file, so the server and the client forms read one contract.
/**
 * Analogue library: records, search, Look-alikes, import/export (issue #9).
 *
 * Routes (all need sign-in; "C" = curator or admin only; others: every signed-in user):
 *
 *   GET    /api/analogues                      query AnalogueSearchQuery (URL form, see searchQueryFromUrl)  → AnalogueSearchResponse
 *   GET    /api/analogues/export.csv           query AnalogueSearchQuery (page/pageSize ignored)         → text/csv (columns EXPORT_COLUMNS)
 *   GET    /api/analogues/export.geojson       query AnalogueSearchQuery                                 → AnalogueGeoJson (FeatureCollection of Points)
 *   GET    /api/analogues/ics-chart            → IcsChartResponse (edition + periods/epochs/stages with base ages in Ma)
 *   GET    /api/analogues/lists                → ControlledLists
 *   POST   /api/analogues/lists/:list      C   body ListItemInput → 201 ListItem   (:list = setting | factory | climate)
 *   DELETE /api/analogues/lists/:list/:value C → 204; 409 list_value_in_use when an analogue uses it
 *   GET    /api/analogues/saved-searches       → SavedSearch[] (the asker's own)
 *   POST   /api/analogues/saved-searches       body SavedSearchInput → 201 SavedSearch
 *   DELETE /api/analogues/saved-searches/:id   → 204 (own only; others' answer 404)
 *   POST   /api/analogues/look-alikes          body LookAlikesRequest → LookAlikesResponse
 *   POST   /api/analogues/import/preview   C   multipart: file (CSV, ≤ IMPORT_MAX_BYTES), mapping? (JSON text of ImportMapping)
 *                                              → ImportPreview (headers, suggested mapping, validation report); nothing stored
 *   POST   /api/analogues/import           C   multipart: file, mapping (JSON text), mode ('all' | 'goodRowsOnly')
 *                                              → 201 ImportResult; 422 import_has_errors {details: ImportReport} when mode 'all' and any row is bad
 *                                              413 file_too_large over IMPORT_MAX_BYTES; 422 not_csv for a file that is not CSV text
 *   POST   /api/analogues                  C   body HandEntryInput → 201 AnalogueDetail
 *   GET    /api/analogues/:id                  → AnalogueDetail (pending/declined ones too; `liveChanged` when the source buildup moved on)
 *   GET    /api/analogues/:id/crop             → image/jpeg (crop of the marked-up section; 404 when none)
 *   PATCH  /api/analogues/:id              C   body AnalogueUpdateInput (with `version`; 409 version_conflict) → AnalogueDetail
 *   DELETE /api/analogues/:id              C   → 204
 *   POST   /api/analogues/:id/accept       C   → AnalogueDetail (pending → accepted)
 *   POST   /api/analogues/:id/decline      C   body DeclineInput → AnalogueDetail (pending → declined)
 *   POST   /api/buildups/:id/promote           body PromoteInput → 201 AnalogueDetail. Curators/admins: status 'accepted';
 *                                              interpreters (project members): status 'pending' (a request a curator accepts or declines);
 *                                              reviewers: 403. The buildup must be visible to the asker (404 otherwise).
 *
 * Search shows accepted analogues unless `status` says otherwise. Errors: `{ code, message, details }`.
 */
import { z } from 'zod';
import { NAME_MAX } from './limits';
import { safeText } from './text';

// ---------------------------------------------------------------------------
// Vocabulary

/** Numeric metrics an analogue may carry (all in depth-domain SI units unless the name says otherwise). */
export const METRICS = [
  { key: 'heightM', label: 'Height', unit: 'm', log: true },
  { key: 'baseWidthM', label: 'Base width', unit: 'm', log: true },
  { key: 'aspectRatio', label: 'Aspect ratio (height / base width)', unit: '', log: true },
  { key: 'areaM2', label: 'Cross-section area', unit: 'm²', log: true },
  { key: 'volumeM3', label: 'Volume (estimate)', unit: 'm³', log: true },
  { key: 'topWidthM', label: 'Youngest top width', unit: 'm', log: true },
  { key: 'trajectoryDeg', label: 'Net trajectory', unit: '°', log: false },
  { key: 'netBackstepM', label: 'Net backstep', unit: 'm', log: false },
  { key: 'netAggradationM', label: 'Net aggradation', unit: 'm', log: false },
  { key: 'flankAngleDeg', label: 'Mean flank angle', unit: '°', log: false },
  { key: 'flankMaxDeg', label: 'Steepest flank', unit: '°', log: false },
  { key: 'cycleCount', label: 'Cycles', unit: '', log: false },
] as const;
export type MetricKey = (typeof METRICS)[number]['key'];
export const METRIC_KEYS = METRICS.map((m) => m.key) as unknown as readonly [MetricKey, ...MetricKey[]];
export const metricKeySchema = z.enum(METRIC_KEYS);

/** Other numeric fields that take range filters besides the metrics. */
export const RANGE_FIELDS = [...METRIC_KEYS, 'ageMa', 'latitude', 'longitude', 'year'] as const;
export type RangeField = (typeof RANGE_FIELDS)[number];
export const rangeFieldSchema = z.enum(RANGE_FIELDS as unknown as [RangeField, ...RangeField[]]);

/** Evolution classes of the engine (measurement-spec §6). */
export const EVOLUTION_CLASSES = ['prograding', 'aggrading', 'backstepping', 'downstepping', 'drowned'] as const;
export type EvolutionClass = (typeof EVOLUTION_CLASSES)[number];
export const evolutionClassSchema = z.enum(EVOLUTION_CLASSES);

export const ANALOGUE_STATUSES = ['pending', 'accepted', 'declined'] as const;
export type AnalogueStatus = (typeof ANALOGUE_STATUSES)[number];

export const ANALOGUE_SOURCES = ['promoted', 'hand', 'import'] as const;
export type AnalogueSource = (typeof ANALOGUE_SOURCES)[number];

/** How hand-entered numbers were measured. */
export const MEASUREMENT_BASES = ['depth', 'time', 'figure'] as const;
export type MeasurementBasis = (typeof MEASUREMENT_BASES)[number];

/** Controlled lists curators manage (values are slugs; labels are shown). */
export const LIST_NAMES = ['setting', 'factory', 'climate'] as const;
export type ListName = (typeof LIST_NAMES)[number];
export const listNameSchema = z.enum(LIST_NAMES);

/** Facets of the search page, in display order. `class` is the effective class (curator override, else the engine's). */
export const FACETS = ['setting', 'factory', 'climate', 'class', 'period', 'tags'] as const;
export type Facet = (typeof FACETS)[number];

export const SORT_FIELDS = ['name', 'updatedAt', 'ageMa', 'relevance', ...METRIC_KEYS] as const;
export type SortField = (typeof SORT_FIELDS)[number];

/** Shape profiles are resampled at this many equally spaced x (0 … 1) for the shape distance. */
export const SHAPE_SAMPLES = 64;

/** Largest CSV accepted by the import (bigger uploads answer 413 file_too_large). */
export const IMPORT_MAX_BYTES = 10 * 1024 * 1024;
export const IMPORT_MAX_ROWS = 20_000;

// ---------------------------------------------------------------------------
// Pieces

const slug = safeText()
  .trim()
  .min(1, 'is required')
  .max(40, 'must be at most 40 characters')
  .regex(/^[a-z0-9][a-z0-9-]*$/, 'must be lower-case letters, digits and hyphens');
const label = safeText().trim().min(1, 'is required').max(80, 'must be at most 80 characters');
const nameText = safeText().trim().min(1, 'is required').max(160, 'must be at most 160 characters');
const notesText = safeText({ multiline: true }).max(10_000, 'must be at most 10000 characters');
const freeTag = safeText()
  .trim()
  .toLowerCase()
  .min(1, 'must not be empty')
  .max(40, 'must be at most 40 characters');
const finite = z.number().finite();

export const citationSchema = z.object({
  authors: safeText().trim().min(1, 'is required').max(400),
  year: z.number().int().min(1800, 'must be 1800 or later').max(2100, 'must be 2100 or earlier'),
  title: safeText().trim().min(1, 'is required').max(400),
  container: safeText().trim().max(300).optional().nullable(), // journal or book
  doi: safeText()
    .trim()
    .max(200)
    .regex(/^10\.\d{4,9}\/\S+$/, 'must look like 10.xxxx/suffix')
    .optional()
    .nullable(),
});
export type Citation = z.infer<typeof citationSchema>;

/** A point of a depth profile: [x metres along the section, z metres depth (down)]. */
export const depthPointSchema = z.tuple([finite, finite]);
export type DepthPoint = [number, number];

/** The profile kept with an analogue, in depth metres: base, each cycle's top (oldest first) and the upper envelope. */
export const depthProfileSchema = z.object({
  base: z.array(depthPointSchema).min(2, 'needs at least 2 points').max(5000),
  tops: z.array(z.array(depthPointSchema).min(2).max(5000)).max(60).default([]),
  envelope: z.array(depthPointSchema).min(2, 'needs at least 2 points').max(5000),
});
export type DepthProfile = z.infer<typeof depthProfileSchema>;

export const metricsSchema = z.object(Object.fromEntries(METRIC_KEYS.map((k) => [k, finite.nullable().optional()])) as Record<MetricKey, z.ZodOptional<z.ZodNullable<z.ZodNumber>>>);
export type Metrics = Partial<Record<MetricKey, number | null>>;

/** Tags shared by hand entry, promotion and update. List values must exist in the controlled lists (422 unknown_tag). */
const tagFields = {
  setting: slug.nullable().optional(),
  factory: slug.nullable().optional(),
  climate: slug.nullable().optional(),
  /** ICS stage (or epoch/period) name from the chart; the age fields follow from it unless ageMa is given. */
  icsUnit: safeText().trim().max(60).nullable().optional(),
  /** Numeric age in Ma (for example the base of the buildup). */
  ageMa: z.number().min(0).max(4600).nullable().optional(),
  latitude: z.number().min(-90).max(90).nullable().optional(),
  longitude: z.number().min(-180).max(180).nullable().optional(),
  tags: z.array(freeTag).max(30, 'at most 30 tags').optional(),
  notes: notesText.optional(),
};

export const handEntrySchema = z
  .object({
    name: nameText,
    /** The publication (hand entries); imports may leave it out. */
    citation: citationSchema.nullable().optional(),
    metrics: metricsSchema,
    /** Unit of each typed length (converted to metres on save). */
    lengthUnit: z.enum(['m', 'ft']).default('m'),
    basis: z.enum(MEASUREMENT_BASES),
    /** Interval velocity used to convert time to depth (required when basis = 'time'). */
    basisVelocityMs: z.number().min(1000).max(8000).nullable().optional(),
    evolutionClass: evolutionClassSchema.nullable().optional(),
    /** Optional traced profile (depth metres). */
    profile: depthProfileSchema.nullable().optional(),
    ...tagFields,
  })
  .superRefine((v, ctx) => {
    if (v.basis === 'time' && v.basisVelocityMs == null) ctx.addIssue({ code: 'custom', path: ['basisVelocityMs'], message: 'is required when the numbers were measured in time' });
  });
export type HandEntryInput = z.infer<typeof handEntrySchema>;

export const promoteSchema = z.object({
  name: nameText.optional(),
  ...tagFields,
});
export type PromoteInput = z.infer<typeof promoteSchema>;

export const analogueUpdateSchema = z
  .object({
    version: z.number({ error: 'is required (the version you last loaded)' }).int().min(0),
    name: nameText.optional(),
    citation: citationSchema.nullable().optional(),
    metrics: metricsSchema.optional(),
    profile: depthProfileSchema.nullable().optional(),
    /** Curator's class, overriding the engine's; null clears the override. */
    classOverride: evolutionClassSchema.nullable().optional(),
    classOverrideReason: safeText({ multiline: true }).trim().max(2000).nullable().optional(),
    ...tagFields,
  })
  .superRefine((v, ctx) => {
    if (v.classOverride && !v.classOverrideReason?.trim()) ctx.addIssue({ code: 'custom', path: ['classOverrideReason'], message: 'is required when overriding the class' });
  });
export type AnalogueUpdateInput = z.infer<typeof analogueUpdateSchema>;

export const declineSchema = z.object({ reason: safeText({ multiline: true }).trim().min(1, 'is required').max(2000) });

export const listItemSchema = z.object({ value: slug, label });
export type ListItemInput = z.infer<typeof listItemSchema>;
export interface ListItem {
  value: string;
  label: string;
}
export type ControlledLists = Record<ListName, ListItem[]>;

// ---------------------------------------------------------------------------
// Records

export interface PercentileRange {
  p90: number;
  p50: number;
  p10: number;
}

/** What a promotion froze from the engine (cayline.measurements/1 for the one buildup). */
export interface PromotionSnapshot {
  format: 'cayline.measurements/1';
  /** The engine's buildup entry, whole: per-cycle fields, buildup fields, evidence, ranges (P90/P50/P10). */
  measurement: Record<string, unknown> & { ranges: Record<string, PercentileRange> | null };
  options: Record<string, unknown>;
  velocityUsed: unknown;
  /** The velocity model of the section as stored (ranges kept). */
  velocityModel: unknown;
  verticalDomain: 'twt_ms' | 'depth_m';
  assumptions: string[];
}

export interface AnalogueSummary {
  id: number;
  name: string;
  status: AnalogueStatus;
  source: AnalogueSource;
  setting: string | null;
  factory: string | null;
  climate: string | null;
  /** Effective class: the curator's override when set, else the engine's (or the typed one). */
  class: EvolutionClass | null;
  period: string | null;
  epoch: string | null;
  stage: string | null;
  ageMa: number | null;
  latitude: number | null;
  longitude: number | null;
  tags: string[];
  metrics: Metrics;
  citationShort: string | null;
  updatedAt: string;
}

export interface AnalogueDetail extends AnalogueSummary {
  version: number;
  engineClass: EvolutionClass | null;
  classOverride: EvolutionClass | null;
  classOverrideReason: string | null;
  icsUnit: string | null;
  notes: string;
  citation: Citation | null;
  basis: MeasurementBasis | null;
  basisVelocityMs: number | null;
  profile: DepthProfile | null;
  /** Normalised shape (SHAPE_SAMPLES heights 0…1 at equally spaced x 0…1), null without a profile. */
  shape: number[] | null;
  snapshot: PromotionSnapshot | null;
  /** P90/P50/P10 of heightM, areaM2, volumeM3 (and flank angles) when the velocity had ranges. */
  ranges: Record<string, PercentileRange> | null;
  hasCrop: boolean;
  /** The buildup it was promoted from (null for hand entries and imports). */
  origin: {
    buildupId: number;
    buildupVersion: number;
    sectionId: number;
    projectId: number;
  } | null;
  /** True when the source buildup was saved again (or deleted) after the promotion. */
  liveChanged: boolean;
  /** True when the source buildup no longer exists. */
  liveDeleted: boolean;
  requestedBy: { id: number; name: string } | null;
  decidedBy: { id: number; name: string } | null;
  declineReason: string | null;
  createdAt: string;
}

// ---------------------------------------------------------------------------
// Search

const rangeSchema = z
  .object({ min: finite.optional(), max: finite.optional() })
  .refine((r) => r.min === undefined || r.max === undefined || r.min <= r.max, { message: 'min must not exceed max' });

export const analogueSearchSchema = z.object({
  q: safeText().trim().max(200).optional(),
  setting: z.array(slug).max(50).optional(),
  factory: z.array(slug).max(50).optional(),
  climate: z.array(slug).max(50).optional(),
  class: z.array(evolutionClassSchema).max(10).optional(),
  period: z.array(safeText().trim().max(60)).max(50).optional(),
  /** Free tags: an analogue matches when it has every listed tag. */
  tags: z.array(freeTag).max(20).optional(),
  status: z.enum([...ANALOGUE_STATUSES, 'any']).default('accepted'),
  source: z.enum(ANALOGUE_SOURCES).optional(),
  ranges: z.partialRecord(rangeFieldSchema, rangeSchema).optional(),
  /** Geographic box [west, south, east, north] in degrees. */
  bbox: z.tuple([z.number().min(-180).max(180), z.number().min(-90).max(90), z.number().min(-180).max(180), z.number().min(-90).max(90)]).optional(),
  /** Radius filter: centre and kilometres (great circle). */
  near: z.object({ lat: z.number().min(-90).max(90), lon: z.number().min(-180).max(180), km: z.number().positive().max(20_000) }).optional(),
  sort: z.enum(SORT_FIELDS).default('name'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  page: z.number().int().min(1).max(100_000).default(1),
  pageSize: z.number().int().min(1).max(500).default(25),
  /** Leave facet counts out (map and export need only rows). */
  facets: z.boolean().default(true),
});
export type AnalogueSearchQuery = z.infer<typeof analogueSearchSchema>;
export type AnalogueSearchInput = z.input<typeof analogueSearchSchema>;

export interface FacetCount {
  value: string;
  count: number;
}

export interface AnalogueSearchResponse {
  total: number;
  page: number;
  pageSize: number;
  items: AnalogueSummary[];
  /** Per facet, counts per value under every other active filter (the facet's own selection excluded). Empty when facets=false. */
  facets: Partial<Record<Facet, FacetCount[]>>;
}

/**
 * URL form of a search (shareable): repeated keys or comma lists for arrays
 * (`setting=pinnacle,bank`), `r.<field>=min..max` for ranges (either side may be empty),
 * `bbox=w,s,e,n`, `near=lat,lon,km`, and `q`, `status`, `source`, `sort`, `dir`, `page`, `pageSize`, `facets=0`.
 */
export function searchQueryToUrl(q: AnalogueSearchInput): URLSearchParams {
  const p = new URLSearchParams();
  if (q.q) p.set('q', q.q);
  for (const k of ['setting', 'factory', 'climate', 'class', 'period', 'tags'] as const) {
    const v = q[k];
    if (v && v.length) p.set(k, v.join(','));
  }
  if (q.status && q.status !== 'accepted') p.set('status', q.status);
  if (q.source) p.set('source', q.source);
  for (const [f, r] of Object.entries(q.ranges ?? {})) {
    if (r && (r.min !== undefined || r.max !== undefined)) p.set(`r.${f}`, `${r.min ?? ''}..${r.max ?? ''}`);
  }
  if (q.bbox) p.set('bbox', q.bbox.join(','));
  if (q.near) p.set('near', `${q.near.lat},${q.near.lon},${q.near.km}`);
  if (q.sort && q.sort !== 'name') p.set('sort', q.sort);
  if (q.dir && q.dir !== 'asc') p.set('dir', q.dir);
  if (q.page && q.page !== 1) p.set('page', String(q.page));
  if (q.pageSize && q.pageSize !== 25) p.set('pageSize', String(q.pageSize));
  if (q.facets === false) p.set('facets', '0');
  return p;
}

/** Parse the URL form (a plain object of query parameters, as Express or URLSearchParams give) into search input; validate with analogueSearchSchema. */
export function searchQueryFromUrl(params: Record<string, unknown> | URLSearchParams): Record<string, unknown> {
  const get = (k: string): string | undefined => {
    if (params instanceof URLSearchParams) {
      const all = params.getAll(k);
      return all.length ? all.join(',') : undefined;
    }
    const v = params[k];
    if (v === undefined) return undefined;
    return Array.isArray(v) ? v.join(',') : String(v);
  };
  const keys = params instanceof URLSearchParams ? [...new Set(params.keys())] : Object.keys(params);
  const out: Record<string, unknown> = {};
  const num = (s: string) => (s.trim() === '' ? undefined : Number(s));
  const str = get('q');
  if (str !== undefined) out.q = str;
  for (const k of ['setting', 'factory', 'climate', 'class', 'period', 'tags']) {
    const v = get(k);
    if (v !== undefined)
      out[k] = v
        .split(',')
        .map((s) => s.trim())
        .filter(Boolean);
  }
  for (const k of ['status', 'source', 'sort', 'dir']) {
    const v = get(k);
    if (v !== undefined) out[k] = v;
  }
  for (const k of ['page', 'pageSize']) {
    const v = get(k);
    if (v !== undefined) out[k] = num(v);
  }
  const f = get('facets');
  if (f !== undefined) out.facets = !(f === '0' || f === 'false');
  const ranges: Record<string, { min?: number; max?: number }> = {};
  for (const k of keys) {
    if (!k.startsWith('r.')) continue;
    const v = get(k) ?? '';
    const [a, b] = v.includes('..') ? v.split('..') : [v, ''];
    ranges[k.slice(2)] = { min: num(a ?? ''), max: num(b ?? '') };
  }
  if (Object.keys(ranges).length) out.ranges = ranges;
  const bbox = get('bbox');
  if (bbox !== undefined) out.bbox = bbox.split(',').map((s) => Number(s));
  const near = get('near');
  if (near !== undefined) {
    const [lat, lon, km] = near.split(',').map((s) => Number(s));
    out.near = { lat, lon, km };
  }
  return out;
}

export const savedSearchSchema = z.object({
  name: safeText().trim().min(1, 'is required').max(NAME_MAX),
  /** The URL form of the search (searchQueryToUrl(...).toString()). */
  query: safeText().max(4000),
});
export type SavedSearchInput = z.infer<typeof savedSearchSchema>;
export interface SavedSearch {
  id: number;
  name: string;
  query: string;
  createdAt: string;
}

// ---------------------------------------------------------------------------
// Look-alikes

export const lookAlikesSchema = z
  .object({
    /** What to compare: an analogue of the library, or a stored buildup (measured now, on the measurement pool). */
    from: z.union([z.object({ analogueId: z.number().int().positive() }), z.object({ buildupId: z.number().int().positive() })]),
    /** 'metrics': weighted Euclidean distance of z-scores; 'shape': L2 distance of normalised profiles. */
    mode: z.enum(['metrics', 'shape']),
    /** Metrics and weights (mode 'metrics'); default: height, base width, aspect ratio, trajectory, mean flank angle, weight 1 (those the query has). */
    metrics: z
      .array(z.object({ key: metricKeySchema, weight: z.number().min(0).max(100).default(1) }))
      .min(1)
      .max(METRICS.length)
      .optional(),
    k: z.number().int().min(1).max(100).default(10),
    /** Narrow the candidates with the same filters as the search (page/sort ignored). */
    filter: analogueSearchSchema.partial().optional(),
  })
  .superRefine((v, ctx) => {
    const seen = new Set<string>();
    v.metrics?.forEach((m, i) => {
      if (seen.has(m.key)) ctx.addIssue({ code: 'custom', path: ['metrics', i, 'key'], message: 'is listed twice' });
      seen.add(m.key);
    });
  });
export type LookAlikesRequest = z.input<typeof lookAlikesSchema>;

export const DEFAULT_LOOKALIKE_METRICS: { key: MetricKey; weight: number }[] = [
  { key: 'heightM', weight: 1 },
  { key: 'baseWidthM', weight: 1 },
  { key: 'aspectRatio', weight: 1 },
  { key: 'trajectoryDeg', weight: 1 },
  { key: 'flankAngleDeg', weight: 1 },
];

export interface LookAlikeMatch {
  analogue: AnalogueSummary;
  distance: number;
  /** Per metric: the match's value minus the query's (raw units), and the z-score difference (log10 space for log metrics). Mode 'metrics' only. */
  differences: { key: MetricKey; query: number; match: number; difference: number; zDifference: number }[];
  /** The match's normalised shape (for the overlay). */
  shape: number[] | null;
}

export interface LookAlikesResponse {
  mode: 'metrics' | 'shape';
  /** The query's own values: metrics and normalised shape. */
  query: { name: string; metrics: Metrics; shape: number[] | null };
  metrics: { key: MetricKey; weight: number; sd: number; log: boolean }[];
  /** How many analogues were compared, and how many were left out for lacking a chosen metric or a profile. */
  compared: number;
  skipped: number;
  matches: LookAlikeMatch[];
  /** Plain words on the method (distance named). */
  method: string;
}

// ---------------------------------------------------------------------------
// Import / export

/** Fields a CSV column may map to. Required: name and at least one metric. */
export const IMPORT_FIELDS = [
  'name',
  'setting',
  'factory',
  'climate',
  'class',
  'icsUnit',
  'ageMa',
  'latitude',
  'longitude',
  'tags',
  'notes',
  'authors',
  'year',
  'title',
  'container',
  'doi',
  'basis',
  'basisVelocityMs',
  ...METRIC_KEYS,
] as const;
export type ImportField = (typeof IMPORT_FIELDS)[number];

/** CSV header → field (or null to ignore the column). Lengths: a column may declare its unit in the mapping. */
export const importMappingSchema = z.object({
  columns: z.record(safeText().max(200), z.enum(IMPORT_FIELDS as unknown as [ImportField, ...ImportField[]]).nullable()),
  /** Unit of length columns (metres or feet); areas and volumes follow (ft², ft³). */
  lengthUnit: z.enum(['m', 'ft']).default('m'),
});
export type ImportMapping = z.infer<typeof importMappingSchema>;

export interface ImportRowProblem {
  /** 1-based data row number (the header is row 0), and the CSV line it started on. */
  row: number;
  line: number;
  column: string | null;
  field: ImportField | null;
  /** missing_required | not_numeric | out_of_range | wrong_unit | unknown_tag | duplicate | bad_text | bad_value */
  reason: string;
  message: string;
}

export interface ImportReport {
  rowCount: number;
  goodRows: number;
  badRows: number;
  problems: ImportRowProblem[];
  /** Problems with the file as a whole (missing required columns, unknown mapping targets). */
  fileProblems: { code: string; message: string }[];
}

export interface ImportPreview {
  headers: string[];
  suggestedMapping: ImportMapping;
  /** The first rows as parsed (strings), for the mapping step. */
  sample: Record<string, string>[];
  report: ImportReport;
}

export interface ImportResult {
  imported: number;
  ids: number[];
  report: ImportReport;
}

/** Columns of the CSV export (metrics in SI units). */
export const EXPORT_COLUMNS = ['id', 'name', 'status', 'source', 'setting', 'factory', 'climate', 'class', 'period', 'epoch', 'stage', 'ageMa', 'latitude', 'longitude', 'tags', ...METRIC_KEYS, 'citation'] as const;

export interface AnalogueGeoJson {
  type: 'FeatureCollection';
  features: { type: 'Feature'; id: number; geometry: { type: 'Point'; coordinates: [number, number] }; properties: Record<string, unknown> }[];
}

// ---------------------------------------------------------------------------
// ICS chart

export interface IcsUnit {
  name: string;
  rank: 'period' | 'epoch' | 'stage';
  /** Base (older boundary) in Ma. */
  baseMa: number;
  /** Top (younger boundary) in Ma. */
  topMa: number;
  period: string;
  epoch: string | null;
}
export interface IcsChartResponse {
  edition: string;
  units: IcsUnit[];
}
