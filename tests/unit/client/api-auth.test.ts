/**
 * One request path on the client (client/api/http.ts): JSON calls, tiles and
 * images, file downloads and multipart uploads all add the Bearer token and
 * turn a refused token (401) into `ApiError` and the end of the session
 * (`onUnauthorized`). Tiles, uploads and downloads used to call fetch /
 * XMLHttpRequest themselves, so a 401 there never signed the person out.
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { configureAuth, apiFetch, isApiError } from '../../../client/api/http';
import { clearSectionImageCache, loadSectionImage, uploadSection } from '../../../client/api/sections';
import { fetchRegisterExport } from '../../../client/api/register';
import { fetchExport, loadPreviewUrl } from '../../../client/api/reports';
import { loadAnalogueCrop } from '../../../client/api/analogues';

let token: string | null = 'tok-1';
const onUnauthorized = vi.fn();
const seen: { url: string; auth: string | null }[] = [];

function answer(status: number, body: unknown, type = 'application/json'): Response {
  return new Response(typeof body === 'string' ? body : JSON.stringify(body), { status, headers: { 'content-type': type } });
}

function stubFetch(res: () => Response): void {
  vi.stubGlobal(
    'fetch',
    vi.fn(async (url: string, init: RequestInit = {}) => {
      const h = (init.headers ?? {}) as Record<string, string>;
      seen.push({ url, auth: h.Authorization ?? null });
      return res();
    }),
  );
}

const expired = () => answer(401, { code: 'unauthorized', message: 'Your session has ended' });

/** A stand-in XMLHttpRequest answering `status` with `body` after one progress event. */
function stubXhr(status: number, body: unknown): { headers: Record<string, string> } {
  const log = { headers: {} as Record<string, string> };
  class FakeXhr {
    status = 0;
    responseText = '';
    upload: { onprogress: ((e: { lengthComputable: boolean; loaded: number; total: number }) => void) | null } = { onprogress: null };
    onload: (() => void) | null = null;
    onerror: (() => void) | null = null;
    onabort: (() => void) | null = null;
    open(): void {}
    setRequestHeader(k: string, v: string): void {
      log.headers[k] = v;
    }
    getResponseHeader(): string | null {
      return null;
    }
    abort(): void {
      this.onabort?.();
    }
    send(): void {
      queueMicrotask(() => {
        this.upload.onprogress?.({ lengthComputable: true, loaded: 5, total: 10 });
        this.status = status;
        this.responseText = JSON.stringify(body);
        this.onload?.();
      });
    }
  }
  vi.stubGlobal('XMLHttpRequest', FakeXhr);
  return log;
}

async function rejection(p: Promise<unknown>): Promise<unknown> {
  try {
    await p;
  } catch (e) {
    return e;
  }
  throw new Error('expected a rejection');
}

beforeEach(() => {
  token = 'tok-1';
  seen.length = 0;
  onUnauthorized.mockReset();
  configureAuth({ getToken: () => token, onUnauthorized });
  clearSectionImageCache();
});
afterEach(() => {
  vi.unstubAllGlobals();
});

describe('a 401 signs the person out on every request path', () => {
  it('JSON calls (apiFetch)', async () => {
    stubFetch(expired);
    const e = await rejection(apiFetch('/projects'));
    expect(isApiError(e) && e.status).toBe(401);
    expect(isApiError(e) && e.message).toBe('Your session has ended');
    expect(onUnauthorized).toHaveBeenCalledTimes(1);
    expect(seen[0]).toEqual({ url: '/api/projects', auth: 'Bearer tok-1' });
  });

  it('tiles and previews loaded for the canvas (loadSectionImage)', async () => {
    stubFetch(expired);
    const e = await rejection(loadSectionImage('/api/sections/7/tiles/0/0/0.jpg'));
    expect(isApiError(e) && e.status).toBe(401);
    expect(onUnauthorized).toHaveBeenCalledTimes(1);
    expect(seen[0]).toEqual({ url: '/api/sections/7/tiles/0/0/0.jpg', auth: 'Bearer tok-1' });
  });

  it('a tile that loads is decoded from the answer and cached (no sign-out)', async () => {
    const bitmap = { width: 512, height: 512 };
    vi.stubGlobal('createImageBitmap', vi.fn(async () => bitmap));
    stubFetch(() => new Response(new Uint8Array([0xff, 0xd8, 0xff]), { status: 200, headers: { 'content-type': 'image/jpeg' } }));
    await expect(loadSectionImage('/api/sections/7/tiles/0/0/1.jpg')).resolves.toBe(bitmap);
    await expect(loadSectionImage('/api/sections/7/tiles/0/0/1.jpg')).resolves.toBe(bitmap);
    expect(seen).toHaveLength(1);
    expect(onUnauthorized).not.toHaveBeenCalled();
  });

  it('section uploads (uploadSection, XMLHttpRequest with progress)', async () => {
    const log = stubXhr(401, { code: 'unauthorized', message: 'Your session has ended' });
    const file = new File([new Uint8Array(10)], 'tb11.png', { type: 'image/png' });
    const progress: number[] = [];
    const e = await rejection(uploadSection(3, { title: 'TB-11' } as never, file, { onProgress: (p) => progress.push(p.fraction) }));
    expect(isApiError(e) && e.status).toBe(401);
    expect(onUnauthorized).toHaveBeenCalledTimes(1);
    expect(log.headers.Authorization).toBe('Bearer tok-1');
    expect(progress).toEqual([0.5]);
  });

  it('an accepted upload resolves with the answer and reports completion', async () => {
    stubXhr(202, { id: 41, status: 'processing' });
    const file = new File([new Uint8Array(10)], 'tb11.png', { type: 'image/png' });
    const progress: number[] = [];
    await expect(uploadSection(3, { title: 'TB-11' } as never, file, { onProgress: (p) => progress.push(p.fraction) })).resolves.toEqual({ id: 41, status: 'processing' });
    expect(progress).toEqual([0.5, 1]);
    expect(onUnauthorized).not.toHaveBeenCalled();
  });

  it('file downloads: register export, report export, section preview, analogue crop', async () => {
    stubFetch(expired);
    for (const call of [
      () => fetchRegisterExport(3, 'csv', {}),
      () => fetchExport(5, 'csv'),
      () => loadPreviewUrl(7),
      () => loadAnalogueCrop(9),
    ]) {
      const e = await rejection(call());
      expect(isApiError(e) && e.status).toBe(401);
    }
    expect(onUnauthorized).toHaveBeenCalledTimes(4);
    expect(seen.every((s) => s.auth === 'Bearer tok-1')).toBe(true);
  });
});

describe('when a 401 does not sign out', () => {
  it('signed out already (no token sent): the error only', async () => {
    token = null;
    stubFetch(expired);
    const e = await rejection(loadSectionImage('/api/sections/7/preview'));
    expect(isApiError(e) && e.status).toBe(401);
    expect(seen[0].auth).toBeNull();
    expect(onUnauthorized).not.toHaveBeenCalled();
  });

  it('a call that opts out (authRedirect: false, e.g. sign-out itself)', async () => {
    stubFetch(expired);
    await rejection(apiFetch('/auth/logout', { method: 'POST', authRedirect: false }));
    expect(onUnauthorized).not.toHaveBeenCalled();
  });

  it('other refusals (403) keep their message and never sign out', async () => {
    stubFetch(() => answer(403, 'nope', 'text/plain'));
    const e = await rejection(loadSectionImage('/api/sections/7/tiles/1/0/0.jpg'));
    expect(isApiError(e) && e.message).toBe('The image could not be loaded (403)');
    expect(onUnauthorized).not.toHaveBeenCalled();
  });
});
