/**
 * Sections: uploaded images of seismic sections, their metadata, tile pyramid
 * and axis calibrations. The same schemas validate the client's forms and the
 * server's requests (multipart fields arrive as strings, so numbers coerce and
 * empty strings count as "not given").
 */
import { z } from 'zod';
import type { Page } from './projects';
import { safeText } from './text';
import type { RenderSettings, SegySelection } from './segy';

export const VERTICAL_DOMAINS = ['twt_ms', 'depth_m'] as const;
export type VerticalDomain = (typeof VERTICAL_DOMAINS)[number];
export const SECTION_STATUSES = ['processing', 'ready', 'failed'] as const;
export type SectionStatus = (typeof SECTION_STATUSES)[number];

/** '' / null / undefined → undefined, so optional multipart fields may be sent empty. */
const blankToUndefined = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : v);

function coordinate(kind: 'lon' | 'lat') {
  const lim = kind === 'lon' ? 180 : 90;
  return z.coerce
    .number({ error: 'must be a number' })
    .refine((n) => Number.isFinite(n), 'must be a finite number')
    .refine((n) => n >= -lim && n <= lim, `must be between -${lim} and ${lim} degrees`);
}
const optionalCoordinate = (kind: 'lon' | 'lat') => z.preprocess(blankToUndefined, coordinate(kind).optional());
/** In PATCH, `null` clears a coordinate; absent leaves it alone. */
const patchCoordinate = (kind: 'lon' | 'lat') =>
  z.preprocess((v) => (v === '' ? null : v), coordinate(kind).nullable().optional());

/** One-line text (line name, survey); `multiline` for notes that keep tab, LF and CR. */
const text = (max: number, multiline = false) => safeText({ multiline }).trim().max(max, `must be at most ${max} characters`);
const title = safeText().trim().min(1, 'is required').max(160, 'must be at most 160 characters');
const verticalDomain = z.enum(VERTICAL_DOMAINS, { error: 'must be "twt_ms" (two-way time, ms) or "depth_m" (depth, m)' });

export const COORD_KEYS = ['startLon', 'startLat', 'endLon', 'endLat'] as const;

/** All four line end coordinates or none (for upload; `null`/absent count as none). */
function allOrNoCoordinates(v: Record<string, unknown>, ctx: z.RefinementCtx, allowNull: boolean) {
  const given = COORD_KEYS.filter((k) => v[k] !== undefined && (allowNull || v[k] !== null));
  if (given.length === 0 || given.length === 4) {
    if (allowNull && given.length === 4) {
      const nulls = COORD_KEYS.filter((k) => v[k] === null).length;
      if (nulls !== 0 && nulls !== 4) {
        for (const k of COORD_KEYS) {
          if (v[k] !== null) continue;
          ctx.addIssue({ code: 'custom', path: [k], message: 'set all four line end coordinates, or clear all four with null' });
        }
      }
    }
    return;
  }
  for (const k of COORD_KEYS) {
    if (given.includes(k)) continue;
    ctx.addIssue({ code: 'custom', path: [k], message: 'give all four line end coordinates (startLon, startLat, endLon, endLat) or none' });
  }
}

/** Multipart fields of `POST /api/projects/:projectId/sections` (the file itself goes in field `image`). */
export const createSectionSchema = z
  .object({
    title,
    lineName: z.preprocess(blankToUndefined, text(80).optional().default('')),
    survey: z.preprocess(blankToUndefined, text(80).optional().default('')),
    verticalDomain,
    notes: z.preprocess(blankToUndefined, text(5000, true).optional().default('')),
    polarityNote: z.preprocess(blankToUndefined, text(500, true).optional().default('')),
    startLon: optionalCoordinate('lon'),
    startLat: optionalCoordinate('lat'),
    endLon: optionalCoordinate('lon'),
    endLat: optionalCoordinate('lat'),
  })
  .superRefine((v, ctx) => allOrNoCoordinates(v, ctx, false));
export type CreateSectionInput = z.input<typeof createSectionSchema>;
export type CreateSectionFields = z.output<typeof createSectionSchema>;

/** `PATCH /api/sections/:id`: metadata changes with the `version` the client last saw. */
export const updateSectionSchema = z
  .object({
    version: z.number({ error: 'is required (the version you last loaded)' }).int().min(0),
    title: title.optional(),
    lineName: text(80).optional(),
    survey: text(80).optional(),
    verticalDomain: verticalDomain.optional(),
    notes: text(5000, true).optional(),
    polarityNote: text(500, true).optional(),
    startLon: patchCoordinate('lon'),
    startLat: patchCoordinate('lat'),
    endLon: patchCoordinate('lon'),
    endLat: patchCoordinate('lat'),
  })
  .strict()
  .superRefine((v, ctx) => {
    allOrNoCoordinates(v, ctx, true);
    if (Object.keys(v).filter((k) => k !== 'version').length === 0) ctx.addIssue({ code: 'custom', path: [], message: 'nothing to change' });
  });
export type UpdateSectionInput = z.input<typeof updateSectionSchema>;

export const SECTION_SORTS = ['-createdAt', 'createdAt', 'title', '-title', 'lineName', '-lineName', '-updatedAt', 'updatedAt'] as const;
export const listSectionsQuerySchema = z.object({
  q: safeText().trim().max(200).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(20),
  sort: z.enum(SECTION_SORTS, { error: `must be one of ${SECTION_SORTS.join(', ')}` }).default('-createdAt'),
});
export type ListSectionsQuery = z.input<typeof listSectionsQuerySchema>;

const finite = z.number({ error: 'must be a number' }).refine((n) => Number.isFinite(n), 'must be a finite number');
export const tieSchema = z.object({
  px: z.tuple([finite, finite], { error: 'must be [u, v] image pixels' }),
  world: z.tuple([finite, finite], { error: 'must be [x, y]: metres along the line, and TWT ms or depth m' }),
});
export type Tie = z.infer<typeof tieSchema>;

/** `PUT /api/sections/:id/calibration` and `POST …/calibration/preview`. */
export const calibrationInputSchema = z.object({
  ties: z.array(tieSchema, { error: 'must be a list of ties' }).max(200, 'at most 200 ties'),
  mode: z.enum(['affine', 'axes'], { error: 'must be "affine" or "axes"' }).optional(),
  /** Optional optimistic check: the calibration version the client started from (0 = none yet). */
  baseVersion: z.number().int().min(0).optional(),
});
export type CalibrationInput = z.infer<typeof calibrationInputSchema>;

// ---- response shapes -------------------------------------------------------

export interface UserRef {
  id: number;
  name: string;
}

export interface TileLevel {
  z: number;
  width: number;
  height: number;
  columns: number;
  rows: number;
}

/** Deep-Zoom-style pyramid: level `maxLevel` is full resolution, each level below halves (rounding up), level 0 is 1×1. */
export interface TilesDescriptor {
  urlTemplate: string; // '/api/sections/12/tiles/{z}/{x}_{y}.jpg'
  layout: 'dz';
  tileSize: number;
  overlap: number;
  format: 'jpeg';
  width: number;
  height: number;
  minLevel: number;
  maxLevel: number;
  levels: TileLevel[];
}

export interface LengthMismatch {
  lineLengthM: number;
  calibratedXRangeM: number;
  relativeDifference: number;
  message: string;
}

export interface CalibrationChecks {
  /** Geographic length of the line from its end coordinates (turf, haversine great circle), or null. */
  lineLengthM: number | null;
  /** |x(right edge) − x(left edge)| at mid-height under the calibration. */
  calibratedXRangeM: number | null;
  /** Set when both are known and differ by more than 5 %. */
  lengthMismatch: LengthMismatch | null;
}

export interface CalibrationRecord extends CalibrationChecks {
  id: number;
  sectionId: number;
  version: number;
  mode: 'affine' | 'axes';
  ties: Tie[];
  fit: unknown; // the shared engine's fit: { mode, affine, residuals, rmsPx, rmsWorld }
  createdAt: string;
  createdBy: UserRef | null;
  /** 'segy_headers': made from a SEG-Y file's own headers (no Ties placed by a person). */
  source?: 'ties' | 'segy_headers';
}

export interface CalibrationPreview extends CalibrationChecks {
  fit: unknown;
}

export interface SectionSummary {
  id: number;
  projectId: number;
  title: string;
  lineName: string;
  survey: string;
  verticalDomain: VerticalDomain;
  status: SectionStatus;
  progress: number;
  failureReason: string | null;
  width: number;
  height: number;
  thumbnailUrl: string | null;
  uploadedBy: UserRef | null;
  calibrationVersion: number | null;
  createdAt: string;
  updatedAt: string;
  version: number;
}

export interface SectionDetail extends SectionSummary {
  notes: string;
  polarityNote: string;
  startLon: number | null;
  startLat: number | null;
  endLon: number | null;
  endLat: number | null;
  sourceFormat: 'png' | 'jpeg' | 'tiff' | 'segy';
  sourceBytes: number;
  /** Set for sections made from a SEG-Y upload (issue #12): the upload, which traces, the render settings. */
  segy: { uploadId: number; selection: SegySelection | null; render: RenderSettings | null } | null;
  previewUrl: string | null;
  tiles: TilesDescriptor | null;
  calibration: CalibrationRecord | null;
  lineLengthM: number | null;
}

export type SectionPage = Page<SectionSummary>;

export interface SectionAccepted {
  id: number;
  status: 'processing';
}
