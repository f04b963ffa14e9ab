/**
 * SEG-Y after a crash: a section whose render was queued by a process that
 * stopped is rendered by the next process that boots (the pyramid job's
 * recovery), and the boot sweep removes `segy/<key>` folders that no upload
 * row names once they are an hour old (a crash between moving the files and
 * the commit), keeping those in use and young ones.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import request from 'supertest';
import { afterEach, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { line2d } from '../helpers/segy-fixtures';
import { waitForStatus } from '../helpers/sections';
import { sql } from '../helpers/worker-process';

let t: TestApp | null = null;
afterEach(async () => {
  await t?.close();
  t = null;
});

describe('SEG-Y recovery', () => {
  it('a render queued by a stopped process is done after a restart; orphaned upload folders go, used and young ones stay', async () => {
    const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-segy-recovery-'));
    t = await createTestApp({ storageDir, config: { jobs: { runWorkers: false } } as never });
    const { databaseUrl } = t;
    const interp = await t.token('interpreter');
    const projectId = (await request(t.app).get('/api/projects').set(bearer(interp))).body.items[0].id;
    const r = await request(t.app).post(`/api/projects/${projectId}/segy`).set(bearer(interp)).field('title', 'TB-11 SEG-Y').attach('file', line2d(), 'tb11.sgy');
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    const id = r.body.section.id as number;
    expect((await request(t.app).get(`/api/sections/${id}`).set(bearer(interp))).body.status).toBe('processing');
    const [{ storage_key: usedKey }] = await sql(databaseUrl, 'SELECT storage_key FROM segy_uploads WHERE id = $1', [r.body.upload.id]);
    await t.close();
    t = null;

    const segy = path.join(storageDir, 'segy');
    const orphan = crypto.randomBytes(16).toString('hex');
    const young = crypto.randomBytes(16).toString('hex');
    for (const k of [orphan, young]) {
      fs.mkdirSync(path.join(segy, k));
      fs.writeFileSync(path.join(segy, k, 'amplitudes.f32'), Buffer.alloc(16));
    }
    const twoHoursAgo = new Date(Date.now() - 2 * 3600_000);
    fs.utimesSync(path.join(segy, orphan), twoHoursAgo, twoHoursAgo);
    fs.utimesSync(path.join(segy, usedKey), twoHoursAgo, twoHoursAgo);

    t = await createTestApp({ databaseUrl, storageDir });
    const token = await t.token('interpreter');
    const s = await waitForStatus(t, token, id, 60_000);
    expect(s.status).toBe('ready');
    expect(s.calibration.source).toBe('segy_headers');
    const left = fs.readdirSync(segy);
    expect(left).not.toContain(orphan);
    expect(left).toContain(usedKey);
    expect(left).toContain(young);
    const amp = await request(t.app).get(`/api/sections/${id}/amplitudes?trace=0&sample=0&samples=3`).set(bearer(token));
    expect(amp.status).toBe(200);
    fs.rmSync(storageDir, { recursive: true, force: true });
  }, 120_000);
});
