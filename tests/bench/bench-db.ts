/**
 * The throwaway database every server benchmark boots against: a PostgreSQL
 * cluster under `tmp` (fsync off), a fresh database in it and a storage
 * folder. Stopping and removing the cluster is pushed onto `cleanups`.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { removeCluster, startCluster } from '../../server/db/cluster';

/** A scratch folder for one benchmark run, readable by the PostgreSQL server it starts. */
export function benchTmp(name: string): string {
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), `cayline-bench-${name}-`));
  fs.chmodSync(tmp, 0o755);
  return tmp;
}

/** The database URL, the storage folder and the server config (cheap bcrypt, random JWT secret, any port) to boot with. */
export async function benchDatabase(
  tmp: string,
  cleanups: (() => Promise<void> | void)[],
): Promise<{ databaseUrl: string; storageDir: string; config: { storageDir: string; port: number; bcryptCost: number; jwtSecret: string } }> {
  const dataDir = path.join(tmp, 'pg', 'data');
  process.env.CAYLINE_PG_FSYNC = 'off';
  const cluster = await startCluster({ dataDir, database: 'postgres', log: () => {} });
  cleanups.push(async () => {
    await cluster.stop();
    removeCluster(dataDir);
  });
  const dbName = `bench_${crypto.randomBytes(4).toString('hex')}`;
  const c = new pg.Client({ connectionString: cluster.url });
  await c.connect();
  await c.query(`CREATE DATABASE ${dbName}`);
  await c.end();
  const storageDir = path.join(tmp, 'storage');
  fs.mkdirSync(storageDir, { recursive: true });
  return {
    databaseUrl: cluster.url.replace(/\/postgres$/, `/${dbName}`),
    storageDir,
    config: { storageDir, port: 0, bcryptCost: 4, jwtSecret: crypto.randomBytes(24).toString('hex') },
  };
}
