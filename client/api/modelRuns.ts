/**
 * Saved forward-model runs of a buildup (shared/schemas/model-runs.ts).
 * Typed calls over the one JSON client (`apiFetch`).
 */
import type { ModelRunCreateInput, ModelRunDetail, ModelRunListItem } from '../../shared/schemas/model-runs';
import { apiFetch } from './http';

export type { ModelRunCreateInput, ModelRunDetail, ModelRunListItem };

/** GET /api/buildups/:id/model-runs — newest first. */
export function listModelRuns(buildupId: number, signal?: AbortSignal): Promise<{ items: ModelRunListItem[] }> {
  return apiFetch<{ items: ModelRunListItem[] }>(`/buildups/${buildupId}/model-runs`, { signal });
}

/** POST /api/buildups/:id/model-runs */
export function createModelRun(buildupId: number, body: ModelRunCreateInput): Promise<ModelRunDetail> {
  return apiFetch<ModelRunDetail>(`/buildups/${buildupId}/model-runs`, { method: 'POST', body });
}

/** GET /api/model-runs/:id — with the parameters. */
export function getModelRun(id: number, signal?: AbortSignal): Promise<ModelRunDetail> {
  return apiFetch<ModelRunDetail>(`/model-runs/${id}`, { signal });
}

/** DELETE /api/model-runs/:id */
export function deleteModelRun(id: number): Promise<void> {
  return apiFetch<void>(`/model-runs/${id}`, { method: 'DELETE' });
}
