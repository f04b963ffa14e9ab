/**
 * Review API: a buildup's review state and history, the transitions the
 * signed-in person may take, its kept versions and their measurements.
 * Typed calls over the one JSON client (`apiFetch`).
 */
import type { MeasurementOutput } from '../../shared/measure/index';
import type { BuildupVersionDetail, BuildupVersionSummary, ReviewInfo, ReviewState } from '../../shared/schemas/review';
import { apiFetch, isApiError } from './http';
import type { MeasurementQuery } from './buildups';

export type { BuildupVersionDetail, BuildupVersionSummary, ReviewInfo, ReviewState };

/** GET /api/buildups/:id/review */
export function getReview(buildupId: number, signal?: AbortSignal): Promise<ReviewInfo> {
  return apiFetch<ReviewInfo>(`/buildups/${buildupId}/review`, { signal });
}

export interface TransitionBody {
  /** The state the asker saw: when someone moved it first, the answer is 409 `state_changed`. */
  from: ReviewState;
  to: ReviewState;
  comment?: string;
  /** Required to reopen a signed-off buildup. */
  reason?: string;
}

/** POST /api/buildups/:id/review — answers the new review info. */
export function moveReview(buildupId: number, body: TransitionBody): Promise<ReviewInfo> {
  return apiFetch<ReviewInfo>(`/buildups/${buildupId}/review`, { method: 'POST', body });
}

/** GET /api/buildups/:id/versions — newest first. */
export function listVersions(buildupId: number, signal?: AbortSignal): Promise<BuildupVersionSummary[]> {
  return apiFetch<BuildupVersionSummary[]>(`/buildups/${buildupId}/versions`, { signal });
}

/** GET /api/buildups/:id/versions/:version — the geometry exactly as saved. */
export function getVersion(buildupId: number, version: number, signal?: AbortSignal): Promise<BuildupVersionDetail> {
  return apiFetch<BuildupVersionDetail>(`/buildups/${buildupId}/versions/${version}`, { signal });
}

/** GET /api/buildups/:id/versions/:version/measurements — the version's numbers from its own velocity model and Ties. */
export function getVersionMeasurements(buildupId: number, version: number, query: MeasurementQuery = {}, signal?: AbortSignal): Promise<MeasurementOutput> {
  return apiFetch<MeasurementOutput>(`/buildups/${buildupId}/versions/${version}/measurements`, { query: { ...query }, signal });
}

/** Details of a 409 `signed_off` refusal (a save, delete or velocity change of a signed-off buildup). */
export interface SignedOffDetails {
  buildupId: number;
  name: string;
  version: number;
  signedOffBy: { id: number; name: string } | null;
  signedOffAt: string | null;
}

/** The details when `e` is a 409 `signed_off`, else null. */
export function signedOffRefusal(e: unknown): SignedOffDetails | null {
  if (!isApiError(e) || e.status !== 409 || e.code !== 'signed_off') return null;
  return (e.details as SignedOffDetails | undefined) ?? null;
}
