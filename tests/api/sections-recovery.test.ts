/**
 * Work that survives a restart: a section left `processing` whose job is gone
 * is queued again when the server boots (and reaches ready); one that ran out
 * of attempts fails cleanly; scratch leftovers are swept.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { makeImage, upload, waitForStatus } from '../helpers/sections';

const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-recovery-'));
let t: TestApp | null = null;
afterAll(async () => {
  await t?.close();
  fs.rmSync(storageDir, { recursive: true, force: true });
});

async function sql(url: string, text: string, values: unknown[] = []) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return (await c.query(text, values)).rows;
  } finally {
    await c.end();
  }
}

describe('restart recovery', () => {
  it('re-queues a processing section whose job vanished, fails one out of attempts, sweeps leftovers', async () => {
    // 1. a server without workers accepts two uploads; they stay `processing`
    t = await createTestApp({ storageDir, config: { jobs: { runWorkers: false, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600 } } });
    const databaseUrl = t.databaseUrl;
    const interp = await t.token('interpreter');
    const projectId = (await request(t.app).get('/api/projects').set(bearer(interp))).body.items[0].id;
    const a = (await upload(t, interp, projectId, await makeImage('png', 700, 400))).body.id;
    const b = (await upload(t, interp, projectId, await makeImage('jpeg', 300, 200, 3), 'b.jpg')).body.id;
    expect((await waitForStatus(t, interp, a, 1).catch((e) => e)).message).toMatch(/still processing/);
    await t.close();
    t = null;

    // 2. simulate a crash: the jobs are gone, one section has used up its attempts,
    //    an interrupted build left a scratch folder, an old upload left another
    const [ra] = await sql(databaseUrl, 'SELECT storage_key, job_id FROM sections WHERE id = $1', [a]);
    await sql(databaseUrl, 'DELETE FROM pgboss.job WHERE id = ANY($1::uuid[])', [
      (await sql(databaseUrl, 'SELECT job_id FROM sections WHERE id = ANY($1::int[])', [[a, b]])).map((r) => r.job_id),
    ]);
    await sql(databaseUrl, 'UPDATE sections SET attempts = 3, progress = 40 WHERE id = $1', [b]);
    const tmp = path.join(storageDir, 'tmp');
    const halfBuild = path.join(tmp, `build-${ra.storage_key}-deadbeef`);
    fs.mkdirSync(path.join(halfBuild, 'pyramid', 'tiles', '0'), { recursive: true });
    fs.writeFileSync(path.join(halfBuild, 'pyramid', 'tiles', '0', '0_0.jpg'), 'half');
    const oldUpload = path.join(tmp, 'upload-0123456789abcdef');
    fs.mkdirSync(oldUpload);
    const twoHoursAgo = new Date(Date.now() - 2 * 3600_000);
    fs.utimesSync(oldUpload, twoHoursAgo, twoHoursAgo);
    const orphan = path.join(storageDir, 'sections', 'ffffffffffffffffffffffffffffffff');
    fs.mkdirSync(orphan);
    fs.utimesSync(orphan, twoHoursAgo, twoHoursAgo);

    // 3. boot again on the same database and storage, with workers
    t = await createTestApp({ databaseUrl, storageDir });
    const interp2 = await t.token('interpreter');
    const sa = await waitForStatus(t, interp2, a);
    expect(sa.status).toBe('ready');
    expect(sa.tiles.width).toBe(700);
    const [after] = await sql(databaseUrl, 'SELECT attempts, job_id FROM sections WHERE id = $1', [a]);
    expect(after.attempts).toBe(2);
    expect(after.job_id).not.toBe(ra.job_id);
    const sb = (await request(t.app).get(`/api/sections/${b}`).set(bearer(interp2))).body;
    expect(sb).toMatchObject({ status: 'failed', progress: 0 });
    expect(sb.failureReason).toMatch(/interrupted 3 times; retry the section/);
    expect(fs.existsSync(halfBuild)).toBe(false); // removed when the job for that section ran again
    expect(fs.existsSync(oldUpload)).toBe(false); // swept on boot (older than an hour)
    expect(fs.existsSync(orphan)).toBe(false); // no row refers to it
    expect(fs.readdirSync(tmp)).toEqual([]);

    // the failed one can be retried and then builds
    expect((await request(t.app).post(`/api/sections/${b}/retry`).set(bearer(interp2))).status).toBe(202);
    expect((await waitForStatus(t, interp2, b)).status).toBe('ready');
  });
});
