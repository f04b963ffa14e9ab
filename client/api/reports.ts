/**
 * Reports API: the report of one buildup as data, its report job (PDF and
 * the marked-up crop) and its exports as files. Files are fetched with the
 * Bearer token and handed to the browser as a download (`saveBlob`).
 */
import type { BuildupReport, ExportFormat, Paper } from '../../shared/report/report';
import type { LengthUnit } from '../../shared/units';
import { apiFetch, apiRequest } from './http';

export interface ReportStatus {
  id: number;
  buildupId: number;
  cacheKey: string;
  status: 'queued' | 'running' | 'ready' | 'failed';
  progress: number;
  paper: string;
  unit: string;
  stretch: number;
  pages: number | null;
  bytes: number | null;
  failureReason: string | null;
  updatedAt: string;
}

export interface ReportChoices {
  unit?: LengthUnit;
  stretch?: number;
  paper?: Paper;
}

export function getReport(buildupId: number, choices: Pick<ReportChoices, 'unit' | 'stretch'> = {}, signal?: AbortSignal): Promise<BuildupReport> {
  return apiFetch(`/buildups/${buildupId}/report`, { query: { unit: choices.unit, stretch: choices.stretch }, signal });
}

export function requestReportPdf(buildupId: number, choices: ReportChoices): Promise<ReportStatus> {
  return apiFetch(`/buildups/${buildupId}/report/pdf`, { method: 'POST', body: choices });
}

export function getReportStatus(reportId: number, signal?: AbortSignal): Promise<ReportStatus> {
  return apiFetch(`/reports/${reportId}`, { signal });
}

export function exportUrl(buildupId: number, format: ExportFormat, choices: ReportChoices & { bom?: boolean } = {}): string {
  const q = new URLSearchParams();
  if (choices.unit) q.set('unit', choices.unit);
  if (choices.stretch) q.set('stretch', String(choices.stretch));
  if (choices.paper) q.set('paper', choices.paper);
  if (choices.bom) q.set('bom', '1');
  const s = q.toString();
  return `/api/buildups/${buildupId}/export/${format}${s ? `?${s}` : ''}`;
}

/** The file name from a Content-Disposition header (`attachment; filename="…"`). */
export function fileNameFrom(header: string | null, fallback: string): string {
  const m = header ? /filename="([^"]+)"/.exec(header) : null;
  return m ? m[1] : fallback;
}

export type ExportResult = { kind: 'file'; blob: Blob; fileName: string } | { kind: 'preparing'; report: ReportStatus };

/** Fetch an export: the file, or (202) the report job that is making it. */
export async function fetchExport(buildupId: number, format: ExportFormat, choices: ReportChoices & { bom?: boolean } = {}): Promise<ExportResult> {
  const res = await apiRequest(exportUrl(buildupId, format, choices), {
    headers: { Accept: '*/*' },
    networkMessage: 'Cannot reach the Cayline server.',
    fallback: (status) => `The export failed (${status})`,
  });
  if (res.status === 202) return { kind: 'preparing', report: ((await res.json()) as { report: ReportStatus }).report };
  return { kind: 'file', blob: await res.blob(), fileName: fileNameFrom(res.headers.get('Content-Disposition'), `export.${format}`) };
}

/** Hand a blob to the browser as a download. */
export function saveBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = fileName;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** The section's preview (fits 2048 px) as an object URL for the report's crop; the caller revokes it. */
export async function loadPreviewUrl(sectionId: number): Promise<string> {
  const res = await apiRequest(`/api/sections/${sectionId}/preview`, { headers: { Accept: 'image/*' }, fallback: (status) => `The section preview could not be loaded (${status})` });
  return URL.createObjectURL(await res.blob());
}
