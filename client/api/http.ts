import type { ApiErrorBody } from '../../shared/api-errors';

/** An error answered by the API (or a network failure, status 0). */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details?: unknown;
  /** Seconds from a Retry-After header (rate limiting), when sent. */
  readonly retryAfter?: number;

  constructor(status: number, code: string, message: string, details?: unknown, retryAfter?: number) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.details = details;
    this.retryAfter = retryAfter;
  }
}

export function isApiError(e: unknown): e is ApiError {
  return e instanceof ApiError;
}

/** One field problem from a `validation_failed` answer. */
export interface FieldIssue {
  path: string;
  message: string;
}

/** The `details` of a validation error as a list of `{ path, message }`, or []. */
export function fieldIssues(e: unknown): FieldIssue[] {
  if (!isApiError(e) || !Array.isArray(e.details)) return [];
  return e.details
    .filter((d): d is { path: unknown; message: unknown } => typeof d === 'object' && d !== null && 'message' in d)
    .map((d) => ({
      path: Array.isArray(d.path) ? d.path.join('.') : String(d.path ?? ''),
      message: String(d.message),
    }));
}

/** A message fit to show a person for any thrown value. */
export function errorMessage(e: unknown, fallback = 'Something went wrong'): string {
  if (isApiError(e)) return e.message || fallback;
  if (e instanceof Error && e.message) return e.message;
  return fallback;
}

type QueryValue = string | number | boolean | null | undefined;

export interface ApiFetchOptions {
  method?: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
  body?: unknown;
  query?: Record<string, QueryValue>;
  signal?: AbortSignal;
  /** When false, a 401 does not sign the person out (used by logout itself). Default true. */
  authRedirect?: boolean;
}

interface AuthHooks {
  getToken: () => string | null;
  onUnauthorized: () => void;
}

let hooks: AuthHooks = { getToken: () => null, onUnauthorized: () => {} };

/**
 * Wire the client to the session: where the Bearer token comes from and what
 * happens when the server stops accepting it. Called once from main.ts, which
 * keeps this module free of an import cycle with the session store.
 */
export function configureAuth(next: AuthHooks): void {
  hooks = next;
}

export const API_BASE = '/api';

function buildUrl(path: string, query?: Record<string, QueryValue>): string {
  const url = path.startsWith('/api') ? path : `${API_BASE}${path.startsWith('/') ? '' : '/'}${path}`;
  if (!query) return url;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) {
    if (v === undefined || v === null || v === '') continue;
    params.set(k, String(v));
  }
  const s = params.toString();
  return s ? `${url}?${s}` : url;
}

async function readBody(res: Response): Promise<unknown> {
  if (res.status === 204) return undefined;
  const text = await res.text();
  if (!text) return undefined;
  const type = res.headers.get('content-type') ?? '';
  if (type.includes('json')) {
    try {
      return JSON.parse(text);
    } catch {
      return text;
    }
  }
  return text;
}

function asErrorBody(value: unknown): Partial<ApiErrorBody> {
  return typeof value === 'object' && value !== null ? (value as Partial<ApiErrorBody>) : {};
}

const STATUS_TEXT: Record<number, string> = {
  400: 'The request was not accepted',
  401: 'Please sign in again',
  403: 'You do not have permission to do this',
  404: 'Not found',
  409: 'This conflicts with existing data',
  429: 'Too many requests; wait a moment and try again',
};

/**
 * The one fetch client: JSON in and out, Bearer token from the session,
 * throws `ApiError { status, code, message, details }` on any non-2xx answer.
 */
export async function apiFetch<T>(path: string, options: ApiFetchOptions = {}): Promise<T> {
  const { method = 'GET', body, query, signal, authRedirect = true } = options;
  const headers: Record<string, string> = { Accept: 'application/json' };
  const token = hooks.getToken();
  if (token) headers.Authorization = `Bearer ${token}`;
  if (body !== undefined) headers['Content-Type'] = 'application/json';

  let res: Response;
  try {
    res = await fetch(buildUrl(path, query), {
      method,
      headers,
      body: body === undefined ? undefined : JSON.stringify(body),
      signal,
    });
  } catch (e) {
    if (e instanceof DOMException && e.name === 'AbortError') throw e;
    throw new ApiError(0, 'network_error', 'Cannot reach the Cayline server. Check your connection and try again.');
  }

  const data = await readBody(res);
  if (res.ok) return data as T;

  const err = asErrorBody(data);
  const retryHeader = Number(res.headers.get('retry-after'));
  const error = new ApiError(
    res.status,
    typeof err.code === 'string' ? err.code : `http_${res.status}`,
    typeof err.message === 'string' && err.message ? err.message : (STATUS_TEXT[res.status] ?? `Request failed (${res.status})`),
    err.details,
    Number.isFinite(retryHeader) && retryHeader > 0 ? retryHeader : undefined,
  );
  // A token that stops working (expired, logged out elsewhere) ends the session.
  if (res.status === 401 && token && authRedirect) hooks.onUnauthorized();
  throw error;
}
