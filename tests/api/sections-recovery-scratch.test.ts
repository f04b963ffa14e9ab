/**
 * Build scratch never outlives its reason: deleting a section while its
 * pyramid is being built stops the build and leaves no scratch; the boot sweep
 * removes scratch of dead processes whatever its age and keeps the scratch of
 * processes that are alive.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { spawn } from 'node:child_process';
import request from 'supertest';
import { afterEach, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { makeImage, upload, waitForStatus } from '../helpers/sections';
import { deadPid, sql } from '../helpers/worker-process';
import { rawImage } from '../helpers/sections';
import sharp from 'sharp';

let t: TestApp | null = null;
afterEach(async () => {
  await t?.close();
  t = null;
});

const tmpEntries = (storageDir: string) => (fs.existsSync(path.join(storageDir, 'tmp')) ? fs.readdirSync(path.join(storageDir, 'tmp')) : []);
const hex = (bytes: number) => crypto.randomBytes(bytes).toString('hex');

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, ms: number, every = 25): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > end) throw new Error(`${what}: not reached within ${ms} ms`);
    await new Promise((r) => setTimeout(r, every));
  }
}

/** 12000 × 9000 grey PNG, textured (rows of one line of rawImage's pattern, shifted): a build of seconds. */
async function bigImage(w = 12000, h = 9000): Promise<Buffer> {
  const line = rawImage(w + 4096, 1, 1);
  const raw = Buffer.allocUnsafe(w * h);
  for (let y = 0; y < h; y++) line.copy(raw, y * w, (y * 37) % 4096, ((y * 37) % 4096) + w);
  return sharp(raw, { raw: { width: w, height: h, channels: 1 } }).toColourspace('b-w').png({ compressionLevel: 6 }).toBuffer();
}

describe('build scratch', () => {
  it('delete during a build: the build stops and no scratch is left', async () => {
    t = await createTestApp();
    const interp = await t.token('interpreter');
    const projectId = (await request(t.app).get('/api/projects').set(bearer(interp))).body.items[0].id;
    const id = (await upload(t, interp, projectId, await bigImage(), 'big.png')).body.id as number;
    const [{ storage_key: key }] = await sql(t.databaseUrl, 'SELECT storage_key FROM sections WHERE id = $1', [id]);
    const scratch = () => tmpEntries(t!.storageDir).filter((e) => e.startsWith(`build-${key}-`));
    await until(
      'build under way with scratch',
      async () => {
        const [row] = await sql(t!.databaseUrl, 'SELECT progress, status FROM sections WHERE id = $1', [id]);
        return row.status === 'processing' && row.progress > 2 && scratch().length === 1;
      },
      60_000,
    );
    const del = await request(t.app).delete(`/api/sections/${id}`).set(bearer(interp));
    expect(del.status).toBe(204);
    expect(fs.existsSync(path.join(t.storageDir, 'sections', key))).toBe(false);

    // this process runs one build at a time: once a later upload is ready, the deleted one's build has returned
    const next = (await upload(t, interp, projectId, await makeImage('png', 600, 400), 'next.png')).body.id as number;
    expect((await waitForStatus(t, interp, next, 60_000)).status).toBe('ready');
    expect(scratch()).toEqual([]);
    expect(tmpEntries(t.storageDir)).toEqual([]);
    expect(fs.existsSync(path.join(t.storageDir, 'sections', key))).toBe(false); // not published after the delete
    const [{ count }] = await sql(t.databaseUrl, 'SELECT count(*)::int AS count FROM sections WHERE id = $1', [id]);
    expect(count).toBe(0);
  }, 120_000);

  it('boot sweep: scratch of dead processes goes whatever its age, scratch of live ones stays', async () => {
    t = await createTestApp();
    const { databaseUrl, storageDir } = t;
    await t.close();
    t = null;

    // a process that is alive on this host for the length of the test
    const sleeper = spawn(process.execPath, ['-e', 'setInterval(() => {}, 1000)'], { stdio: 'ignore' });
    try {
      const register = (id: string, host: string, pid: number, ago: string) =>
        sql(databaseUrl, `INSERT INTO job_workers (id, host, pid, runs_workers, started_at, heartbeat_at) VALUES ($1, $2, $3, true, now(), now() - $4::interval)`, [
          id,
          host,
          pid,
          ago,
        ]);
      const w = () => `w${hex(8)}`;
      const [deadHere, deadFar, unknown, liveHere, liveFar] = [w(), w(), w(), w(), w()];
      await register(deadHere, os.hostname(), await deadPid(), '0 s'); // fresh heartbeat, but its pid is gone
      await register(deadFar, 'tb-worker-elsewhere', 4242, '5 minutes'); // heartbeat stopped
      await register(liveHere, os.hostname(), sleeper.pid!, '0 s');
      await register(liveFar, 'tb-worker-elsewhere', 4243, '2 seconds');
      // `unknown` has no row at all (pruned, or never seen)

      const tmp = path.join(storageDir, 'tmp');
      fs.mkdirSync(tmp, { recursive: true });
      const make = (name: string) => {
        fs.mkdirSync(path.join(tmp, name, 'pyramid', 'tiles', '0'), { recursive: true });
        fs.writeFileSync(path.join(tmp, name, 'pyramid', 'tiles', '0', '0_0.jpg'), 'half');
        return name;
      };
      const gone = [make(`build-${hex(16)}-${deadHere}-${hex(8)}`), make(`upload-${deadFar}-${hex(8)}`), make(`build-${hex(16)}-${unknown}-${hex(8)}`)];
      const kept = [make(`build-${hex(16)}-${liveHere}-${hex(8)}`), make(`upload-${liveFar}-${hex(8)}`), make(`upload-${hex(8)}`)]; // the last: untagged and young
      const old = make(`upload-${hex(8)}`); // untagged and two hours old
      const twoHoursAgo = new Date(Date.now() - 2 * 3600_000);
      fs.utimesSync(path.join(tmp, old), twoHoursAgo, twoHoursAgo);

      t = await createTestApp({ databaseUrl, storageDir });
      const left = fs.readdirSync(tmp);
      for (const g of [...gone, old]) expect(left).not.toContain(g);
      for (const k of kept) expect(left).toContain(k);
      expect(left.sort()).toEqual([...kept].sort());
    } finally {
      sleeper.kill('SIGKILL');
      fs.rmSync(storageDir, { recursive: true, force: true });
    }
  });
});
