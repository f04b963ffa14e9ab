/**
 * Request body sizes: a small JSON limit for /api (JSON_MAX_BYTES, 1 MB by
 * default), 16 KB for sign-in, and a large one (20 MB) only on the routes that
 * need it (saving a buildup, POST /api/measure), parsed after requireAuth so an
 * anonymous large body is answered without being read. 413 answers name the
 * limit.
 *
 * "Not read" is shown with a request that declares a large Content-Length and
 * sends only a few bytes of it: a server that waits for the body never answers
 * (the request's own timeout then fails the test); one that does not, answers
 * at once.
 */
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup } from '../helpers/api-fixtures';
import { makeImage, tmpSettles, entries } from '../helpers/sections';
import { ownBodyRoutes } from '../../server/middlewares/body';

const MB = 1024 * 1024;
let t: TestApp;
let interp: string;
let port: number;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  port = Number(new URL(t.running.url).port);
  interp = await t.token('interpreter');
}, 60_000);
afterAll(async () => t?.close());

interface Early {
  status: number;
  body: { code?: string; message?: string };
  /** Bytes of the body sent before the answer came. */
  sent: number;
}

/**
 * Declare `declared` bytes of JSON, send only the first 16 KB, and wait for an
 * answer. Resolves with the answer; rejects when none comes within 15 s (the
 * server is waiting for the rest of the body).
 */
function declareAndStall(method: string, path: string, declared: number, headers: Record<string, string> = {}): Promise<Early> {
  return new Promise((resolve, reject) => {
    const head = Buffer.from('{"version":0,"geometry":{"base":[' + '[1,2],'.repeat(2700));
    const req = http.request({ host: '127.0.0.1', port, method, path, headers: { 'content-type': 'application/json', 'content-length': String(declared), ...headers } });
    const timer = setTimeout(() => {
      req.destroy();
      reject(new Error(`no answer to ${method} ${path} while the body is incomplete: the server is reading the body`));
    }, 15_000);
    req.on('response', (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (c) => (text += c));
      res.on('end', () => {
        clearTimeout(timer);
        req.destroy();
        resolve({ status: res.statusCode!, body: text ? JSON.parse(text) : {}, sent: head.length });
      });
    });
    req.on('error', () => {}); // the socket is destroyed by us after the answer
    req.write(head);
  });
}

describe('anonymous large bodies are not read', () => {
  it('PUT /api/buildups/:id (a large-body route) answers 401 before the body arrives', async () => {
    const r = await declareAndStall('PUT', '/api/buildups/1', 20 * MB);
    expect(r.status).toBe(401);
    expect(r.body.code).toBe('unauthorized');
  });

  it('POST /api/measure answers 401 before the body arrives', async () => {
    const r = await declareAndStall('POST', '/api/measure', 19 * MB);
    expect(r.status).toBe(401);
  });

  it('a small route refuses a declared 20 MB body at once with 413 naming the limit', async () => {
    const r = await declareAndStall('POST', '/api/projects', 20 * MB);
    expect([401, 413]).toContain(r.status);
    if (r.status === 413) {
      expect(r.body.code).toBe('too_large');
      expect(r.body.message).toContain('1 MB');
    }
  });

  it('sign-in refuses a declared 1 MB body at once with 413 naming its 16 KB limit', async () => {
    const r = await declareAndStall('POST', '/api/auth/login', 1 * MB);
    expect(r.status).toBe(413);
    expect(r.body.code).toBe('too_large');
    expect(r.body.message).toContain('16 KB');
  });
});

describe('signed-in bodies', () => {
  it('a 2 MB body to a small route is 413 naming the 1 MB limit', async () => {
    const body = { name: 'Shoal study', description: 'x'.repeat(2 * MB) };
    const r = await sendRaw('POST', '/api/projects', JSON.stringify(body), interp);
    expect(r.status).toBe(413);
    expect(r.body.code).toBe('too_large');
    expect(r.body.message).toMatch(/larger than the limit of 1 MB/);
  });

  it('a chunked body (no Content-Length) over the limit is 413 too', async () => {
    const r = await new Promise<{ status: number; body: { code?: string; message?: string } }>((resolve, reject) => {
      const req = http.request({ host: '127.0.0.1', port, method: 'POST', path: '/api/projects', headers: { 'content-type': 'application/json', ...bearer(interp) } });
      req.on('response', (res) => {
        let text = '';
        res.setEncoding('utf8');
        res.on('data', (c) => (text += c));
        res.on('end', () => resolve({ status: res.statusCode!, body: JSON.parse(text) }));
      });
      req.on('error', reject);
      expect(req.getHeader('content-length')).toBeUndefined(); // so Node sends it chunked
      req.write('{"name":"Shoal","description":"');
      for (let i = 0; i < 9; i++) req.write('y'.repeat(128 * 1024));
      req.end('"}');
    });
    expect(r.status).toBe(413);
    expect(r.body.code).toBe('too_large');
    expect(r.body.message).toContain('1 MB');
  });

  it('sign-in with a 20 KB body is 413 naming 16 KB; a normal sign-in still works', async () => {
    const big = await request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: 'p'.repeat(20 * 1024) });
    expect(big.status).toBe(413);
    expect(big.body.message).toContain('16 KB');
    const ok = await request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: 'cayline-demo' });
    expect(ok.status).toBe(200);
  });

  it('a 5 MB buildup save is accepted; one over 20 MB is 413 naming the limit', async () => {
    const p = await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Kestrel Knoll bodies' });
    const sectionId = await readyCalibratedSection(t, interp, p.body.id);
    const b = await savedBuildup(t, interp, sectionId, 'Kestrel Knoll large');
    // 3 cycles of a 19 000-vertex top and two flanks: ~5.5 MB of JSON
    const line = (y0: number) => Array.from({ length: 19_000 }, (_, i) => [10 + i * 0.009473684, y0 + Math.sin(i / 300) * 3.123456]);
    const geometry = {
      base: line(90),
      cycles: [1, 2, 3].map((index) => ({ index, top: line(60 - index * 5), flankLeft: line(70), flankRight: line(71), marginLeft: null, marginRight: null })),
      terminations: [],
      topIsDrowningSurface: false,
    };
    const text = JSON.stringify({ version: b.version, geometry });
    expect(text.length).toBeGreaterThan(5 * MB);
    expect(text.length).toBeLessThan(20 * MB);
    const saved = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).set('Content-Type', 'application/json').send(text);
    expect(saved.status, JSON.stringify(saved.body).slice(0, 300)).toBe(200);

    const huge = await sendRaw('PUT', `/api/buildups/${b.id}`, JSON.stringify({ version: saved.body.version, geometry, pad: 'z'.repeat(21 * MB) }), interp);
    expect(huge.status).toBe(413);
    expect(huge.body.message).toContain('20 MB');
  }, 90_000);
});

/** Send a whole body (or as much as the server takes before it answers) over raw HTTP; resolve with the answer. */
function sendRaw(method: string, path: string, body: string, token: string): Promise<Early> {
  return new Promise((resolve, reject) => {
    const buf = Buffer.from(body);
    const req = http.request({ host: '127.0.0.1', port, method, path, headers: { 'content-type': 'application/json', 'content-length': String(buf.length), ...bearer(token) } });
    const timer = setTimeout(() => {
      req.destroy();
      reject(new Error(`no answer to ${method} ${path}`));
    }, 60_000);
    req.on('response', (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (c) => (text += c));
      res.on('end', () => {
        clearTimeout(timer);
        req.destroy();
        resolve({ status: res.statusCode!, body: text ? JSON.parse(text) : {}, sent: buf.length });
      });
    });
    req.on('error', () => {});
    req.end(buf);
  });
}

describe('malformed multipart uploads', () => {
  /** POST a hand-made multipart body to the upload route. */
  const post = (contentType: string, body: Buffer | string) =>
    request(t.app).post(`/api/projects/${projectId}/sections`).set(bearer(interp)).set('Content-Type', contentType).send(body);
  let projectId: number;
  beforeAll(async () => {
    projectId = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'TB-14 multipart checks' })).body.id;
  });

  const part = (name: string, value: string) => `--xx\r\nContent-Disposition: form-data; name="${name}"\r\n\r\n${value}\r\n`;

  it('answers 400 bad_multipart naming the problem, with no row and no temp file', async () => {
    const png = (await makeImage('png', 64, 32)).toString('latin1');
    const filePart = `--xx\r\nContent-Disposition: form-data; name="image"; filename="s.png"\r\nContent-Type: image/png\r\n\r\n${png}`;
    const cases: [string, string, string | Buffer, RegExp][] = [
      ['no boundary', 'multipart/form-data', part('title', 'TB-14') + filePart + '\r\n--xx--\r\n', /no multipart boundary/],
      ['truncated inside the file', 'multipart/form-data; boundary=xx', Buffer.from(part('title', 'TB-14') + part('verticalDomain', 'twt_ms') + filePart.slice(0, filePart.length - 200), 'latin1'), /ends before the closing boundary/],
      ['no closing boundary', 'multipart/form-data; boundary=xx', Buffer.from(part('title', 'TB-14') + part('verticalDomain', 'twt_ms') + filePart + '\r\n', 'latin1'), /ends before the closing boundary/],
      ['boundary that never appears', 'multipart/form-data; boundary=yy', Buffer.from(part('title', 'TB-14') + filePart + '\r\n--xx--\r\n', 'latin1'), /ends before the closing boundary/],
      ['malformed part header', 'multipart/form-data; boundary=xx', `--xx\r\nContent-Disposition form-data name title\r\n${'h'.repeat(20)}\r\n\r\nTB-14\r\n--xx--\r\n`, /part header is malformed|closing boundary/],
    ];
    const stored = entries(t, 'sections').length;
    for (const [what, type, body, problem] of cases) {
      const r = await post(type, body);
      expect(r.status, `${what}: ${JSON.stringify(r.body)}`).toBe(400);
      expect(r.body.code, what).toBe('bad_multipart');
      expect(r.body.message, what).toMatch(problem);
    }
    expect(entries(t, 'sections').length).toBe(stored);
    expect((await request(t.app).get(`/api/projects/${projectId}/sections`).set(bearer(interp))).body.total).toBe(0);
    expect(await tmpSettles(t)).toEqual([]);
  });
});

describe('the route table', () => {
  it('only the routes that need it take large bodies, each after requireAuth; sign-in has its own small limit', () => {
    const own = ownBodyRoutes(t.app as never).map((r) => ({ ...r, before: r.before.includes('requireAuth') }));
    expect(own).toEqual(
      expect.arrayContaining([
        { method: 'PUT', path: '/api/buildups/:id', kind: 'large', before: true },
        { method: 'POST', path: '/api/measure', kind: 'large', before: true },
        { method: 'POST', path: '/api/auth/login', kind: 'signIn', before: false },
      ]),
    );
    expect(own.filter((r) => r.kind === 'large' && !r.before)).toEqual([]);
    expect(own.filter((r) => r.kind === 'large').length).toBe(2);
  });
});
