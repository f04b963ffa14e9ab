/**
 * Vitest global setup for the API and e2e suites: a throwaway PostgreSQL
 * cluster in a temp folder on a free port, removed afterwards. Test files get
 * the server's base URL through `inject('pgBaseUrl')` and make their own
 * database in it (tests/helpers/app.ts).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { TestProject } from 'vitest/node';
import { startCluster, removeCluster } from '../../server/db/cluster';

declare module 'vitest' {
  export interface ProvidedContext {
    pgBaseUrl: string;
  }
}

export default async function setup(project: TestProject) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-pg-'));
  fs.chmodSync(dir, 0o755);
  const dataDir = path.join(dir, 'data');
  process.env.CAYLINE_PG_FSYNC = 'off';
  const cluster = await startCluster({ dataDir, database: 'postgres', log: () => {} });
  project.provide('pgBaseUrl', cluster.url.replace(/\/postgres$/, ''));
  return async () => {
    await cluster.stop();
    removeCluster(dataDir);
    fs.rmSync(dir, { recursive: true, force: true });
  };
}
