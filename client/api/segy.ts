/**
 * SEG-Y uploads and a SEG-Y section's headers, amplitudes and rendering
 * (server/routes/segy.routes.ts). The upload sends the form's fields before
 * the file (the server reads the file while it arrives, steered by them).
 */
import { apiFetch, apiUpload, type UploadProgress } from './http';
import type {
  AmplitudeWindow,
  RenderSettings,
  SegyExtractInput,
  SegyHeaderView,
  SegyTraceHeaderPage,
  SegyUploadAccepted,
  SegyUploadInfo,
  SegyUploadInput,
} from '../../shared/schemas/segy';

export type { AmplitudeWindow, RenderSettings, SegyHeaderView, SegyTraceHeaderPage, SegyUploadAccepted, SegyUploadInfo, SegyUploadInput };

export async function uploadSegy(
  projectId: number,
  fields: SegyUploadInput,
  file: File,
  options: { onProgress?: (p: UploadProgress) => void; signal?: AbortSignal } = {},
): Promise<SegyUploadAccepted> {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) {
    if (v === undefined || v === null || v === '') continue;
    form.append(k, String(v));
  }
  form.append('file', file, file.name); // last: the fields steer the reading
  return apiUpload<SegyUploadAccepted>(`/projects/${projectId}/segy`, form, {
    signal: options.signal,
    fallback: (status) => (status === 413 ? 'The file is larger than the server accepts.' : `The upload failed (${status})`),
    onProgress: (p) => options.onProgress?.({ ...p, total: p.total || file.size, fraction: p.total ? p.fraction : Math.min(1, p.loaded / file.size) }),
  });
}

export const getSegyUpload = (id: number) => apiFetch<SegyUploadInfo>(`/segy-uploads/${id}`);
export const extractSegySection = (uploadId: number, input: SegyExtractInput) =>
  apiFetch<{ id: number; status: 'processing' }>(`/segy-uploads/${uploadId}/sections`, { method: 'POST', body: input });
export const getSegyHeaders = (sectionId: number) => apiFetch<SegyHeaderView>(`/sections/${sectionId}/segy`);
export const getTraceHeaders = (sectionId: number, page: number, pageSize: number) =>
  apiFetch<SegyTraceHeaderPage>(`/sections/${sectionId}/segy/trace-headers?page=${page}&pageSize=${pageSize}`);
export const getAmplitudes = (sectionId: number, w: { trace: number; sample: number; traces?: number; samples?: number }, signal?: AbortSignal) =>
  apiFetch<AmplitudeWindow>(`/sections/${sectionId}/amplitudes?trace=${w.trace}&sample=${w.sample}&traces=${w.traces ?? 1}&samples=${w.samples ?? 1}`, { signal });
export const renderSection = (sectionId: number, settings: RenderSettings) =>
  apiFetch<{ id: number; status: 'processing' }>(`/sections/${sectionId}/render`, { method: 'POST', body: settings });
export const listSegyUploads = (projectId: number) => apiFetch<{ items: SegyUploadInfo[] }>(`/projects/${projectId}/segy`);
