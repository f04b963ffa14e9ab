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
  const url = path.startsWith('/api') || /^https?:\/\//.test(path) ? path : `${API_BASE}${path.startsWith('/') ? '' : '/'}${path}`;
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

const NETWORK_MESSAGE = 'Cannot reach the Cayline server. Check your connection and try again.';

/** The Bearer token of the session now (null when signed out). */
export function currentToken(): string | null {
  return hooks.getToken();
}

/** `Authorization` for the session's token, or nothing when signed out. */
export function authHeaders(): Record<string, string> {
  const token = hooks.getToken();
  return token ? { Authorization: `Bearer ${token}` } : {};
}

export interface AnswerErrorOptions {
  /** The token the request carried: only a refused token ends the session. */
  token: string | null;
  /** When false, a 401 does not sign the person out. Default true. */
  authRedirect?: boolean;
  /** Message when the answer carries none (else the status's house text). */
  fallback?: (status: number) => string | undefined;
}

/**
 * A non-2xx answer as `ApiError { status, code, message, details, retryAfter }`.
 * A 401 for a token that was sent ends the session (`onUnauthorized`): every
 * request path — JSON, files, images, uploads — comes through here.
 */
export function answerError(status: number, data: unknown, retryAfter: string | null, o: AnswerErrorOptions): ApiError {
  const err = asErrorBody(data);
  const retry = Number(retryAfter);
  const error = new ApiError(
    status,
    typeof err.code === 'string' ? err.code : `http_${status}`,
    typeof err.message === 'string' && err.message ? err.message : (o.fallback?.(status) ?? STATUS_TEXT[status] ?? `Request failed (${status})`),
    err.details,
    retryAfter !== null && Number.isFinite(retry) && retry > 0 ? retry : undefined,
  );
  // A token that stops working (expired, logged out elsewhere) ends the session.
  if (status === 401 && o.token && (o.authRedirect ?? true)) hooks.onUnauthorized();
  return error;
}

export interface ApiRequestOptions extends Omit<ApiFetchOptions, 'body'> {
  /** JSON (any value) or a ready body (FormData, Blob, URLSearchParams). */
  body?: unknown;
  headers?: Record<string, string>;
  /** Message of a failed answer that carries none. */
  fallback?: (status: number) => string | undefined;
  /** Message when the server cannot be reached. */
  networkMessage?: string;
}

const isRawBody = (b: unknown): b is BodyInit =>
  (typeof FormData !== 'undefined' && b instanceof FormData) || (typeof Blob !== 'undefined' && b instanceof Blob) || b instanceof URLSearchParams;

/**
 * The one request path: adds the Bearer token, turns a failed connection into
 * `ApiError(0, 'network_error')` and any non-2xx answer into `ApiError` (a
 * 401 signs the person out). Resolves with the successful `Response`, body
 * unread: for files and images (`.blob()`); JSON callers use `apiFetch`.
 */
export async function apiRequest(path: string, options: ApiRequestOptions = {}): Promise<Response> {
  const { method = 'GET', body, query, signal, authRedirect = true } = options;
  const headers: Record<string, string> = { Accept: 'application/json', ...(options.headers ?? {}) };
  const token = hooks.getToken();
  if (token) headers.Authorization = `Bearer ${token}`;
  const raw = body === undefined || isRawBody(body);
  if (!raw) headers['Content-Type'] = 'application/json';

  let res: Response;
  try {
    res = await fetch(buildUrl(path, query), {
      method,
      headers,
      body: body === undefined ? undefined : raw ? (body as BodyInit) : JSON.stringify(body),
      signal,
    });
  } catch (e) {
    if (e instanceof DOMException && e.name === 'AbortError') throw e;
    throw new ApiError(0, 'network_error', options.networkMessage ?? NETWORK_MESSAGE);
  }
  if (res.ok) return res;
  throw answerError(res.status, await readBody(res), res.headers.get('retry-after'), { token, authRedirect, fallback: options.fallback });
}

/**
 * The one JSON client: JSON in and out, Bearer token from the session,
 * throws `ApiError { status, code, message, details }` on any non-2xx answer.
 */
export async function apiFetch<T>(path: string, options: ApiFetchOptions = {}): Promise<T> {
  const res = await apiRequest(path, options);
  return (await readBody(res)) as T;
}

export interface UploadProgress {
  loaded: number;
  total: number;
  /** 0..1 */
  fraction: number;
}

export interface ApiUploadOptions {
  method?: 'POST' | 'PUT';
  onProgress?: (p: UploadProgress) => void;
  signal?: AbortSignal;
  fallback?: (status: number) => string | undefined;
}

/**
 * A multipart upload with progress (XMLHttpRequest: fetch reports none), on
 * the same terms as `apiRequest`: Bearer token, `ApiError` on failure, a 401
 * signs the person out; aborting `signal` rejects with an `AbortError`.
 */
export function apiUpload<T>(path: string, form: FormData, options: ApiUploadOptions = {}): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const abortError = () => new DOMException('The upload was cancelled', 'AbortError');
    if (options.signal?.aborted) {
      reject(abortError());
      return;
    }
    const xhr = new XMLHttpRequest();
    xhr.open(options.method ?? 'POST', buildUrl(path));
    xhr.setRequestHeader('Accept', 'application/json');
    const token = hooks.getToken();
    if (token) xhr.setRequestHeader('Authorization', `Bearer ${token}`);
    xhr.upload.onprogress = (e) => {
      const total = e.lengthComputable ? e.total : 0;
      options.onProgress?.({ loaded: e.loaded, total, fraction: total > 0 ? Math.min(1, e.loaded / total) : 0 });
    };
    xhr.onload = () => {
      let data: unknown = undefined;
      const text = xhr.responseText;
      if (text) {
        try {
          data = JSON.parse(text);
        } catch {
          data = text;
        }
      }
      if (xhr.status >= 200 && xhr.status < 300) {
        if (typeof data === 'string') reject(new ApiError(xhr.status, 'bad_response', 'The server answered the upload with something unreadable.'));
        else resolve(data as T);
        return;
      }
      reject(answerError(xhr.status, data, xhr.getResponseHeader('retry-after'), { token, fallback: options.fallback }));
    };
    xhr.onerror = () => reject(new ApiError(0, 'network_error', 'The upload was interrupted. Check your connection and try again.'));
    xhr.onabort = () => reject(abortError());
    options.signal?.addEventListener('abort', () => xhr.abort(), { once: true });
    xhr.send(form);
  });
}
