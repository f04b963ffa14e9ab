/**
 * `npm run backup` / `npm run restore` (server/ops/backup.ts): a round trip on
 * the suite's throwaway cluster. Data is made through the API (a ready,
 * calibrated section with its tile pyramid, a saved buildup, audit rows), the
 * app is stopped, the backup is restored into a fresh database and a fresh
 * storage folder, and every table (row count and an md5 of all rows in a
 * fixed order) and every stored file (SHA-256) must be equal. Then an app
 * boots on the restored copy and serves the section's tile.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createDatabase, createTestApp } from '../helpers/app';
import { readyCalibratedSection, savedBuildup } from '../helpers/api-fixtures';
import { LocalFileStore, createFileStore, type FileStore } from '../../server/storage/fileStore';
import { startS3Fake } from '../helpers/s3-fake';
import { backup, restore, STORE_PREFIXES, verifyBackup } from '../../server/ops/backup';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-backup-test-'));
const sourceDir = path.join(tmp, 'source-storage');
const targetDir = path.join(tmp, 'target-storage');
let sourceUrl: string;
let sectionId: number;
let backupDir: string;
let targetUrl: string; // restored by the round trip, restored over again by the next test

beforeAll(async () => {
  fs.mkdirSync(sourceDir);
  fs.mkdirSync(targetDir);
  const t = await createTestApp({ storageDir: sourceDir });
  sourceUrl = t.databaseUrl;
  const token = await t.token('interpreter');
  const projects = await request(t.app).get('/api/projects').set(bearer(token));
  const projectId = projects.body.items[0].id;
  sectionId = await readyCalibratedSection(t, token, projectId);
  await savedBuildup(t, token, sectionId, 'Marrow Bank');
  await t.close(); // a quiet source: no heartbeats or queue upkeep between backup and comparison
}, 120_000);
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

/** Every table of the app's schemas with its row count and an md5 over all its rows in text order. */
async function tableDigests(url: string): Promise<Record<string, string>> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    const tables = await c.query<{ s: string; t: string }>(
      `SELECT table_schema AS s, table_name AS t FROM information_schema.tables
        WHERE table_type = 'BASE TABLE' AND table_schema NOT IN ('pg_catalog', 'information_schema') ORDER BY 1, 2`,
    );
    const out: Record<string, string> = {};
    for (const { s, t } of tables.rows) {
      const q = `SELECT count(*)::int AS n, md5(coalesce(string_agg(x::text, E'\\n' ORDER BY x::text), '')) AS h FROM ${pg.escapeIdentifier(s)}.${pg.escapeIdentifier(t)} x`;
      const r = await c.query<{ n: number; h: string }>(q);
      out[`${s}.${t}`] = `${r.rows[0].n} rows ${r.rows[0].h}`;
    }
    return out;
  } finally {
    await c.end();
  }
}

/** SHA-256 of every object under the store prefixes. */
async function storeDigests(store: FileStore): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const prefix of STORE_PREFIXES) {
    for await (const o of store.listKeys(prefix)) {
      const got = await store.get(o.key);
      const h = crypto.createHash('sha256');
      for await (const chunk of got!.stream) h.update(chunk as Buffer);
      out[o.key] = h.digest('hex');
    }
  }
  return out;
}

describe('backup and restore', () => {
  it('round trip: every table and every stored file equal after restoring into a fresh database and store', async () => {
    const b = await backup({ databaseUrl: sourceUrl, store: new LocalFileStore(sourceDir), outDir: path.join(tmp, 'backups'), appVersion: 'test' });
    backupDir = b.dir;
    expect(path.basename(b.dir)).toMatch(/^cayline-backup-\d{8}T\d{6}Z$/);
    expect(fs.readdirSync(path.join(tmp, 'backups'))).toEqual([path.basename(b.dir)]); // no .partial left
    expect(b.manifest.files.some((f) => f.key.startsWith(`sections/`) && f.key.includes('/pyramid/'))).toBe(true);
    expect(b.manifest.migrations.length).toBeGreaterThan(5);

    targetUrl = await createDatabase();
    const m = await restore({ databaseUrl: targetUrl, store: new LocalFileStore(targetDir), from: b.dir });
    expect(m.files.length).toBe(b.manifest.files.length);

    const [src, dst] = [await tableDigests(sourceUrl), await tableDigests(targetUrl)];
    expect(Object.keys(src)).toContain('public.buildups');
    expect(Object.keys(src)).toContain('pgboss.job');
    expect(src['public.sections']).toMatch(/^1 rows /);
    expect(dst).toEqual(src);

    const [srcFiles, dstFiles] = [await storeDigests(new LocalFileStore(sourceDir)), await storeDigests(new LocalFileStore(targetDir))];
    expect(Object.keys(srcFiles).length).toBeGreaterThan(2);
    expect(dstFiles).toEqual(srcFiles);

    // the restored copy runs: sign-in, the section's tile, and a new row (sequences came back too)
    const t2 = await createTestApp({ databaseUrl: targetUrl, storageDir: targetDir, seed: false });
    try {
      const token = await t2.token('interpreter');
      const tile = await request(t2.app).get(`/api/sections/${sectionId}/tiles/0/0_0.jpg`).set(bearer(token));
      expect(tile.status).toBe(200);
      const p = await request(t2.app).post('/api/projects').set(bearer(token)).send({ name: 'Kestrel Knoll after the restore' });
      expect(p.status, JSON.stringify(p.body)).toBe(201);
    } finally {
      await t2.close();
    }
  }, 120_000);

  it('restoring over a copy that has been used (the app ran on it, rows changed, a stray table and schema) gives the backup back exactly', async () => {
    const url = targetUrl;
    const store = new LocalFileStore(targetDir);
    const c = new pg.Client({ connectionString: url });
    await c.connect();
    await c.query(`UPDATE users SET name = 'Changed after the backup'`);
    await c.query(`CREATE TABLE public.stray (id int)`);
    await c.query(`CREATE SCHEMA stray_schema`);
    await c.end();
    await store.put('sections/stray-object', Buffer.from('not in the backup'));
    await restore({ databaseUrl: url, store, from: backupDir });
    const digests = await tableDigests(url);
    expect(Object.keys(digests)).not.toContain('public.stray');
    const c2 = new pg.Client({ connectionString: url });
    await c2.connect();
    expect((await c2.query(`SELECT 1 FROM pg_namespace WHERE nspname = 'stray_schema'`)).rowCount).toBe(0);
    await c2.end();
    expect(digests).toEqual(await tableDigests(sourceUrl));
    expect(await store.exists('sections/stray-object')).toBe(false);
  }, 60_000);

  it('the S3 driver: restore into a bucket, back up from it again, the same files and hashes', async () => {
    const fake = await startS3Fake();
    try {
      const s3 = createFileStore(path.join(tmp, 's3-scratch'), { ...fake.settings, prefix: 'restore-run' });
      const url = await createDatabase();
      const first = await verifyBackup(backupDir);
      await restore({ databaseUrl: url, store: s3, from: backupDir });
      const again = await backup({ databaseUrl: url, store: s3, outDir: path.join(tmp, 's3-backups') });
      const byKey = (files: { key: string; sha256: string }[]) => Object.fromEntries(files.map((f) => [f.key, f.sha256]));
      expect(Object.keys(byKey(again.manifest.files)).length).toBe(first.files.length);
      expect(byKey(again.manifest.files)).toEqual(byKey(first.files));
      expect(again.manifest.migrations).toEqual(first.migrations);
    } finally {
      await fake.close();
    }
  }, 60_000);

  it('a corrupted file is refused before anything is touched, naming the file', async () => {
    const m = await verifyBackup(backupDir);
    const victim = m.files.find((f) => f.key.endsWith('.jpg'))!;
    const copy = path.join(tmp, 'corrupt');
    fs.cpSync(backupDir, copy, { recursive: true });
    fs.appendFileSync(path.join(copy, 'files', ...victim.key.split('/')), 'x');
    const url = await createDatabase();
    const c = new pg.Client({ connectionString: url });
    await c.connect();
    await c.query('CREATE TABLE public.keep_me (id int)');
    await c.query('INSERT INTO public.keep_me VALUES (7)');
    await expect(restore({ databaseUrl: url, store: new LocalFileStore(path.join(tmp, 'untouched')), from: copy })).rejects.toThrow(`files/${victim.key}: missing or its SHA-256 differs`);
    expect((await c.query('SELECT id FROM public.keep_me')).rows).toEqual([{ id: 7 }]);
    await c.end();
    expect(fs.existsSync(path.join(tmp, 'untouched', 'sections'))).toBe(false);
  });

  it('a failed backup leaves no folder behind', async () => {
    const out = path.join(tmp, 'failed-backups');
    const wrong = sourceUrl.replace(/\/[^/]+$/, '/no_such_database');
    await expect(backup({ databaseUrl: wrong, store: new LocalFileStore(sourceDir), outDir: out })).rejects.toThrow(/no_such_database/);
    expect(fs.readdirSync(out)).toEqual([]);
  });

  it('every store key template in server/ starts with a prefix the backup covers', () => {
    // a guard for the prefix list: keys are built as `<prefix>/${…}` (server/storage/fileStore.ts)
    const root = path.resolve(__dirname, '../../server');
    const found = new Set<string>();
    const walk = (d: string) => {
      for (const e of fs.readdirSync(d, { withFileTypes: true })) {
        const p = path.join(d, e.name);
        if (e.isDirectory()) {
          if (e.name !== 'ops') walk(p); // the backup module's own messages (`files/${key}`) are not keys
        }
        else if (e.name.endsWith('.ts')) for (const m of fs.readFileSync(p, 'utf8').matchAll(/`([a-z][a-z-]*)\/\$\{/g)) found.add(m[1]);
      }
    };
    walk(root);
    found.delete('health'); // the readiness probe's own short-lived object
    expect(found.size).toBeGreaterThan(2);
    expect([...found].filter((p) => !(STORE_PREFIXES as readonly string[]).includes(p))).toEqual([]);
  });
});
