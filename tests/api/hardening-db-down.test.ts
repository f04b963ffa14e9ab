/**
 * With PostgreSQL gone every route answers 503 `database_unavailable` with a
 * Retry-After header (not 500 "Something went wrong"), and the same app
 * answers normally again once the database is back, without a restart.
 *
 * The test runs its own small throwaway cluster (as tests/helpers/db-global-setup.ts
 * does for the suite) so it can stop and start it.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { startCluster, removeCluster, type ClusterHandle } from '../../server/db/cluster';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';

let dir: string;
let dataDir: string;
let cluster: ClusterHandle;
let t: TestApp;
let token: string;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-dbdown-'));
  fs.chmodSync(dir, 0o755);
  dataDir = path.join(dir, 'data');
  process.env.CAYLINE_PG_FSYNC = 'off';
  cluster = await startCluster({ dataDir, database: 'cayline_down', log: () => {} });
  t = await createTestApp({ databaseUrl: cluster.url, config: { jobs: { runWorkers: false, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600 } } });
  token = await t.token('interpreter');
}, 120_000);

afterAll(async () => {
  await t?.close().catch(() => {});
  await cluster?.stop();
  if (dataDir) removeCluster(dataDir);
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

function expectUnavailable(r: request.Response) {
  expect(r.status, JSON.stringify(r.body)).toBe(503);
  expect(r.body.code).toBe('database_unavailable');
  expect(r.body.message).toMatch(/database/i);
  expect(Number(r.headers['retry-after'])).toBeGreaterThan(0);
}

describe('database down and back', () => {
  it('answers 503 database_unavailable with Retry-After while down, and 200 again when it is back', async () => {
    expect((await request(t.app).get('/api/projects').set(bearer(token))).status).toBe(200);
    expect((await request(t.app).get('/api/health')).status).toBe(200);

    await cluster.stop();

    // a signed-in request: the token check itself needs the database (passport callback error)
    expectUnavailable(await request(t.app).get('/api/projects').set(bearer(token)));
    expectUnavailable(await request(t.app).get('/api/projects').set(bearer(token))); // a second time: fresh connections are refused too
    // sign-in (the per-account delay lives in PostgreSQL)
    expectUnavailable(await request(t.app).post('/api/auth/login').send({ email: 'reviewer@tessel.example', password: DEMO_PASSWORD }));
    // a write
    expectUnavailable(await request(t.app).post('/api/projects').set(bearer(token)).send({ name: 'Marrow Bank outage' }));
    // the health check keeps its own 503 shape
    const health = await request(t.app).get('/api/health');
    expect(health.status).toBe(503);
    expect(health.body).toMatchObject({ status: 'degraded', db: 'down' });
    expect(Number(health.headers['retry-after'])).toBeGreaterThan(0);
    // readiness names the failing check; liveness needs no database
    const ready = await request(t.app).get('/api/health/ready');
    expect(ready.status).toBe(503);
    expect(ready.body.code).toBe('not_ready');
    expect(ready.body.details.map((d: { path: string }) => d.path)).toContain('checks.database');
    expect((await request(t.app).get('/api/health/live')).status).toBe(200);
    // a route that does not exist still says so (no database needed)
    expect((await request(t.app).get('/api/no-such-thing').set(bearer(token))).status).toBe(404);

    cluster = await startCluster({ dataDir, database: 'cayline_down', log: () => {} });

    let back = await request(t.app).get('/api/projects').set(bearer(token));
    // the pool may hold one connection the restart killed: its error is a 503 too, and the next request is served
    if (back.status !== 200) {
      expectUnavailable(back);
      back = await request(t.app).get('/api/projects').set(bearer(token));
    }
    expect(back.status, JSON.stringify(back.body)).toBe(200);
    expect((await request(t.app).get('/api/health')).status).toBe(200);
    const created = await request(t.app).post('/api/projects').set(bearer(token)).send({ name: 'Marrow Bank after the outage' });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
  }, 120_000);
});
