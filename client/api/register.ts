/**
 * The project buildup register and one's display preferences. Numbers come
 * in SI (m, m², m³, degrees); range filters are sent in SI too (convert from
 * the display unit with shared/units.ts). Exports are fetched with the Bearer
 * token and handed to the browser as a download.
 */
import type { BatchReportJob, Preferences, RegisterPage, RegisterQuery } from '../../shared/schemas/register';
import type { LengthUnit } from '../../shared/units';
import { apiFetch, apiRequest } from './http';

export type RegisterParams = Partial<Omit<RegisterQuery, 'classification' | 'reviewState'>> & { classification?: string[]; reviewState?: string[] };

function queryOf(p: RegisterParams & { unit?: LengthUnit; bom?: boolean }): Record<string, string | number | undefined> {
  const out: Record<string, string | number | undefined> = {};
  for (const [k, v] of Object.entries(p)) {
    if (v === undefined || v === null || v === '') continue;
    if (Array.isArray(v)) {
      if (v.length) out[k] = v.join(',');
    } else if (typeof v === 'boolean') out[k] = v ? '1' : '0';
    else out[k] = v as string | number;
  }
  return out;
}

export function getRegister(projectId: number, params: RegisterParams, signal?: AbortSignal): Promise<RegisterPage> {
  return apiFetch(`/projects/${projectId}/buildups`, { query: queryOf(params), signal });
}

export function getPreferences(): Promise<Preferences> {
  return apiFetch('/me/preferences');
}

export function putPreferences(p: Preferences): Promise<Preferences> {
  return apiFetch('/me/preferences', { method: 'PUT', body: p });
}

export type RegisterFormat = 'csv' | 'geojson';

/** Fetch a register export (filters and order as shown, all pages): the file and its name. */
export async function fetchRegisterExport(
  projectId: number,
  format: RegisterFormat,
  params: RegisterParams & { unit?: LengthUnit; bom?: boolean },
): Promise<{ blob: Blob; fileName: string }> {
  const { page: _page, pageSize: _size, ...filters } = params;
  const q = new URLSearchParams(Object.entries(queryOf(filters)).map(([k, v]) => [k, String(v)]));
  const res = await apiRequest(`/api/projects/${projectId}/buildups/export.${format}${q.toString() ? `?${q}` : ''}`, {
    headers: { Accept: '*/*' },
    networkMessage: 'Cannot reach the Cayline server.',
    fallback: (status) => `The export failed (${status})`,
  });
  const m = /filename="([^"]+)"/.exec(res.headers.get('content-disposition') ?? '');
  return { blob: await res.blob(), fileName: m ? m[1] : `buildups.${format}` };
}

/** Start the batch of every signed-off buildup's report (one ZIP archive of PDFs). */
export function startReportBatch(projectId: number, choices: { paper?: 'a4' | 'letter'; unit?: LengthUnit }): Promise<BatchReportJob> {
  return apiFetch(`/projects/${projectId}/buildups/report-batch`, { method: 'POST', body: choices });
}

export function getReportBatch(id: string, signal?: AbortSignal): Promise<BatchReportJob> {
  return apiFetch(`/report-batches/${encodeURIComponent(id)}`, { signal });
}

/** The finished batch's archive. */
export async function fetchReportBatchFile(id: string): Promise<{ blob: Blob; fileName: string }> {
  const res = await apiRequest(`/api/report-batches/${encodeURIComponent(id)}/file`, {
    headers: { Accept: '*/*' },
    networkMessage: 'Cannot reach the Cayline server.',
    fallback: (status) => `The download failed (${status})`,
  });
  const m = /filename="([^"]+)"/.exec(res.headers.get('content-disposition') ?? '');
  return { blob: await res.blob(), fileName: m ? m[1] : 'signed-off-reports.zip' };
}
