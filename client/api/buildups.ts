/**
 * Buildups API (notes: server routes of the interpretation canvas): typed
 * calls over the one JSON client (`apiFetch`).
 *
 * Geometry travels in image pixels (shared/editor/model.ts); the server
 * measures stored geometry with the same engine the browser runs
 * (shared/measure), so `getMeasurements` is the authoritative check of a
 * live preview.
 */
import type { z } from 'zod';
import type { BuildupGeometry } from '../../shared/editor/model';
import type { MeasurementOutput } from '../../shared/measure/index';
import type { BuildupSummary, saveBuildupSchema } from '../../shared/schemas/buildups';
import type { MeasureOptionsInput, VelocityModelInput as VelocityModel } from '../../shared/schemas/interpretation';
import type { ReviewState } from '../../shared/schemas/review';
import { ApiError, apiFetch, isApiError } from './http';

/** A row of `GET /api/sections/:id/buildups`: the summary plus the stored geometry. */
export interface BuildupListItem extends BuildupSummary {
  geometry: BuildupGeometry;
}

/** `GET /api/buildups/:id` */
export interface BuildupDetail {
  id: number;
  sectionId: number;
  name: string;
  version: number;
  geometry: BuildupGeometry;
  updatedAt: string;
  /** Review state (shared/schemas/review.ts). */
  reviewState: ReviewState;
}

/** The record the server holds when a save was refused as stale (409 `version_conflict`). */
export interface BuildupConflictCurrent {
  id: number;
  name: string;
  version: number;
  geometry: BuildupGeometry;
  updatedAt: string;
}

/**
 * `PUT /api/buildups/:id`: the fields of `saveBuildupSchema` (z.input, so
 * defaults may be left out), with the geometry as the editor writes it
 * (`toGeometry`), which that schema accepts.
 */
export type SaveBuildupBody = Omit<z.input<typeof saveBuildupSchema>, 'geometry'> & { geometry: BuildupGeometry };

export interface SaveBuildupResult {
  version: number;
  updatedAt: string;
}

/** Thresholds a reader may change when asking for measurements (spec §5, §6, §8): those of `measureOptionsSchema`. */
export type MeasurementQuery = Pick<MeasureOptionsInput, 'aggradingToleranceDeg' | 'drownedMinTerminations' | 'draws'>;

/** `GET/PUT /api/sections/:id/velocity` */
export interface VelocityInfo {
  velocity: VelocityModel;
  /** True while the section has no stored model and the house default applies. */
  isDefault: boolean;
  /** Where the default's numbers come from (empty for a stored model). */
  sources: string[];
  updatedAt: string | null;
  /** Who saved the stored model (null for the default). */
  updatedBy: { id: number; name: string } | null;
}

/** GET /api/sections/:sectionId/buildups — oldest first, each with its geometry. */
export function listBuildups(sectionId: number, signal?: AbortSignal): Promise<BuildupListItem[]> {
  return apiFetch<BuildupListItem[]>(`/sections/${sectionId}/buildups`, { signal });
}

/** POST /api/sections/:sectionId/buildups (admin / interpreter members) — an empty buildup. */
export function createBuildup(sectionId: number, name: string): Promise<{ id: number; version: number }> {
  return apiFetch<{ id: number; version: number }>(`/sections/${sectionId}/buildups`, { method: 'POST', body: { name } });
}

/** GET /api/buildups/:id */
export function getBuildup(id: number, signal?: AbortSignal): Promise<BuildupDetail> {
  return apiFetch<BuildupDetail>(`/buildups/${id}`, { signal });
}

/**
 * PUT /api/buildups/:id with optimistic locking. A stale `version` throws
 * `ApiError { status: 409, code: 'version_conflict', details: { current } }`;
 * read the saved record with `conflictCurrent(error)`.
 */
export async function saveBuildup(id: number, body: SaveBuildupBody): Promise<SaveBuildupResult> {
  try {
    return await apiFetch<SaveBuildupResult>(`/buildups/${id}`, { method: 'PUT', body });
  } catch (e) {
    // Normalise a 409 whatever the body looked like, so callers can rely on the code
    // (a signed-off buildup's 409 `signed_off` keeps its own code and message).
    if (isApiError(e) && e.status === 409 && e.code !== 'version_conflict' && e.code !== 'signed_off') {
      throw new ApiError(409, 'version_conflict', e.message, e.details, e.retryAfter);
    }
    throw e;
  }
}

/** The server's current record from a `version_conflict` error, or null for any other error. */
export function conflictCurrent(e: unknown): BuildupConflictCurrent | null {
  if (!isApiError(e) || e.code !== 'version_conflict') return null;
  const d = e.details as { current?: unknown } | undefined;
  const c = d?.current as Partial<BuildupConflictCurrent> | undefined;
  if (!c || typeof c !== 'object' || typeof c.id !== 'number' || typeof c.version !== 'number' || !c.geometry) return null;
  return c as BuildupConflictCurrent;
}

/** DELETE /api/buildups/:id */
export function deleteBuildup(id: number): Promise<void> {
  return apiFetch<void>(`/buildups/${id}`, { method: 'DELETE' });
}

/**
 * GET /api/buildups/:id/measurements — the server's numbers for the saved
 * geometry (complete cycles only). 409 `not_calibrated`, 422 `not_measurable`.
 */
export function getMeasurements(id: number, query: MeasurementQuery = {}, signal?: AbortSignal): Promise<MeasurementOutput> {
  return apiFetch<MeasurementOutput>(`/buildups/${id}/measurements`, { query: { ...query }, signal });
}

/** GET /api/sections/:id/velocity */
export function getVelocity(sectionId: number, signal?: AbortSignal): Promise<VelocityInfo> {
  return apiFetch<VelocityInfo>(`/sections/${sectionId}/velocity`, { signal });
}

/**
 * PUT /api/sections/:id/velocity — answers the stored model. `baseUpdatedAt`: the stored model's
 * `updatedAt` the edit started from (null: the default); someone else's model saved meanwhile answers
 * 409 `version_conflict` with theirs in `details.current` (read it with `velocityConflict`).
 */
export function putVelocity(sectionId: number, velocity: VelocityModel, baseUpdatedAt?: string | null): Promise<VelocityInfo> {
  return apiFetch<VelocityInfo>(`/sections/${sectionId}/velocity`, { method: 'PUT', body: baseUpdatedAt === undefined ? { velocity } : { velocity, baseUpdatedAt } });
}

/** The stored model from a velocity save refused as stale, or null for any other error. */
export function velocityConflict(e: unknown): VelocityInfo | null {
  if (!isApiError(e) || e.code !== 'version_conflict') return null;
  const current = (e.details as { current?: VelocityInfo } | undefined)?.current;
  return current && typeof current === 'object' && 'velocity' in current ? current : null;
}

/** POST /api/measure — the engine on a posted interpretation. */
export function measureOnServer(interpretation: unknown, options?: MeasurementQuery & Record<string, unknown>): Promise<MeasurementOutput> {
  return apiFetch<MeasurementOutput>('/measure', { method: 'POST', body: { interpretation, options } });
}
