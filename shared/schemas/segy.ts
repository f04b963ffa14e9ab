/**
 * SEG-Y uploads (issue #12): the upload form's fields (multipart, so numbers
 * coerce and empty strings count as "not given"), render settings, extraction
 * of an inline or crossline from a 3D upload, the amplitude window and the
 * trace header pages, and the response shapes.
 */
import { z } from 'zod';
import { safeText } from './text';

const blank = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : v);
const text = (max: number, multiline = false) => safeText({ multiline }).trim().max(max, `must be at most ${max} characters`);
const title = safeText().trim().min(1, 'is required').max(160, 'must be at most 160 characters');
const int = (min: number, max: number, what: string) =>
  z.coerce.number({ error: `must be ${what}` }).int(`must be ${what}`).min(min, `must be ${what}`).max(max, `must be ${what}`);

export const RAMPS = ['grey', 'diverging'] as const;
export type Ramp = (typeof RAMPS)[number];

/** Colour ramp, clip percentile of |amplitude| and optional AGC window (ms; null = off). */
export const renderSettingsSchema = z.object({
  ramp: z.enum(RAMPS, { error: 'must be "grey" or "diverging"' }).default('grey'),
  clipPercentile: z.coerce.number({ error: 'must be a number from 50 to 100' }).min(50, 'must be from 50 to 100').max(100, 'must be from 50 to 100').default(99),
  agcMs: z.preprocess(blank, z.coerce.number({ error: 'must be a number of ms from 8 to 5000' }).min(8, 'must be from 8 to 5000 ms').max(5000, 'must be from 8 to 5000 ms').nullable().optional().default(null)),
});
export type RenderSettings = z.output<typeof renderSettingsSchema>;
export type RenderSettingsInput = z.input<typeof renderSettingsSchema>;

/** Trace header byte of a 4-byte integer (1-based, within the 240-byte header). */
const bytePos = z.preprocess(blank, int(1, 237, 'a byte position from 1 to 237').optional());

/** Multipart fields of `POST /api/projects/:projectId/segy` (the file goes in field `file`, after these fields). */
export const segyUploadSchema = z.object({
  title,
  lineName: z.preprocess(blank, text(80).optional().default('')),
  survey: z.preprocess(blank, text(80).optional().default('')),
  notes: z.preprocess(blank, text(5000, true).optional().default('')),
  polarityNote: z.preprocess(blank, text(500, true).optional().default('')),
  /** 'auto' reads the textual header (a stated depth domain), else time. */
  domain: z.preprocess(blank, z.enum(['auto', 'time', 'depth'], { error: 'must be "auto", "time" or "depth"' }).optional().default('auto')),
  cdpXByte: bytePos,
  cdpYByte: bytePos,
  inlineByte: bytePos,
  crosslineByte: bytePos,
  /** Distance between consecutive CDP numbers (the file's length unit), for files without coordinates. */
  cdpSpacing: z.preprocess(blank, z.coerce.number({ error: 'must be a positive number' }).positive('must be a positive number').max(100_000, 'must be at most 100000').optional()),
  epsg: z.preprocess(blank, int(1024, 999_999, 'an EPSG code (a whole number)').optional()),
  ramp: renderSettingsSchema.shape.ramp,
  clipPercentile: renderSettingsSchema.shape.clipPercentile,
  agcMs: renderSettingsSchema.shape.agcMs,
});
export type SegyUploadFields = z.output<typeof segyUploadSchema>;
export type SegyUploadInput = z.input<typeof segyUploadSchema>;

/** What an upload keeps of its form (byte overrides, spacing, CRS, domain). */
export interface SegyUploadOptions {
  cdpX?: number;
  cdpY?: number;
  inline?: number;
  crossline?: number;
  cdpSpacing?: number;
  epsg?: number;
  domain: 'auto' | 'time' | 'depth';
}

/** `POST /api/segy-uploads/:id/sections`: one inline or crossline of a 3D upload as a new section. */
export const segyExtractSchema = z.object({
  kind: z.enum(['inline', 'crossline'], { error: 'must be "inline" or "crossline"' }),
  number: z.number({ error: 'must be a whole number' }).int('must be a whole number'),
  title,
  lineName: text(80).optional().default(''),
  survey: text(80).optional().default(''),
  notes: text(5000, true).optional().default(''),
  ramp: renderSettingsSchema.shape.ramp,
  clipPercentile: renderSettingsSchema.shape.clipPercentile,
  agcMs: renderSettingsSchema.shape.agcMs,
});
export type SegyExtractInput = z.input<typeof segyExtractSchema>;

/** `POST /api/sections/:id/render`. */
export const renderRequestSchema = renderSettingsSchema.strict();

/** Largest amplitude window one request may read (values). */
export const AMPLITUDE_WINDOW_MAX = 65_536;
export const amplitudeWindowQuerySchema = z
  .object({
    trace: int(0, 10_000_000, 'a trace index ≥ 0'),
    sample: int(0, 10_000_000, 'a sample index ≥ 0'),
    traces: int(1, 1024, 'from 1 to 1024').default(1),
    samples: int(1, 4096, 'from 1 to 4096').default(1),
  })
  .superRefine((v, ctx) => {
    if (v.traces * v.samples > AMPLITUDE_WINDOW_MAX) {
      ctx.addIssue({ code: 'custom', path: ['samples'], message: `traces × samples must be at most ${AMPLITUDE_WINDOW_MAX} (got ${v.traces * v.samples})` });
    }
  });
export type AmplitudeWindowQuery = z.input<typeof amplitudeWindowQuerySchema>;

export const traceHeaderPageSchema = z.object({
  page: int(1, 10_000_000, 'a page number ≥ 1').default(1),
  pageSize: int(1, 200, 'from 1 to 200').default(50),
});

// ---- response shapes -------------------------------------------------------

export type SegySelection = { kind: 'line' } | { kind: 'inline' | 'crossline'; number: number; traces: number };

export interface SegyWarning {
  code: string;
  field: string;
  bytes: string;
  message: string;
}

export interface SegyHeaderField {
  key: string;
  byte: number;
  bytes: string;
  meaning: string;
  value: number;
}

export interface SegyHeaderSummary {
  textual: string;
  textualEncoding: 'ebcdic' | 'ascii';
  extendedTextual: string[];
  binary: Record<string, number>;
  revision: { major: number; minor: number };
  format: { code: number; bytes: number; name: string };
  littleEndian: boolean;
  samplesPerTrace: number;
  sampleInterval: number;
  y: { domain: 'time' | 'depth'; unit: 'ms' | 'm' | 'ft'; start: number; step: number; samples: number };
}

export interface SegyRange { min: number; max: number; count: number }

export interface SegyRanges {
  inline: SegyRange | null;
  crossline: SegyRange | null;
  cdp: SegyRange;
  positionSource: 'cdp' | 'source' | 'group' | 'cdpNumber';
  lengthUnit: 'm' | 'ft';
  lineEnds: { first: [number, number]; last: [number, number] };
  /** Line ends in WGS84 [lon, lat] when an EPSG code was given (2D only). */
  lineEndsWgs84: { first: [number, number]; last: [number, number] } | null;
  /** Cumulative distance of the last trace (m). */
  lengthM: number;
}

export interface SegyUploadInfo {
  id: number;
  projectId: number;
  fileName: string;
  bytes: number;
  dimension: '2d' | '3d';
  traceCount: number;
  samplesPerTrace: number;
  ranges: SegyRanges;
  options: SegyUploadOptions;
  warnings: SegyWarning[];
  y: SegyHeaderSummary['y'];
  sections: { id: number; title: string; selection: SegySelection | null }[];
  createdAt: string;
}

export interface SegyUploadAccepted {
  upload: SegyUploadInfo;
  /** The 2D line's section (null for a 3D upload: extract an inline or crossline). */
  section: { id: number; status: 'processing' } | null;
}

/** `GET /api/sections/:id/segy`: the header viewer's file part. */
export interface SegyHeaderView {
  uploadId: number;
  fileName: string;
  dimension: '2d' | '3d';
  selection: SegySelection | null;
  textual: string;
  textualEncoding: 'ebcdic' | 'ascii';
  extendedTextual: string[];
  revision: { major: number; minor: number };
  format: { code: number; bytes: number; name: string };
  littleEndian: boolean;
  binary: SegyHeaderField[];
  traceFields: { key: string; byte: number; bytes: string; meaning: string }[];
  warnings: SegyWarning[];
  render: RenderSettings;
  traces: number;
  samplesPerTrace: number;
  y: SegyHeaderSummary['y'];
}

export interface SegyTraceHeaderPage {
  page: number;
  pageSize: number;
  total: number;
  /** Section trace index, file trace index, then values in `keys` order. */
  keys: string[];
  rows: { trace: number; fileTrace: number; values: number[] }[];
}

export interface AmplitudeWindow {
  trace: number;
  sample: number;
  traces: number;
  samples: number;
  /** Row per trace: values[t][s] (float32 values as stored). */
  values: number[][];
  /** y of the first sample and the step (ms or m). */
  y: { start: number; step: number; unit: 'ms' | 'm' | 'ft' };
}
