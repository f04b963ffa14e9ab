/**
 * The path past one machine, shown with real processes: two web processes
 * (server/scripts/serve.ts, CAYLINE_JOB_WORKERS=0) and one worker process
 * (server/scripts/worker.ts) on one PostgreSQL database and one S3 store (the
 * s3rver fake), each with its own local storage folder, so nothing can pass
 * through a shared disk.
 *
 * - all three boot at once on an empty database: migrations run once (advisory lock);
 * - a session made by web process 1 is accepted by web process 2, and one ended there is refused;
 * - an upload through web 1 is built by the worker and its tiles are served by web 2;
 * - a save through web 1 and a stale save through web 2: one 200, one 409;
 * - the sign-in limit per address is counted across both web processes;
 * - the worker killed (SIGKILL) in the middle of a build: another worker finishes it.
 *
 * The figures printed at the end (boot, time to tiles, resume after a kill)
 * are for the contributor guide; nothing is asserted on time.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDatabase } from '../helpers/app';
import { makeImage } from '../helpers/sections';
import { sql, startWorker, type WorkerProcess } from '../helpers/worker-process';
import { startS3Fake, type S3Fake } from '../helpers/s3-fake';
import { createSequelize } from '../../server/db/sequelize';
import { initModels } from '../../server/models/index';
import { setContext } from '../../server/context';
import { loadConfig } from '../../server/config';
import { seedDemoUsers, DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { createFileStore } from '../../server/storage/fileStore';
import fixture from '../fixtures/synthetic/tb-11-kestrel-knoll.json';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const JWT_SECRET = crypto.randomBytes(24).toString('hex');
const LOGIN_RATE_MAX = 12;

interface WebProcess {
  child: ChildProcess;
  url: string;
  storageDir: string;
  output(): string;
}

const figures: Record<string, string> = {};
const seconds = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

let fake: S3Fake;
let databaseUrl: string;
const webs: WebProcess[] = [];
const workers: WorkerProcess[] = [];
const dirs: string[] = [];

function tmpDir(what: string) {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), `cayline-scale-${what}-`));
  dirs.push(d);
  return d;
}

function commonEnv(): Record<string, string> {
  return {
    ...fake.env,
    DATABASE_URL: databaseUrl,
    JWT_SECRET,
    BCRYPT_COST: '4',
    JOB_POLL_SECONDS: '0.5',
    LOGIN_RATE_MAX: String(LOGIN_RATE_MAX),
    LOG_LEVEL: 'warn',
  };
}

/** A web process on a free port, once it printed its address (bounded wait). */
async function startWeb(): Promise<WebProcess> {
  const storageDir = tmpDir('web');
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/scripts/serve.ts'], {
    cwd: ROOT,
    env: {
      ...process.env,
      ...commonEnv(),
      PORT: '0',
      CAYLINE_STORAGE: storageDir,
      CAYLINE_JOB_WORKERS: '0',
      CAYLINE_CLIENT_DIR: path.join(storageDir, 'no-client'),
      CAYLINE_SESSION_TRUST_MS: String(10 * 60_000),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let text = '';
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`a web process did not listen within 90 s:\n${text}`)), 90_000);
    const onData = (b: Buffer) => {
      text += b.toString();
      const m = text.match(/^listening (http:\/\/\S+)$/m);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', (b: Buffer) => (text += b.toString()));
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`a web process exited (${code}) before listening:\n${text}`));
    });
  });
  const web = { child, url, storageDir, output: () => text };
  webs.push(web);
  return web;
}

async function api(web: WebProcess, method: string, url: string, opts: { token?: string; body?: unknown; form?: FormData } = {}) {
  const headers: Record<string, string> = {};
  if (opts.token) headers.authorization = `Bearer ${opts.token}`;
  let body: BodyInit | undefined;
  if (opts.form) body = opts.form;
  else if (opts.body !== undefined) {
    headers['content-type'] = 'application/json';
    body = JSON.stringify(opts.body);
  }
  const r = await fetch(`${web.url}${url}`, { method, headers, body });
  const type = r.headers.get('content-type') ?? '';
  const data = type.includes('json') ? await r.json() : Buffer.from(await r.arrayBuffer());
  return { status: r.status, headers: r.headers, body: data as any };
}

async function login(web: WebProcess, email: string, password = DEMO_PASSWORD) {
  return api(web, 'POST', '/api/auth/login', { body: { email, password } });
}

async function uploadVia(web: WebProcess, token: string, projectId: number, png: Buffer, name: string) {
  const form = new FormData();
  for (const [k, v] of Object.entries({ title: `${name} (scale-out)`, lineName: name, survey: 'TB-2024', verticalDomain: 'twt_ms' })) form.append(k, v);
  form.append('image', new Blob([new Uint8Array(png)], { type: 'image/png' }), `${name}.png`);
  return api(web, 'POST', `/api/projects/${projectId}/sections`, { token, form });
}

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, ms: number, every = 100): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > end) throw new Error(`${what}: not reached within ${ms} ms`);
    await new Promise((r) => setTimeout(r, every));
  }
}

/** What the processes and the database say, for a failure message: the section's row, the registered processes and the workers' last output. */
async function stateOf(id: number): Promise<string> {
  const rows = await sql(databaseUrl, 'SELECT status, progress, attempts, worker_id, job_id FROM sections WHERE id = $1', [id]).catch((e) => [String(e)]);
  const owners = await sql(databaseUrl, 'SELECT id, pid, runs_workers, heartbeat_at FROM job_workers').catch((e) => [String(e)]);
  const tails = workers.map((w, i) => `worker ${i + 1} (pid ${w.pid}, ${w.child.exitCode ?? w.child.signalCode ?? 'running'}):\n${w.output().slice(-3000)}`);
  return [`section: ${JSON.stringify(rows)}`, `job_workers: ${JSON.stringify(owners)}`, ...tails].join('\n');
}

async function readyVia(web: WebProcess, token: string, id: number, ms = 60_000) {
  try {
    return await until(
      `section ${id} ready through ${web.url}`,
      async () => {
        const r = await api(web, 'GET', `/api/sections/${id}`, { token });
        expect(r.status).toBe(200);
        if (r.body.status === 'failed') throw new Error(`section ${id} failed: ${r.body.failureReason}`);
        return r.body.status === 'ready' ? r.body : null;
      },
      ms,
    );
  } catch (err) {
    throw new Error(`${(err as Error).message}\n${await stateOf(id)}`);
  }
}

/** A textured grey PNG big enough that its build takes seconds on one libvips thread (rows of one line, shifted). */
async function texturedPng(w: number, h: number): Promise<Buffer> {
  const period = 4096;
  const line = Buffer.alloc(w + period);
  for (let x = 0; x < line.length; x++) line[x] = 128 + Math.round(90 * Math.sin(x / 9) * Math.cos(x / 170) + 20 * Math.sin(x * 0.37));
  const raw = Buffer.allocUnsafe(w * h);
  for (let y = 0; y < h; y++) {
    const o = (y * 37) % period;
    line.copy(raw, y * w, o, o + w);
  }
  return sharp(raw, { raw: { width: w, height: h, channels: 1 } }).toColourspace('b-w').png({ compressionLevel: 1 }).toBuffer();
}

let token: string;
let projectId: number;

beforeAll(async () => {
  fake = await startS3Fake();
  databaseUrl = await createDatabase();
  const t0 = Date.now();
  // all three at once on an empty database: each runs migrate() (one at a time under the advisory lock)
  const [w1, w2, worker] = await Promise.all([
    startWeb(),
    startWeb(),
    startWorker({ databaseUrl, storageDir: tmpDir('worker'), env: { ...commonEnv(), LOG_LEVEL: 'info', VIPS_CONCURRENCY: '1' } }),
  ]);
  workers.push(worker);
  figures['boot of 2 web + 1 worker processes (tsx, concurrent, migrations once)'] = seconds(Date.now() - t0);
  expect(w1.url).not.toBe(w2.url);
  // demo accounts, written by this process into the shared database
  const sequelize = createSequelize(databaseUrl);
  initModels(sequelize);
  setContext({ config: loadConfig({ storageDir: tmpDir('seed'), jwtSecret: JWT_SECRET, bcryptCost: 4 }), sequelize, mailer: null as never });
  await seedDemoUsers(sequelize);
  await sequelize.close();
}, 150_000);

afterAll(async () => {
  for (const w of workers) await w.kill('SIGKILL');
  for (const w of webs) {
    w.child.kill('SIGTERM');
    await new Promise((r) => (w.child.exitCode !== null ? r(null) : w.child.once('exit', r)));
  }
  await fake?.close();
  for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
  const load = os.loadavg()[0].toFixed(1);
  console.log([`scale-out figures (2 web + 1 worker processes, one PostgreSQL, s3rver; ${os.cpus().length} cores, load average ${load}):`, ...Object.entries(figures).map(([k, v]) => `  ${k}: ${v}`)].join('\n'));
});

describe('two web processes and a worker on one database and one S3 store', () => {
  it('migrated once, share sessions, and one limit of sign-ins per address', async () => {
    const [w1, w2] = webs;
    const applied = await sql(databaseUrl, 'SELECT name, count(*)::int AS n FROM schema_migrations GROUP BY name HAVING count(*) > 1');
    expect(applied).toEqual([]);
    const r = await login(w1, 'interpreter@tessel.example');
    expect(r.status).toBe(200);
    token = r.body.token;
    // the session made by web 1 is good on web 2
    const projects = await api(w2, 'GET', '/api/projects', { token });
    expect(projects.status).toBe(200);
    projectId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;

    // a session ended through web 1 is refused by web 2 (sessions are rows, not process memory), also when
    // web 2 keeps it in its session cache: trusted 10 minutes here, so only the NOTIFY sent by the session
    // triggers can tell web 2 in time
    const other = await login(w2, 'reviewer@tessel.example');
    expect(other.status).toBe(200);
    for (let i = 0; i < 2; i++) expect((await api(w2, 'GET', '/api/auth/me', { token: other.body.token })).status).toBe(200);
    expect((await api(w1, 'POST', '/api/auth/logout', { token: other.body.token })).status).toBeLessThan(300);
    let seen = 200;
    for (const end = Date.now() + 10_000; seen !== 401 && Date.now() < end; ) {
      seen = (await api(w2, 'GET', '/api/auth/me', { token: other.body.token })).status;
      if (seen !== 401) await new Promise((r) => setTimeout(r, 20));
    }
    expect(seen).toBe(401);

    // per-address sign-in limit: attempts alternate between the processes and are counted together
    let n = 2; // the two sign-ins above
    let refusedAt = 0;
    for (let i = 0; i < LOGIN_RATE_MAX + 2 && !refusedAt; i++) {
      const web = i % 2 ? w1 : w2;
      const a = await login(web, `nobody-${i}@tessel.example`, 'wrong password');
      n++;
      if (a.status === 429) refusedAt = n;
      else expect(a.status).toBe(401);
    }
    expect(refusedAt).toBe(LOGIN_RATE_MAX + 1); // per process, the first refusal would come at about twice that
  });

  it('an upload through web 1 is built by the worker and its tiles are served by web 2', async () => {
    const [w1, w2] = webs;
    const png = await makeImage('png', fixture.width, fixture.height);
    const t0 = Date.now();
    const up = await uploadVia(w1, token, projectId, png, 'TB-11');
    expect(up.status).toBe(202);
    const id = up.body.id as number;
    const ready = await readyVia(w2, token, id);
    figures[`time to tiles, ${fixture.width} × ${fixture.height} PNG (upload through web 1 until web 2 says ready)`] = seconds(Date.now() - t0);
    const [{ storage_key: key, worker_id: built }] = await sql(databaseUrl, 'SELECT storage_key, worker_id FROM sections WHERE id = $1', [id]);
    expect(built).toBeNull();
    const [builder] = await sql(databaseUrl, `SELECT count(*)::int AS n FROM job_workers WHERE runs_workers`);
    expect(builder.n).toBe(1); // only the worker process works the queue

    const t1 = Date.now();
    const tile = await api(w2, 'GET', `/api/sections/${id}/tiles/0/0_0.jpg`, { token });
    figures['one tile GET through web 2 from S3 (first request)'] = `${Date.now() - t1} ms`;
    expect(tile.status).toBe(200);
    expect(tile.headers.get('content-type')).toBe('image/jpeg');
    expect(tile.headers.get('cache-control')).toMatch(/immutable/);
    expect((await sharp(tile.body as Buffer).metadata()).format).toBe('jpeg');
    expect(ready.tiles).toMatchObject({ width: fixture.width, height: fixture.height });

    // the files are in the bucket, not on any process's disk
    const store = createFileStore(tmpDir('probe'), fake.settings);
    const keys: string[] = [];
    for await (const k of store.listKeys(`sections/${key}`)) keys.push(k.key);
    expect(keys).toContain(`sections/${key}/original`);
    expect(keys.filter((k) => k.includes('/tiles/')).length).toBeGreaterThan(10);
    for (const w of webs) expect(fs.existsSync(path.join(w.storageDir, 'sections'))).toBe(false);
    expect(fs.readdirSync(path.join(w1.storageDir, 'tmp'))).toEqual([]); // the upload's scratch is gone

    // a save through web 1 and a stale save through web 2: one 200, one 409
    const cal = await api(w1, 'PUT', `/api/sections/${id}/calibration`, { token, body: { ties: fixture.ties } });
    expect(cal.status).toBeLessThan(300);
    const created = await api(w1, 'POST', `/api/sections/${id}/buildups`, { token, body: { name: 'Kestrel Knoll' } });
    expect(created.status).toBe(201);
    const px = fixture.pixelGeometry.buildups[0];
    const geometry = { base: px.base, cycles: px.cycles, terminations: px.terminations, topIsDrowningSurface: px.topIsDrowningSurface };
    const first = await api(w1, 'PUT', `/api/buildups/${created.body.id}`, { token, body: { version: 0, geometry } });
    const stale = await api(w2, 'PUT', `/api/buildups/${created.body.id}`, { token, body: { version: 0, geometry: { ...geometry, topIsDrowningSurface: false } } });
    expect([first.status, stale.status]).toEqual([200, 409]);
    expect(stale.body.code).toBe('version_conflict');
    const got = await api(w2, 'GET', `/api/buildups/${created.body.id}`, { token });
    expect(got.body.version).toBe(1);
    expect(got.body.geometry.topIsDrowningSurface).toBe(px.topIsDrowningSurface);
  }, 120_000);

  it('a worker killed in the middle of a build: another worker finishes it, and web 1 serves its tiles', async () => {
    const [w1, w2] = webs;
    const first = workers[0];
    const png = await texturedPng(8000, 6000);
    const up = await uploadVia(w2, token, projectId, png, 'TB-14');
    expect(up.status).toBe(202);
    const id = up.body.id as number;
    await until(
      'the worker building with progress',
      async () => {
        const [row] = await sql(databaseUrl, 'SELECT worker_id, progress FROM sections WHERE id = $1', [id]);
        return row.worker_id === first.id && row.progress > 2;
      },
      60_000,
      25,
    ).catch(async (err) => {
      throw new Error(`${err.message}\n${await stateOf(id)}`);
    });
    expect(await first.kill('SIGKILL')).toBe('SIGKILL');
    const killedAt = Date.now();
    const [mid] = await sql(databaseUrl, 'SELECT status, progress FROM sections WHERE id = $1', [id]);
    expect(mid.status).toBe('processing'); // killed in the middle, not after the end
    expect(mid.progress).toBeLessThan(100);

    const second = await startWorker({ databaseUrl, storageDir: tmpDir('worker2'), env: { ...commonEnv(), LOG_LEVEL: 'info' } });
    workers.push(second);
    figures['second worker up after the kill (tsx boot)'] = seconds(Date.now() - killedAt);
    const ready = await readyVia(w1, token, id, 90_000);
    figures['kill of the worker mid-build until the section is ready (8000 × 6000 PNG, resumed from the start)'] = seconds(Date.now() - killedAt);
    expect(ready.tiles).toMatchObject({ width: 8000, height: 6000 });
    const [after] = await sql(databaseUrl, 'SELECT attempts FROM sections WHERE id = $1', [id]);
    expect(after.attempts).toBe(2);
    const tile = await api(w1, 'GET', `/api/sections/${id}/tiles/0/0_0.jpg`, { token });
    expect(tile.status).toBe(200);
    expect(tile.headers.get('cache-control')).toMatch(/immutable/);
  }, 240_000);
});
