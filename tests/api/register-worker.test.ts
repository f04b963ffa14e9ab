/**
 * Register summaries worked by a separate worker process
 * (server/scripts/worker.ts) while the web process runs no workers
 * (CAYLINE_JOB_WORKERS=0): the worker sets up the app context the summary job
 * needs, so the register's figures arrive without any web process measuring.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup, SMALL_GEOMETRY, SMALL_TIES } from '../helpers/api-fixtures';
import { startWorker, type WorkerProcess } from '../helpers/worker-process';
import { measure } from '../../shared/measure/index';
import { fromGeometry, toInterpretationInput, type VelocityModel } from '../../shared/editor/model';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';

const NO_WORKERS = { runWorkers: false, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600 };

let t: TestApp | undefined;
let worker: WorkerProcess | undefined;
const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-register-worker-'));

afterAll(async () => {
  await worker?.kill('SIGTERM');
  await t?.close();
  fs.rmSync(storageDir, { recursive: true, force: true });
});

describe('register summaries on a worker process', () => {
  it('a buildup saved on a web process without workers gets its figures from the worker process', async () => {
    t = await createTestApp({ storageDir, config: { jobs: NO_WORKERS } });
    worker = await startWorker({ databaseUrl: t.databaseUrl, storageDir });
    const interp = await t.token('interpreter');
    const projectId = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Marrow Bank survey' })).body.id;
    const section = await readyCalibratedSection(t, interp, projectId); // tiles built by the worker
    const b = await savedBuildup(t, interp, section, 'Kestrel Knoll');
    const expected = measure(
      toInterpretationInput(fromGeometry({ id: b.id, name: 'x', version: b.version, geometry: SMALL_GEOMETRY }), {
        calibrationTies: SMALL_TIES as never,
        verticalDomain: 'twt_ms',
        velocity: DEFAULT_VELOCITY as VelocityModel,
      }),
    ).buildups[0];
    const until = Date.now() + 60_000;
    let row;
    for (;;) {
      const r = await request(t.app).get(`/api/projects/${projectId}/buildups`).set(bearer(interp));
      expect(r.status).toBe(200);
      row = r.body.items[0];
      if (row?.status === 'ok') break;
      if (Date.now() > until) throw new Error(`no figures from the worker: ${JSON.stringify(r.body)}\n${worker.output().slice(-3000)}`);
      await new Promise((res) => setTimeout(res, 300));
    }
    expect(row.heightM).toBeCloseTo(expected.heightM, 6);
    expect(row.classification).toBe(expected.classification);
  }, 180_000);
});
