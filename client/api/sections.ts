/**
 * Sections API: typed calls over the one JSON client (`apiFetch`), plus the
 * two things JSON cannot do:
 * - `uploadSection`: multipart upload with progress (`apiUpload`);
 * - `loadSectionImage`: tiles, previews and thumbnails need the Bearer token,
 *   which a plain `<img src>` cannot send, so they are fetched through
 *   `apiRequest` (a 401 signs the person out like any other call), decoded
 *   to an `ImageBitmap` and kept in a small LRU cache.
 */
import type { Page } from '../../shared/schemas/projects';
import type {
  CalibrationInput,
  CalibrationPreview,
  CalibrationRecord,
  CreateSectionInput,
  ListSectionsQuery,
  SectionAccepted,
  SectionDetail,
  SectionSummary,
  UpdateSectionInput,
} from '../../shared/schemas/sections';
import type { CalibrationFit } from '../../shared/measure/calibration';
import { apiFetch, apiRequest, apiUpload, currentToken, type UploadProgress } from './http';

export type { SectionDetail, SectionSummary, CalibrationRecord, CalibrationPreview } from '../../shared/schemas/sections';

/** The engine's fit as the server returns it inside a calibration. */
export type SectionFit = CalibrationFit;

export interface SectionListParams {
  q?: string;
  page?: number;
  pageSize?: number;
  sort?: NonNullable<ListSectionsQuery['sort']>;
}

/** GET /api/projects/:projectId/sections */
export function listSections(projectId: number, params: SectionListParams = {}): Promise<Page<SectionSummary>> {
  return apiFetch<Page<SectionSummary>>(`/projects/${projectId}/sections`, { query: { ...params } });
}

/** GET /api/sections/:id */
export function getSection(id: number, signal?: AbortSignal): Promise<SectionDetail> {
  return apiFetch<SectionDetail>(`/sections/${id}`, { signal });
}

/** PATCH /api/sections/:id — 409 `version_conflict` when `version` is stale. */
export function updateSection(id: number, input: UpdateSectionInput): Promise<SectionDetail> {
  return apiFetch<SectionDetail>(`/sections/${id}`, { method: 'PATCH', body: input });
}

/** DELETE /api/sections/:id */
export function deleteSection(id: number): Promise<void> {
  return apiFetch<void>(`/sections/${id}`, { method: 'DELETE' });
}

/** POST /api/sections/:id/retry — build the tiles of a failed section again. */
export function retrySection(id: number): Promise<SectionAccepted | SectionDetail> {
  return apiFetch<SectionAccepted | SectionDetail>(`/sections/${id}/retry`, { method: 'POST' });
}

/** PUT /api/sections/:id/calibration — stores a new calibration version. */
export function saveCalibration(id: number, input: CalibrationInput): Promise<CalibrationRecord> {
  return apiFetch<CalibrationRecord>(`/sections/${id}/calibration`, { method: 'PUT', body: input });
}

/** POST /api/sections/:id/calibration/preview — the fit and checks without storing. */
export function previewCalibration(id: number, input: CalibrationInput, signal?: AbortSignal): Promise<CalibrationPreview> {
  return apiFetch<CalibrationPreview>(`/sections/${id}/calibration/preview`, { method: 'POST', body: input, signal });
}

/** GET /api/sections/:id/calibrations — every stored version, newest first. */
export function listCalibrations(id: number): Promise<CalibrationRecord[]> {
  return apiFetch<CalibrationRecord[]>(`/sections/${id}/calibrations`);
}

// ---------------------------------------------------------------------------
// Upload with progress

export type { UploadProgress };

export interface UploadOptions {
  onProgress?: (p: UploadProgress) => void;
  signal?: AbortSignal;
}

const UPLOAD_FALLBACK = (status: number): string =>
  status === 413
    ? 'The file is larger than the server accepts.'
    : status === 401
      ? 'Please sign in again'
      : status === 403
        ? 'You do not have permission to upload to this project'
        : `The upload failed (${status})`;

/**
 * POST /api/projects/:projectId/sections as multipart (`image` + metadata
 * fields) through `apiUpload` (progress, token, errors, a 401 signs out).
 * Resolves with `{ id, status: 'processing' }` once the server has the file;
 * the tile pyramid is built afterwards (poll `getSection`).
 */
export async function uploadSection(projectId: number, fields: CreateSectionInput, file: File, options: UploadOptions = {}): Promise<SectionAccepted> {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) {
    if (v === undefined || v === null || v === '') continue;
    form.append(k, String(v));
  }
  form.append('image', file, file.name);
  const report = (loaded: number, total: number) => options.onProgress?.({ loaded, total, fraction: total > 0 ? Math.min(1, loaded / total) : 0 });
  const accepted = await apiUpload<SectionAccepted>(`/projects/${projectId}/sections`, form, {
    signal: options.signal,
    fallback: UPLOAD_FALLBACK,
    onProgress: (p) => report(p.loaded, p.total || file.size),
  });
  report(file.size, file.size);
  return accepted;
}

// ---------------------------------------------------------------------------
// Authenticated images (tiles, preview, thumbnail)

/** A decoded image Konva or a 2D canvas can draw. */
export type SectionBitmap = ImageBitmap;

const CACHE_LIMIT = 384;
const cache = new Map<string, SectionBitmap>();
const inflight = new Map<string, { promise: Promise<SectionBitmap>; controller: AbortController; users: number }>();

function remember(url: string, bmp: SectionBitmap): void {
  cache.delete(url);
  cache.set(url, bmp);
  // Evict the least recently used. Bitmaps are not closed: a node may still show one; GC frees them.
  while (cache.size > CACHE_LIMIT) {
    const oldest = cache.keys().next().value as string;
    cache.delete(oldest);
  }
}

let cacheToken: string | null = null;

/** Images fetched under another sign-in are not shown to this one: drop them when the token changes. */
function forgetOtherSessions(): void {
  const token = currentToken();
  if (token === cacheToken) return;
  cacheToken = token;
  clearSectionImageCache();
}

/** Drop every cached image and cancel every download. */
export function clearSectionImageCache(): void {
  cache.clear();
  for (const e of inflight.values()) e.controller.abort();
  inflight.clear();
}

/** A cached image, marked as recently used; undefined when not loaded yet. */
export function cachedSectionImage(url: string): SectionBitmap | undefined {
  const hit = cache.get(url);
  if (hit) {
    cache.delete(url);
    cache.set(url, hit);
  }
  return hit;
}

/** Cached without touching the LRU order (for "is a coarser tile available?" checks). */
export function peekSectionImage(url: string): SectionBitmap | undefined {
  return cache.get(url);
}

async function fetchBitmap(url: string, signal: AbortSignal): Promise<SectionBitmap> {
  // Through the one request path: the token, the errors, and a 401 signs the person out.
  const res = await apiRequest(url, {
    signal,
    headers: { Accept: 'image/*, application/json' },
    networkMessage: 'Cannot reach the Cayline server to load the image.',
    fallback: (status) => `The image could not be loaded (${status})`,
  });
  const blob = await res.blob();
  return createImageBitmap(blob);
}

/**
 * Load an authenticated image (tile, preview or thumbnail) as an ImageBitmap.
 * Concurrent requests for one URL share a download; aborting `signal` drops
 * this caller's interest, and the download is cancelled once nobody wants it.
 */
export function loadSectionImage(url: string, signal?: AbortSignal): Promise<SectionBitmap> {
  forgetOtherSessions();
  const hit = cachedSectionImage(url);
  if (hit) return Promise.resolve(hit);
  let entry = inflight.get(url);
  if (!entry) {
    const controller = new AbortController();
    const promise = fetchBitmap(url, controller.signal)
      .then((bmp) => {
        remember(url, bmp);
        return bmp;
      })
      .finally(() => {
        if (inflight.get(url)?.promise === promise) inflight.delete(url);
      });
    entry = { promise, controller, users: 0 };
    inflight.set(url, entry);
  }
  const e = entry;
  e.users++;
  if (!signal) return e.promise;
  return new Promise<SectionBitmap>((resolve, reject) => {
    const onAbort = () => {
      e.users--;
      if (e.users <= 0) e.controller.abort();
      reject(new DOMException('The image is no longer needed', 'AbortError'));
    };
    if (signal.aborted) {
      onAbort();
      return;
    }
    signal.addEventListener('abort', onAbort, { once: true });
    e.promise.then(
      (v) => {
        signal.removeEventListener('abort', onAbort);
        resolve(v);
      },
      (err) => {
        signal.removeEventListener('abort', onAbort);
        reject(err);
      },
    );
  });
}

/** Fill a tile URL template: `{z}` level, `{x}` column, `{y}` row (also `{level}`, `{col}`, `{row}`). */
export function tileUrl(template: string, level: number, col: number, row: number): string {
  return template
    .replace(/\{(z|level)\}/g, String(level))
    .replace(/\{(x|col)\}/g, String(col))
    .replace(/\{(y|row)\}/g, String(row));
}

