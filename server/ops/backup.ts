/**
 * Backup and restore of one Cayline installation: the database (pg_dump's
 * custom format, restored with pg_restore) plus every object of the file
 * store, read and written only through the store's public interface
 * (`listKeys`, `get`, `putStream`, `removePrefix`), so the local-disk and the
 * S3 driver are backed up the same way.
 *
 * A backup is one folder `cayline-backup-<UTC time>/` holding
 * `database.dump`, `files/<store key>` and `manifest.json` (format, time,
 * migrations applied, SHA-256 and size of the dump and of every file). It is
 * written as `.<name>.partial` and renamed when complete, so a failed backup
 * leaves no folder that looks complete.
 *
 * A restore first checks the whole backup (manifest, every hash, the dump's
 * table of contents, migrations this code knows) and only then drops every
 * schema of the target database, recreates `public`, runs pg_restore in one
 * transaction, and replaces the store's content under every prefix the
 * backup covers. Stop the app (and its workers) first.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { spawn } from 'node:child_process';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import type { FileStore } from '../storage/fileStore';
import { assertKey } from '../storage/fileStore';
import { ensurePostgresBinaries } from '../db/cluster';
import { migrations } from '../db/migrations/index';

/**
 * The top-level prefixes of the file store that hold the installation's
 * objects (the store has no "list everything": on local disk its root also
 * holds the database cluster and scratch). A new kind of stored object under
 * a new prefix must be added here; tests/api/ops-backup.test.ts looks for key
 * templates in server/ that name a prefix missing from this list.
 */
export const STORE_PREFIXES = ['sections', 'segy', 'reports', 'report-batches', 'analogues', 'mail'] as const;

export const BACKUP_FORMAT = 'cayline-backup';
export const BACKUP_FORMAT_VERSION = 1;

export interface BackupManifest {
  format: typeof BACKUP_FORMAT;
  formatVersion: number;
  createdAt: string;
  appVersion: string;
  migrations: string[];
  database: { file: 'database.dump'; size: number; sha256: string };
  prefixes: string[];
  files: { key: string; size: number; sha256: string }[];
}

export class BackupError extends Error {}

/** Connection settings of a postgres:// URL as libpq's command-line options and environment (the password never on a command line). */
function pgArgs(databaseUrl: string): { args: string[]; env: NodeJS.ProcessEnv } {
  const u = new URL(databaseUrl);
  const database = decodeURIComponent(u.pathname.replace(/^\//, ''));
  if (!database) throw new BackupError('the database URL names no database');
  const args = ['--host', u.hostname || '127.0.0.1', '--port', u.port || '5432', '--dbname', database];
  if (u.username) args.push('--username', decodeURIComponent(u.username));
  const env: NodeJS.ProcessEnv = { ...process.env, PGCONNECT_TIMEOUT: '10' };
  if (u.password) env.PGPASSWORD = decodeURIComponent(u.password);
  const sslmode = u.searchParams.get('sslmode');
  if (sslmode) env.PGSSLMODE = sslmode;
  return { args, env };
}

function runTool(bin: string, tool: string, args: string[], env: NodeJS.ProcessEnv): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(path.join(bin, tool), args, { env, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    let err = '';
    child.stdout.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (err += d));
    child.on('error', reject);
    child.on('close', (code) => (code === 0 ? resolve(out) : reject(new BackupError(`${tool} failed (exit ${code}): ${err.trim() || out.trim()}`))));
  });
}

async function sha256File(file: string): Promise<string> {
  const h = crypto.createHash('sha256');
  await pipeline(fs.createReadStream(file), h);
  return h.digest('hex');
}

const stamp = (d: Date) => d.toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');

/** pg_dump of the database plus a copy of every store object under STORE_PREFIXES, into `<outDir>/cayline-backup-<time>/`. */
export async function backup(opts: {
  databaseUrl: string;
  store: FileStore;
  outDir: string;
  appVersion?: string;
  log?: (m: string) => void;
  now?: Date;
}): Promise<{ dir: string; manifest: BackupManifest }> {
  const log = opts.log ?? (() => {});
  const bin = ensurePostgresBinaries(log);
  const createdAt = opts.now ?? new Date();
  const name = `cayline-backup-${stamp(createdAt)}`;
  await fsp.mkdir(opts.outDir, { recursive: true });
  const dir = path.join(path.resolve(opts.outDir), name);
  if (fs.existsSync(dir)) throw new BackupError(`${dir} already exists`);
  const partial = path.join(path.resolve(opts.outDir), `.${name}.partial`);
  await fsp.rm(partial, { recursive: true, force: true });
  await fsp.mkdir(path.join(partial, 'files'), { recursive: true, mode: 0o700 });
  try {
    const applied = await appliedMigrations(opts.databaseUrl);
    log('dumping the database (pg_dump)…');
    const { args, env } = pgArgs(opts.databaseUrl);
    const dump = path.join(partial, 'database.dump');
    await runTool(bin, 'pg_dump', ['--format=custom', '--no-owner', '--no-privileges', '--file', dump, ...args], env);
    await fsp.chmod(dump, 0o600); // it holds password hashes
    const database = { file: 'database.dump' as const, size: (await fsp.stat(dump)).size, sha256: await sha256File(dump) };

    log('copying the file store…');
    const files: BackupManifest['files'] = [];
    for (const prefix of STORE_PREFIXES) {
      for await (const obj of opts.store.listKeys(prefix)) {
        const got = await opts.store.get(obj.key);
        if (!got) continue; // removed meanwhile
        const dest = path.join(partial, 'files', ...assertKey(obj.key));
        await fsp.mkdir(path.dirname(dest), { recursive: true });
        const h = crypto.createHash('sha256');
        let size = 0;
        got.stream.on('data', (c: Buffer) => {
          h.update(c);
          size += c.length;
        });
        await pipeline(got.stream, fs.createWriteStream(dest, { mode: 0o600 }));
        files.push({ key: obj.key, size, sha256: h.digest('hex') });
      }
    }
    const manifest: BackupManifest = {
      format: BACKUP_FORMAT,
      formatVersion: BACKUP_FORMAT_VERSION,
      createdAt: createdAt.toISOString(),
      appVersion: opts.appVersion ?? 'unknown',
      migrations: applied,
      database,
      prefixes: [...STORE_PREFIXES],
      files,
    };
    await fsp.writeFile(path.join(partial, 'manifest.json'), JSON.stringify(manifest, null, 2) + '\n', { mode: 0o600 });
    await fsp.rename(partial, dir);
    log(`backup written: ${dir} (${files.length} files, database ${database.size} bytes)`);
    return { dir, manifest };
  } catch (e) {
    await fsp.rm(partial, { recursive: true, force: true });
    throw e;
  }
}

async function appliedMigrations(databaseUrl: string): Promise<string[]> {
  const c = new pg.Client({ connectionString: databaseUrl });
  await c.connect();
  try {
    const r = await c.query<{ name: string }>('SELECT name FROM schema_migrations ORDER BY name');
    return r.rows.map((x) => x.name);
  } catch (e) {
    if ((e as { code?: string }).code === '42P01') throw new BackupError('the database has no schema_migrations table: not a Cayline database, or Cayline never started on it');
    throw e;
  } finally {
    await c.end();
  }
}

/** Read and check a backup folder completely; throws BackupError naming the first problem. */
export async function verifyBackup(dir: string): Promise<BackupManifest> {
  const manifestFile = path.join(dir, 'manifest.json');
  if (!fs.existsSync(manifestFile)) throw new BackupError(`${dir}: no manifest.json (not a Cayline backup, or an unfinished one)`);
  let m: BackupManifest;
  try {
    m = JSON.parse(await fsp.readFile(manifestFile, 'utf8'));
  } catch (e) {
    throw new BackupError(`manifest.json: not valid JSON (${(e as Error).message})`);
  }
  if (m.format !== BACKUP_FORMAT || m.formatVersion !== BACKUP_FORMAT_VERSION) {
    throw new BackupError(`manifest.json: format ${JSON.stringify(m.format)} version ${m.formatVersion}; this Cayline reads ${BACKUP_FORMAT} version ${BACKUP_FORMAT_VERSION}`);
  }
  const known = new Set(migrations.map((x) => x.name));
  const unknown = (m.migrations ?? []).filter((x) => !known.has(x));
  if (unknown.length) throw new BackupError(`manifest.json migrations: made by a newer Cayline (unknown here: ${unknown.join(', ')})`);
  const dump = path.join(dir, 'database.dump');
  if (!fs.existsSync(dump) || (await sha256File(dump)) !== m.database.sha256) throw new BackupError('database.dump: missing or its SHA-256 differs from the manifest');
  for (const [i, f] of (m.files ?? []).entries()) {
    let parts: string[];
    try {
      parts = assertKey(f.key);
    } catch {
      throw new BackupError(`manifest.json files[${i}].key: not a store key`);
    }
    if (!STORE_PREFIXES.includes(parts[0] as (typeof STORE_PREFIXES)[number])) throw new BackupError(`manifest.json files[${i}].key: outside the store prefixes (${f.key})`);
    const p = path.join(dir, 'files', ...parts);
    if (!fs.existsSync(p) || (await sha256File(p)) !== f.sha256) throw new BackupError(`files/${f.key}: missing or its SHA-256 differs from the manifest`);
  }
  return m;
}

/** Replace the database and the store's content with a backup (checked completely first). */
export async function restore(opts: { databaseUrl: string; store: FileStore; from: string; log?: (m: string) => void }): Promise<BackupManifest> {
  const log = opts.log ?? (() => {});
  const bin = ensurePostgresBinaries(log);
  const dir = path.resolve(opts.from);
  log(`checking ${dir}…`);
  const manifest = await verifyBackup(dir);
  const { args, env } = pgArgs(opts.databaseUrl);
  const dump = path.join(dir, 'database.dump');
  await runTool(bin, 'pg_restore', ['--list', dump], env); // the dump's table of contents reads

  log('replacing the database (drop every schema, pg_restore in one transaction)…');
  const c = new pg.Client({ connectionString: opts.databaseUrl });
  await c.connect();
  try {
    const schemas = await c.query<{ nspname: string }>(
      `SELECT nspname FROM pg_namespace WHERE nspname <> 'information_schema' AND nspname NOT LIKE 'pg\\_%'`,
    );
    await c.query('BEGIN');
    for (const s of schemas.rows) await c.query(`DROP SCHEMA ${pg.escapeIdentifier(s.nspname)} CASCADE`);
    await c.query('CREATE SCHEMA public');
    await c.query('COMMIT');
  } catch (e) {
    await c.query('ROLLBACK').catch(() => {});
    throw e;
  } finally {
    await c.end();
  }
  await runTool(bin, 'pg_restore', ['--no-owner', '--no-privileges', '--exit-on-error', '--single-transaction', ...args, dump], env);

  log(`restoring ${manifest.files.length} files…`);
  for (const prefix of manifest.prefixes) {
    assertKey(prefix);
    await opts.store.removePrefix(prefix);
  }
  for (const f of manifest.files) {
    await opts.store.putStream(f.key, fs.createReadStream(path.join(dir, 'files', ...assertKey(f.key))));
  }
  log('restore done.');
  return manifest;
}
