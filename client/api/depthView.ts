/** Depth view API (GET/POST /api/sections/:id/depth); its tiles are fetched like the TWT tiles (sections.ts). */
import type { DepthViewState } from '../../shared/schemas/depth-view';
import { apiFetch } from './http';

export type { DepthViewState } from '../../shared/schemas/depth-view';

/** GET /api/sections/:id/depth */
export function getDepthView(sectionId: number, signal?: AbortSignal): Promise<DepthViewState> {
  return apiFetch<DepthViewState>(`/sections/${sectionId}/depth`, { signal });
}

/** POST /api/sections/:id/depth — queues a build unless the stored one is current. */
export function requestDepthView(sectionId: number): Promise<DepthViewState> {
  return apiFetch<DepthViewState>(`/sections/${sectionId}/depth`, { method: 'POST' });
}
