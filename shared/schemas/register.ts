/**
 * The project buildup register (`GET /api/projects/:id/buildups`), its
 * exports, and a person's display preferences (`/api/me/preferences`).
 *
 * Numbers in the API are SI (m, m², m³, degrees) whatever the person's
 * preference: range filters are given in SI too (the client converts from
 * the display unit with shared/units.ts). Exports (`?unit=`) write the
 * chosen unit, named in every header.
 */
import { z } from 'zod';
import { LENGTH_UNITS, type LengthUnit, type Quantity } from '../units';
import { REVIEW_STATES, type ReviewState } from './review';
import { safeText } from './text';

export const BUILDUP_CLASSES = ['prograding', 'aggrading', 'backstepping', 'downstepping', 'drowned'] as const;
export type RegisterClass = (typeof BUILDUP_CLASSES)[number];

export const lengthUnitSchema = z.enum(LENGTH_UNITS, { error: 'must be "m" or "ft"' });

export const preferencesSchema = z.object({ lengthUnit: lengthUnitSchema }).strict();
export type Preferences = z.infer<typeof preferencesSchema>;

/** Sortable columns of the register. */
export const REGISTER_SORTS = ['section', 'name', 'classification', 'heightM', 'baseWidthM', 'aspectRatio', 'trajectoryDeg', 'areaM2', 'volumeP50M3', 'reviewState', 'updatedAt'] as const;
export type RegisterSort = (typeof REGISTER_SORTS)[number];

/** Numeric columns: what they measure (for units) and their title. */
export const REGISTER_NUMERIC = {
  heightM: { title: 'Height', quantity: 'length' },
  baseWidthM: { title: 'Base width', quantity: 'length' },
  aspectRatio: { title: 'Aspect ratio', quantity: 'ratio' },
  trajectoryDeg: { title: 'Net trajectory', quantity: 'angle' },
  areaM2: { title: 'Area', quantity: 'area' },
  volumeP50M3: { title: 'Volume P50', quantity: 'volume' },
} as const satisfies Record<string, { title: string; quantity: Quantity }>;
export type RegisterNumericKey = keyof typeof REGISTER_NUMERIC;
export const REGISTER_NUMERIC_KEYS = Object.keys(REGISTER_NUMERIC) as RegisterNumericKey[];

/** A comma-separated list (or a repeated parameter) of allowed values. */
function listOf<T extends readonly [string, ...string[]]>(values: T) {
  return z
    .union([safeText(), z.array(safeText())])
    .transform((v) => (Array.isArray(v) ? v : v.split(',')).map((s) => s.trim()).filter(Boolean))
    .pipe(z.array(z.enum(values, { error: `must be one of ${values.join(', ')}` })));
}

const bound = z.coerce.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number').optional();

const rangeShape = Object.fromEntries(REGISTER_NUMERIC_KEYS.flatMap((k) => [[`${k}Min`, bound], [`${k}Max`, bound]])) as Record<
  `${RegisterNumericKey}Min` | `${RegisterNumericKey}Max`,
  typeof bound
>;

/** Filters and order shared by the page and the exports. Ranges in SI (m, m², m³, degrees). */
const filterShape = {
  q: safeText().trim().max(200).optional(),
  classification: listOf(BUILDUP_CLASSES).optional(),
  reviewState: listOf(REVIEW_STATES).optional(),
  sort: z.enum(REGISTER_SORTS, { error: `must be one of ${REGISTER_SORTS.join(', ')}` }).default('updatedAt'),
  dir: z.enum(['asc', 'desc'], { error: 'must be asc or desc' }).default('desc'),
  ...rangeShape,
};

function rangesInOrder(v: Record<string, unknown>, ctx: z.RefinementCtx) {
  for (const k of REGISTER_NUMERIC_KEYS) {
    const lo = v[`${k}Min`] as number | undefined;
    const hi = v[`${k}Max`] as number | undefined;
    if (lo !== undefined && hi !== undefined && lo > hi) ctx.addIssue({ code: 'custom', path: [`${k}Max`], message: `must be ≥ ${k}Min (${lo})` });
  }
}

export const registerQuerySchema = z
  .object({
    ...filterShape,
    page: z.coerce.number({ error: 'must be a whole number' }).int('must be a whole number').min(1, 'must be ≥ 1').default(1),
    pageSize: z.coerce.number({ error: 'must be a whole number' }).int('must be a whole number').min(1, 'must be ≥ 1').max(200, 'must be ≤ 200').default(25),
  })
  .strict()
  .superRefine(rangesInOrder);
export type RegisterQuery = z.infer<typeof registerQuerySchema>;

const flag = z
  .enum(['1', '0', 'true', 'false'], { error: 'must be 1/0 or true/false' })
  .transform((v) => v === '1' || v === 'true')
  .optional();

export const registerExportQuerySchema = z
  .object({ ...filterShape, unit: lengthUnitSchema.optional(), bom: flag })
  .strict()
  .superRefine(rangesInOrder);
export type RegisterExportQuery = z.infer<typeof registerExportQuerySchema>;

/** Whether a row's figures are the current version's. */
export type SummaryStatus = 'ok' | 'pending' | 'not_measurable' | 'not_calibrated' | 'failed';

export interface RegisterRow {
  id: number;
  name: string;
  sectionId: number;
  section: string;
  lineName: string;
  version: number;
  reviewState: ReviewState;
  updatedAt: string;
  updatedBy: { id: number; name: string } | null;
  status: SummaryStatus;
  /** What is missing when the buildup cannot be measured (status not_measurable / not_calibrated / failed). */
  problem: string | null;
  classification: RegisterClass | null;
  heightM: number | null;
  baseWidthM: number | null;
  aspectRatio: number | null;
  trajectoryDeg: number | null;
  areaM2: number | null;
  /** P50 of the Monte Carlo volume when the velocity model has ranges, else the deterministic volume. */
  volumeP50M3: number | null;
}

export interface RegisterPage {
  items: RegisterRow[];
  total: number;
  page: number;
  pageSize: number;
  /** Buildups of the whole project whose figures are being (re)computed. */
  pending: number;
}

export interface BatchReportJob {
  id: string;
  state: 'queued' | 'running' | 'done' | 'failed';
  progress: number;
  total: number;
  done: number;
  message: string | null;
}

export type { LengthUnit };
