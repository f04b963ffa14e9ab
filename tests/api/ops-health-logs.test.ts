/**
 * Operations: request ids and structured log lines, liveness and readiness.
 */
import fs from 'node:fs';
import path from 'node:path';
import express from 'express';
import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { logger, setLogSink } from '../../server/logger';
import { requestId } from '../../server/middlewares/request-id';
import { errorHandler } from '../../server/middlewares/errors';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ seed: false });
});
afterAll(async () => t?.close());

/** Collect the logger's lines at `info` while a test runs. */
function captureLogs(): Record<string, unknown>[] {
  const lines: Record<string, unknown>[] = [];
  setLogSink({ write: (s: string) => lines.push(JSON.parse(s)) });
  logger.level = 'debug';
  return lines;
}
afterEach(() => {
  setLogSink(null);
  logger.level = 'silent';
});

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

describe('request ids and log lines', () => {
  it('keeps a sane incoming X-Request-Id, echoes it, and logs one JSON line with level, time, msg and reqId', async () => {
    const lines = captureLogs();
    const r = await request(t.app).get('/api/projects').set('X-Request-Id', 'lb-7f3a.2:kestrel_01');
    expect(r.status).toBe(401);
    expect(r.headers['x-request-id']).toBe('lb-7f3a.2:kestrel_01');
    const done = lines.filter((l) => l.msg === 'request done' && l.reqId === 'lb-7f3a.2:kestrel_01');
    expect(done).toHaveLength(1);
    expect(done[0]).toMatchObject({ level: 'info', method: 'GET', path: '/api/projects', status: 401 });
    expect(new Date(String(done[0].time)).toISOString()).toBe(done[0].time); // ISO 8601
    expect(typeof done[0].ms).toBe('number');
  });

  it('replaces a missing or unsafe incoming id by a fresh UUID, different per request', async () => {
    const a = await request(t.app).get('/api/health/live');
    const b = await request(t.app).get('/api/health/live').set('X-Request-Id', 'x'.repeat(129));
    const c = await request(t.app).get('/api/health/live').set('X-Request-Id', 'two words<script>');
    for (const r of [a, b, c]) expect(r.headers['x-request-id']).toMatch(UUID);
    expect(new Set([a, b, c].map((r) => r.headers['x-request-id'])).size).toBe(3);
  });

  it('does not log the query string (it may hold secrets)', async () => {
    const lines = captureLogs();
    await request(t.app).get('/api/projects?token=secret-value');
    expect(JSON.stringify(lines)).not.toContain('secret-value');
    expect(lines.some((l) => l.path === '/api/projects')).toBe(true);
  });

  it('an unexpected error is logged at error level with the request id, also after an await', async () => {
    const app = express();
    app.use(requestId);
    app.get('/boom', async () => {
      await new Promise((r) => setTimeout(r, 5));
      logger.warn('deep in a service');
      throw new Error('Kestrel Knoll exploded');
    });
    app.use(errorHandler);
    const lines = captureLogs();
    const r = await request(app).get('/boom').set('X-Request-Id', 'req-boom-1');
    expect(r.status).toBe(500);
    expect(r.body).toEqual({ code: 'internal', message: 'Something went wrong on the server' });
    const err = lines.find((l) => l.msg === 'unhandled error');
    expect(err).toMatchObject({ level: 'error', reqId: 'req-boom-1' });
    expect(JSON.stringify(err)).toContain('Kestrel Knoll exploded');
    expect(lines.find((l) => l.msg === 'deep in a service')).toMatchObject({ level: 'warn', reqId: 'req-boom-1' });
    expect(lines.find((l) => l.msg === 'request done')).toMatchObject({ level: 'error', status: 500, reqId: 'req-boom-1' });
    // lines outside any request carry no reqId
    logger.info('between requests');
    expect(lines.at(-1)).toMatchObject({ msg: 'between requests' });
    expect(lines.at(-1)).not.toHaveProperty('reqId');
  });
});

describe('health', () => {
  it('liveness answers without asking the database', async () => {
    const r = await request(t.app).get('/api/health/live');
    expect(r.status).toBe(200);
    expect(r.body.status).toBe('ok');
    expect(typeof r.body.uptimeSeconds).toBe('number');
  });

  it('readiness: database, migrations and store all ok', async () => {
    const r = await request(t.app).get('/api/health/ready');
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body).toEqual({ status: 'ok', checks: { database: 'ok', migrations: 'ok', store: 'ok' } });
    // the probe object is gone afterwards
    expect(fs.readdirSync(path.join(t.storageDir, 'health'))).toEqual([]);
  });

  it('readiness: 503 naming the migrations check while a migration is not recorded', async () => {
    const { ctx } = await import('../../server/context');
    const seq = ctx().sequelize;
    const [[last]] = (await seq.query('SELECT name FROM schema_migrations ORDER BY name DESC LIMIT 1')) as [{ name: string }[], unknown];
    await seq.query('DELETE FROM schema_migrations WHERE name = :name', { replacements: { name: last.name } });
    try {
      const r = await request(t.app).get('/api/health/ready');
      expect(r.status).toBe(503);
      expect(r.body.code).toBe('not_ready');
      expect(r.body.checks).toEqual({ database: 'ok', migrations: 'failed', store: 'ok' });
      expect(r.body.details).toEqual([{ path: 'checks.migrations', message: `1 pending: ${last.name}` }]);
      expect(r.body.message).toContain('migrations');
      expect(Number(r.headers['retry-after'])).toBeGreaterThan(0);
      // liveness does not care
      expect((await request(t.app).get('/api/health/live')).status).toBe(200);
    } finally {
      await seq.query('INSERT INTO schema_migrations (name) VALUES (:name)', { replacements: { name: last.name } });
    }
    expect((await request(t.app).get('/api/health/ready')).status).toBe(200);
  });

  it('readiness: 503 naming the store check when the store cannot take a write', async () => {
    const dir = path.join(t.storageDir, 'health');
    fs.rmSync(dir, { recursive: true, force: true });
    fs.writeFileSync(dir, 'not a folder'); // the probe's parent is a file: the write fails (also as root)
    try {
      const r = await request(t.app).get('/api/health/ready');
      expect(r.status).toBe(503);
      expect(r.body.checks).toEqual({ database: 'ok', migrations: 'ok', store: 'failed' });
      expect(r.body.details.map((d: { path: string }) => d.path)).toEqual(['checks.store']);
    } finally {
      fs.rmSync(dir, { force: true });
    }
    expect((await request(t.app).get('/api/health/ready')).status).toBe(200);
  });

  it('/api/health keeps its original answer', async () => {
    const r = await request(t.app).get('/api/health');
    expect(r.status).toBe(200);
    expect(r.body).toEqual({ status: 'ok', db: 'ok' });
  });
});
