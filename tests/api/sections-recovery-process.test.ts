/**
 * Builds of a killed process: a real worker process (server/scripts/worker.ts)
 * is killed with SIGKILL in the middle of a tile-pyramid build; a new worker
 * resumes it without waiting for pg-boss's expiry (one hour here), the
 * section becomes ready, its tiles are served, and no scratch is left. And
 * `POST /retry` on a `processing` section: 409 while a live process builds
 * it, 202 when its owner is dead or it stalled.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import sharp from 'sharp';
import request from 'supertest';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { binary, makeImage, upload, waitForStatus } from '../helpers/sections';
import { deadPid, sql, startWorker, type WorkerProcess } from '../helpers/worker-process';
import { jobQueue, PYRAMID_QUEUE } from '../../server/jobs/queue';
import type { Config } from '../../server/config';

let t: TestApp | null = null;
const workers: WorkerProcess[] = [];
afterEach(async () => {
  for (const w of workers.splice(0)) await w.kill('SIGKILL');
  await t?.close();
  t = null;
});
afterAll(async () => {
  for (const w of workers.splice(0)) await w.kill('SIGKILL');
});

/** A web process without workers (the worker processes build). */
const NO_WORKERS = { runWorkers: false, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600 };

/**
 * 16000 × 10000 grey PNG (about 28 MB, 160 MB decoded on scratch disk) with
 * texture, so the build takes seconds: rows of one textured line shifted.
 */
async function bigImage(w = 16000, h = 10000): Promise<Buffer> {
  const period = 4096;
  const line = Buffer.alloc(w + period);
  for (let x = 0; x < line.length; x++) line[x] = 128 + Math.round(90 * Math.sin(x / 9) * Math.cos(x / 170) + 20 * Math.sin(x * 0.37));
  const raw = Buffer.allocUnsafe(w * h);
  for (let y = 0; y < h; y++) {
    const o = (y * 37) % period;
    line.copy(raw, y * w, o, o + w);
  }
  return sharp(raw, { raw: { width: w, height: h, channels: 1 } }).toColourspace('b-w').png({ compressionLevel: 6 }).toBuffer();
}

const tmpEntries = (storageDir: string) => (fs.existsSync(path.join(storageDir, 'tmp')) ? fs.readdirSync(path.join(storageDir, 'tmp')) : []);

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, ms: number, every = 50): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > end) throw new Error(`${what}: not reached within ${ms} ms`);
    await new Promise((r) => setTimeout(r, every));
  }
}

async function projectOf(app: TestApp, token: string): Promise<number> {
  return (await request(app.app).get('/api/projects').set(bearer(token))).body.items[0].id;
}

describe('a worker killed during a build', () => {
  it('is resumed by the next worker at once: the section becomes ready, tiles are served, no scratch is left', async () => {
    const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-kill-'));
    try {
      t = await createTestApp({ storageDir, config: { jobs: NO_WORKERS } });
      const db = t.databaseUrl;
      const interp = await t.token('interpreter');
      const projectId = await projectOf(t, interp);
      // libvips on one thread: the build of this image then takes a few seconds on this machine
      const first = await startWorker({ databaseUrl: db, storageDir, env: { VIPS_CONCURRENCY: '1' } });
      workers.push(first);

      const up = await upload(t, interp, projectId, await bigImage(), 'big.png');
      expect(up.status).toBe(202);
      const id = up.body.id as number;
      const [{ storage_key: key, job_id: firstJob }] = await sql(db, 'SELECT storage_key, job_id FROM sections WHERE id = $1', [id]);

      // the first worker owns the build, has reported progress and has scratch
      const scratchOf = (owner: string) => tmpEntries(storageDir).filter((e) => e.startsWith(`build-${key}-${owner}-`));
      await until(
        'first worker building with progress and scratch',
        async () => {
          const [row] = await sql(db, 'SELECT worker_id, progress FROM sections WHERE id = $1', [id]);
          return row.worker_id === first.id && row.progress > 2 && scratchOf(first.id).length === 1;
        },
        60_000,
        25,
      );
      // a build a live process is running cannot be retried
      const live = await request(t.app).post(`/api/sections/${id}/retry`).set(bearer(interp));
      expect(live.status).toBe(409);
      expect(live.body.code).toBe('build_running');

      expect(await first.kill('SIGKILL')).toBe('SIGKILL');
      const [mid] = await sql(db, 'SELECT status, progress, worker_id FROM sections WHERE id = $1', [id]);
      expect(mid.status).toBe('processing'); // killed in the middle, not after the end
      expect(mid.progress).toBeLessThan(100);
      expect(scratchOf(first.id)).toHaveLength(1); // the dead process's half-built scratch

      const second = await startWorker({ databaseUrl: db, storageDir });
      workers.push(second);
      // bounded wait, not a timing assertion: pg-boss alone would wait for the job's one-hour expiry
      const ready = await waitForStatus(t, interp, id, 60_000);
      expect(ready.status).toBe('ready');
      expect(ready.tiles).toMatchObject({ width: 16000, height: 10000 });

      const [after] = await sql(db, 'SELECT attempts, job_id, worker_id FROM sections WHERE id = $1', [id]);
      expect(after.attempts).toBe(2);
      expect(after.job_id).not.toBe(firstJob);
      expect(after.worker_id).toBeNull();
      const [old] = await sql(db, `SELECT state FROM pgboss.job WHERE id = $1 UNION ALL SELECT state FROM pgboss.archive WHERE id = $1`, [firstJob]);
      expect(old.state).toBe('cancelled'); // the dead process's job was cancelled, not left to expire

      // tiles are served: the full-size level's first tile and the 1×1 level 0
      const maxLevel = ready.tiles.maxLevel as number;
      for (const [z, x, y] of [
        [maxLevel, 0, 0],
        [maxLevel, 31, 19],
        [0, 0, 0],
      ]) {
        const tile = await request(t.app).get(`/api/sections/${id}/tiles/${z}/${x}_${y}.jpg`).set(bearer(interp)).buffer(true).parse(binary);
        expect(tile.status).toBe(200);
        const meta = await sharp(tile.body as Buffer).metadata();
        expect(meta.format).toBe('jpeg');
      }

      // no scratch folder (neither the dead one's nor the new build's) and no temp files
      expect(tmpEntries(storageDir)).toEqual([]);
      const files = fs.readdirSync(path.join(storageDir, 'sections', key), { recursive: true }) as string[];
      expect(files.filter((f) => /\.(part|v)$|decoded-/.test(f))).toEqual([]);
      expect(fs.readdirSync(path.join(storageDir, 'sections', key)).sort()).toEqual(['original', 'pyramid']);
      expect(second.output()).not.toMatch(/"level":"(error|fatal)"/); // no error logged by the new worker (server/logger.ts writes level names)
    } finally {
      for (const w of workers.splice(0)) await w.kill('SIGKILL');
      await t?.close();
      t = null;
      fs.rmSync(storageDir, { recursive: true, force: true });
    }
  }, 180_000);
});

describe('a section deleted after its worker was killed mid-build', () => {
  it('takes the dead build scratch with it, without waiting for a restart', async () => {
    const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-killdel-'));
    try {
      t = await createTestApp({ storageDir, config: { jobs: NO_WORKERS } });
      const db = t.databaseUrl;
      const interp = await t.token('interpreter');
      const w = await startWorker({ databaseUrl: db, storageDir, env: { VIPS_CONCURRENCY: '1' } });
      workers.push(w);
      const id = (await upload(t, interp, await projectOf(t, interp), await bigImage(), 'big.png')).body.id as number;
      const [{ storage_key: key, job_id: job }] = await sql(db, 'SELECT storage_key, job_id FROM sections WHERE id = $1', [id]);
      const scratch = () => tmpEntries(storageDir).filter((e) => e.startsWith(`build-${key}-`));
      await until(
        'worker building with scratch',
        async () => {
          const [row] = await sql(db, 'SELECT worker_id, progress FROM sections WHERE id = $1', [id]);
          return row.worker_id === w.id && row.progress > 2 && scratch().length === 1;
        },
        60_000,
        25,
      );
      await w.kill('SIGKILL');
      expect(scratch()).toHaveLength(1);

      const del = await request(t.app).delete(`/api/sections/${id}`).set(bearer(interp));
      expect(del.status).toBe(204);
      expect(scratch()).toEqual([]);
      expect(tmpEntries(storageDir)).toEqual([]);
      expect(fs.existsSync(path.join(storageDir, 'sections', key))).toBe(false);
      const [state] = await sql(db, `SELECT state FROM pgboss.job WHERE id = $1 UNION ALL SELECT state FROM pgboss.archive WHERE id = $1`, [job]);
      expect(state.state).toBe('cancelled');
    } finally {
      for (const w of workers.splice(0)) await w.kill('SIGKILL');
      await t?.close();
      t = null;
      fs.rmSync(storageDir, { recursive: true, force: true });
    }
  }, 120_000);
});

describe('a section deleted while a live worker builds it', () => {
  it('the build notices, stops and removes its scratch', async () => {
    const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-livedel-'));
    try {
      t = await createTestApp({ storageDir, config: { jobs: NO_WORKERS } });
      const db = t.databaseUrl;
      const interp = await t.token('interpreter');
      const projectId = await projectOf(t, interp);
      const w = await startWorker({ databaseUrl: db, storageDir, env: { VIPS_CONCURRENCY: '1' } });
      workers.push(w);
      const id = (await upload(t, interp, projectId, await bigImage(), 'big.png')).body.id as number;
      const [{ storage_key: key }] = await sql(db, 'SELECT storage_key FROM sections WHERE id = $1', [id]);
      const scratch = () => tmpEntries(storageDir).filter((e) => e.startsWith(`build-${key}-`));
      await until(
        'worker building with scratch',
        async () => {
          const [row] = await sql(db, 'SELECT worker_id, progress FROM sections WHERE id = $1', [id]);
          return row.worker_id === w.id && row.progress > 2 && row.progress < 60 && scratch().length === 1;
        },
        60_000,
        25,
      );
      expect((await request(t.app).delete(`/api/sections/${id}`).set(bearer(interp))).status).toBe(204);

      // the worker runs one build at a time: once a later upload is ready, the deleted one's build has returned
      const next = (await upload(t, interp, projectId, await makeImage('png', 600, 400), 'next.png')).body.id as number;
      expect((await waitForStatus(t, interp, next, 60_000)).status).toBe('ready');
      expect(scratch()).toEqual([]);
      expect(tmpEntries(storageDir)).toEqual([]);
      expect(fs.existsSync(path.join(storageDir, 'sections', key))).toBe(false);
      // it stopped as a deleted build (not as a failure, and it did not run to the end)
      expect(w.output()).toMatch(new RegExp(`"sectionId":${id},"msg":"pyramid build stopped`));
      expect(w.output()).not.toMatch(/pyramid build failed/);
    } finally {
      for (const w of workers.splice(0)) await w.kill('SIGKILL');
      await t?.close();
      t = null;
      fs.rmSync(storageDir, { recursive: true, force: true });
    }
  }, 120_000);
});

describe('an owner on another host whose heartbeat stops', () => {
  it('keeps its build while it beats; once stale, the periodic check resumes the build and removes its scratch', async () => {
    // short timings so the test does not wait the default 30 s staleness
    const jobs = { ...NO_WORKERS, checkEverySeconds: 0.5, staleAfterSeconds: 2 } as Config['jobs'];
    t = await createTestApp({ config: { jobs } });
    const db = t.databaseUrl;
    const interp = await t.token('interpreter');
    const id = (await upload(t, interp, await projectOf(t, interp), await makeImage('png', 700, 400))).body.id as number;
    const [job] = await jobQueue().fetch(PYRAMID_QUEUE);
    const [{ storage_key: key, job_id: jobId }] = await sql(db, 'SELECT storage_key, job_id FROM sections WHERE id = $1', [id]);
    expect(job.id).toBe(jobId);
    const far = `w${crypto.randomBytes(8).toString('hex')}`;
    await sql(db, `INSERT INTO job_workers (id, host, pid, runs_workers, started_at, heartbeat_at) VALUES ($1, 'tb-worker-elsewhere', 4242, true, now(), now())`, [far]);
    await sql(db, `UPDATE sections SET worker_id = $2, progress = 30, progress_at = now() WHERE id = $1`, [id, far]);
    const scratch = path.join(t.storageDir, 'tmp', `build-${key}-${far}-${crypto.randomBytes(8).toString('hex')}`);
    fs.mkdirSync(scratch, { recursive: true });
    fs.writeFileSync(path.join(scratch, 'decoded.v'), 'half');

    // beating every 0.5 s for 4 s: at least six checks run meanwhile and leave it alone
    for (let i = 0; i < 8; i++) {
      await new Promise((r) => setTimeout(r, 500));
      await sql(db, 'UPDATE job_workers SET heartbeat_at = now() WHERE id = $1', [far]);
    }
    expect((await sql(db, 'SELECT worker_id, job_id FROM sections WHERE id = $1', [id]))[0]).toEqual({ worker_id: far, job_id: jobId });
    expect(fs.existsSync(scratch)).toBe(true);

    // it stops beating: resumed by the check (bounded wait)
    const row = await until(
      'build resumed',
      async () => {
        const [r] = await sql(db, 'SELECT worker_id, job_id, attempts, progress, status FROM sections WHERE id = $1', [id]);
        return r.job_id !== jobId ? r : null;
      },
      20_000,
      100,
    );
    expect(row).toMatchObject({ worker_id: null, attempts: 2, progress: 0, status: 'processing' });
    const [old] = await sql(db, `SELECT state FROM pgboss.job WHERE id = $1 UNION ALL SELECT state FROM pgboss.archive WHERE id = $1`, [jobId]);
    expect(old.state).toBe('cancelled');
    await until('dead owner scratch removed', async () => !fs.existsSync(scratch), 10_000, 100);
  }, 60_000);
});

describe('retry of a processing section', () => {
  it('409 while queued or built by a live process; 202 when stalled or its owner is dead, then it builds', async () => {
    // no periodic check here (it would resume the dead owners' builds itself before the retry)
    const jobs = { ...NO_WORKERS, checkEverySeconds: 3600 } as Config['jobs'];
    t = await createTestApp({ config: { jobs } });
    const db = t.databaseUrl;
    const interp = await t.token('interpreter');
    const projectId = await projectOf(t, interp);
    const id = (await upload(t, interp, projectId, await makeImage('png', 900, 500))).body.id as number;
    const retry = () => request(t!.app).post(`/api/sections/${id}/retry`).set(bearer(interp));
    const row = async () => (await sql(db, 'SELECT status, job_id, worker_id, attempts, progress FROM sections WHERE id = $1', [id]))[0];
    const jobState = async (jobId: string) =>
      (await sql(db, `SELECT state FROM pgboss.job WHERE id = $1 UNION ALL SELECT state FROM pgboss.archive WHERE id = $1`, [jobId]))[0]?.state;

    // waiting in the queue: not stuck
    let r = await retry();
    expect(r.status).toBe(409);
    expect(r.body).toMatchObject({ code: 'build_running' });
    expect(r.body.message).toMatch(/waiting for a worker/);

    /** What a worker does when it takes the job: pg-boss marks it active, the row names the owner. */
    const takeAs = async (owner: string, progressAgo = '0 s') => {
      const [job] = await jobQueue().fetch(PYRAMID_QUEUE);
      expect(job.id).toBe((await row()).job_id);
      await sql(db, `UPDATE sections SET worker_id = $2, progress = 40, progress_at = now() - $3::interval WHERE id = $1`, [id, owner, progressAgo]);
      return job.id;
    };
    const register = (owner: string, host: string, pid: number, ago: string) =>
      sql(db, `INSERT INTO job_workers (id, host, pid, runs_workers, started_at, heartbeat_at) VALUES ($1, $2, $3, true, now(), now() - $4::interval)`, [
        owner,
        host,
        pid,
        ago,
      ]);
    const fakeId = () => `w${crypto.randomBytes(8).toString('hex')}`;

    // a live owner (this very process's registration, beating) that reports progress: 409
    const [{ id: self }] = await sql(db, 'SELECT id FROM job_workers WHERE pid = $1', [process.pid]);
    let job = await takeAs(self);
    r = await retry();
    expect(r.status).toBe(409);
    expect(r.body.message).toMatch(/40 %, by a running worker/);
    expect(await jobState(job)).toBe('active');

    // the same live owner, but no progress for longer than the stall time (600 s): 202
    await sql(db, `UPDATE sections SET progress_at = now() - interval '11 minutes' WHERE id = $1`, [id]);
    r = await retry();
    expect(r.status).toBe(202);
    expect(await jobState(job)).toBe('cancelled');
    expect(await row()).toMatchObject({ status: 'processing', worker_id: null, attempts: 1, progress: 0 });

    // an owner on this host whose process is gone (fresh heartbeat, dead pid): 202
    const gone = fakeId();
    await register(gone, os.hostname(), await deadPid(), '0 s');
    job = await takeAs(gone);
    r = await retry();
    expect(r.status).toBe(202);
    expect(await jobState(job)).toBe('cancelled');

    // an owner elsewhere whose heartbeat stopped 2 minutes ago: 202; with a fresh heartbeat: 409
    const far = fakeId();
    await register(far, 'tb-worker-elsewhere', 4242, '0 s');
    job = await takeAs(far);
    expect((await retry()).status).toBe(409);
    await sql(db, `UPDATE job_workers SET heartbeat_at = now() - interval '2 minutes' WHERE id = $1`, [far]);
    r = await retry();
    expect(r.status).toBe(202);
    expect(await jobState(job)).toBe('cancelled');

    // the retried section builds on a worker process
    const w = await startWorker({ databaseUrl: db, storageDir: t.storageDir });
    workers.push(w);
    const ready = await waitForStatus(t, interp, id, 60_000);
    expect(ready.status).toBe('ready');
    expect(tmpEntries(t.storageDir)).toEqual([]);
  }, 120_000);
});
