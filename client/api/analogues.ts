/**
 * The Analogue library API (routes in shared/schemas/analogues.ts): search,
 * records, Look-alikes, saved searches, promotion, CSV import and export.
 * JSON goes through apiFetch; the crop image, the exports and the multipart
 * import need the Bearer token on a plain fetch and are done here.
 */
import type {
  AnalogueDetail,
  AnalogueSearchInput,
  AnalogueSearchResponse,
  AnalogueUpdateInput,
  ControlledLists,
  HandEntryInput,
  IcsChartResponse,
  ImportMapping,
  ImportPreview,
  ImportResult,
  ListItem,
  ListItemInput,
  ListName,
  LookAlikesRequest,
  LookAlikesResponse,
  PromoteInput,
  SavedSearch,
  SavedSearchInput,
} from '../../shared/schemas/analogues';
import { searchQueryToUrl } from '../../shared/schemas/analogues';
import { API_BASE, apiFetch, apiRequest } from './http';

/** The search's URL form as a plain query object for apiFetch. */
function queryObject(q: AnalogueSearchInput): Record<string, string> {
  return Object.fromEntries(searchQueryToUrl(q).entries());
}

/** GET /api/analogues — one page of matches and the facet counts. */
export function searchAnalogues(q: AnalogueSearchInput, signal?: AbortSignal): Promise<AnalogueSearchResponse> {
  return apiFetch<AnalogueSearchResponse>('/analogues', { query: queryObject(q), signal });
}

/** GET /api/analogues/:id */
export function getAnalogue(id: number): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>(`/analogues/${id}`);
}

/** PATCH /api/analogues/:id (curator, admin); 409 version_conflict when someone saved first. */
export function updateAnalogue(id: number, input: AnalogueUpdateInput): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>(`/analogues/${id}`, { method: 'PATCH', body: input });
}

/** DELETE /api/analogues/:id (curator, admin) */
export function deleteAnalogue(id: number): Promise<void> {
  return apiFetch<void>(`/analogues/${id}`, { method: 'DELETE' });
}

/** POST /api/analogues (curator, admin) — an analogue from a publication. */
export function createAnalogue(input: HandEntryInput): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>('/analogues', { method: 'POST', body: input });
}

/** POST /api/analogues/:id/accept (curator, admin) — a pending request joins the library. */
export function acceptAnalogue(id: number): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>(`/analogues/${id}/accept`, { method: 'POST' });
}

/** POST /api/analogues/:id/decline (curator, admin) */
export function declineAnalogue(id: number, reason: string): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>(`/analogues/${id}/decline`, { method: 'POST', body: { reason } });
}

/**
 * POST /api/buildups/:id/promote — curators and admins add the buildup to the
 * library at once; an interpreter's promotion waits for a curator (status 'pending').
 */
export function promoteBuildup(buildupId: number, input: PromoteInput = {}): Promise<AnalogueDetail> {
  return apiFetch<AnalogueDetail>(`/buildups/${buildupId}/promote`, { method: 'POST', body: input });
}

/** POST /api/analogues/look-alikes */
export function findLookAlikes(req: LookAlikesRequest): Promise<LookAlikesResponse> {
  return apiFetch<LookAlikesResponse>('/analogues/look-alikes', { method: 'POST', body: req });
}

/** GET /api/analogues/lists — setting, factory and climate values with labels. */
export function getControlledLists(): Promise<ControlledLists> {
  return apiFetch<ControlledLists>('/analogues/lists');
}

/** POST /api/analogues/lists/:list (curator, admin); 409 list_value_exists when the value is there already. */
export function addListItem(list: ListName, item: ListItemInput): Promise<ListItem> {
  return apiFetch<ListItem>(`/analogues/lists/${list}`, { method: 'POST', body: item });
}

/** DELETE /api/analogues/lists/:list/:value (curator, admin); 409 list_value_in_use while any analogue carries it. */
export function removeListItem(list: ListName, value: string): Promise<void> {
  return apiFetch<void>(`/analogues/lists/${list}/${encodeURIComponent(value)}`, { method: 'DELETE' });
}

/** GET /api/analogues/ics-chart */
export function getIcsChart(): Promise<IcsChartResponse> {
  return apiFetch<IcsChartResponse>('/analogues/ics-chart');
}

/** GET /api/analogues/saved-searches — the asker's own. */
export function listSavedSearches(): Promise<SavedSearch[]> {
  return apiFetch<SavedSearch[]>('/analogues/saved-searches');
}

/** POST /api/analogues/saved-searches */
export function createSavedSearch(input: SavedSearchInput): Promise<SavedSearch> {
  return apiFetch<SavedSearch>('/analogues/saved-searches', { method: 'POST', body: input });
}

/** DELETE /api/analogues/saved-searches/:id */
export function deleteSavedSearch(id: number): Promise<void> {
  return apiFetch<void>(`/analogues/saved-searches/${id}`, { method: 'DELETE' });
}

// ---------------------------------------------------------------------------
// Files and multipart bodies, through the one request path (http.ts
// `apiRequest`: the Bearer token, ApiError, a 401 signs the person out)

function send(url: string, init: { method?: 'POST'; body?: FormData; signal?: AbortSignal }, fallback: string): Promise<Response> {
  return apiRequest(url, { ...init, fallback: (status) => (status === 413 ? 'The file is larger than the server accepts.' : `${fallback} (${status})`) });
}

/** GET /api/analogues/:id/crop as an object URL (the caller revokes it). */
export async function loadAnalogueCrop(id: number, signal?: AbortSignal): Promise<string> {
  const res = await send(`${API_BASE}/analogues/${id}/crop`, { signal }, 'The image could not be loaded');
  return URL.createObjectURL(await res.blob());
}

/** GET /api/analogues/export.csv|geojson for a search; resolves with the file's blob and a name for it. */
export async function exportAnalogues(q: AnalogueSearchInput, format: 'csv' | 'geojson'): Promise<{ blob: Blob; filename: string }> {
  const params = searchQueryToUrl({ ...q, page: undefined, pageSize: undefined });
  const qs = params.toString();
  const res = await send(`${API_BASE}/analogues/export.${format}${qs ? `?${qs}` : ''}`, {}, 'The export failed');
  const stamp = new Date().toISOString().slice(0, 10);
  return { blob: await res.blob(), filename: `analogues-${stamp}.${format}` };
}

function importForm(file: File, mapping?: ImportMapping, mode?: 'all' | 'goodRowsOnly'): FormData {
  const form = new FormData();
  form.append('file', file, file.name);
  if (mapping) form.append('mapping', JSON.stringify(mapping));
  if (mode) form.append('mode', mode);
  return form;
}

/** POST /api/analogues/import/preview (curator, admin): headers, suggested mapping and the validation report; nothing stored. */
export async function previewImport(file: File, mapping?: ImportMapping): Promise<ImportPreview> {
  const res = await send(`${API_BASE}/analogues/import/preview`, { method: 'POST', body: importForm(file, mapping) }, 'The file could not be read');
  return (await res.json()) as ImportPreview;
}

/**
 * POST /api/analogues/import (curator, admin). Mode 'all' answers 422
 * import_has_errors (details: the report) while any row is bad.
 */
export async function runImport(file: File, mapping: ImportMapping, mode: 'all' | 'goodRowsOnly'): Promise<ImportResult> {
  const res = await send(`${API_BASE}/analogues/import`, { method: 'POST', body: importForm(file, mapping, mode) }, 'The import failed');
  return (await res.json()) as ImportResult;
}
