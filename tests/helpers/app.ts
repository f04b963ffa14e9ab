/**
 * A real Cayline app on its own fresh database inside the suite's throwaway
 * cluster (see db-global-setup.ts), with the demo accounts seeded.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { inject } from 'vitest';
import { boot, type Running } from '../../server/index';
import { seedDemoUsers, DEMO_PASSWORD } from '../../server/db/seeders/demo';
import type { Config } from '../../server/config';

export const ROLE_EMAIL = {
  admin: 'admin@tessel.example',
  interpreter: 'interpreter@tessel.example',
  curator: 'curator@tessel.example',
  reviewer: 'reviewer@tessel.example',
} as const;
export type DemoRole = keyof typeof ROLE_EMAIL;

export interface TestApp {
  running: Running;
  app: Running['app'];
  databaseUrl: string;
  storageDir: string;
  token(role: DemoRole): Promise<string>;
  close(): Promise<void>;
}

export async function createDatabase(): Promise<string> {
  const base = inject('pgBaseUrl');
  const name = `t_${crypto.randomBytes(6).toString('hex')}`;
  const c = new pg.Client({ connectionString: `${base}/postgres` });
  await c.connect();
  await c.query(`CREATE DATABASE ${name}`);
  await c.end();
  return `${base}/${name}`;
}

export async function createTestApp(
  opts: {
    config?: Partial<Config>;
    listen?: boolean;
    seed?: boolean;
    /** Boot again on an existing database / storage folder (a restart); the caller then owns the folder. */
    databaseUrl?: string;
    storageDir?: string;
  } = {},
): Promise<TestApp> {
  const databaseUrl = opts.databaseUrl ?? (await createDatabase());
  const ownStorage = !opts.storageDir;
  const storageDir = opts.storageDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-test-storage-'));
  const jobs = { runWorkers: true, pollingIntervalSeconds: 0.5, maxAttempts: 3, expireInSeconds: 3600, ...opts.config?.jobs };
  const running = await boot({
    databaseUrl,
    listen: opts.listen ?? false,
    config: { storageDir, bcryptCost: 4, jwtSecret: crypto.randomBytes(24).toString('hex'), port: 0, ...opts.config, jobs },
    afterMigrate: async ({ sequelize }) => {
      if (opts.seed !== false) await seedDemoUsers(sequelize);
    },
  });
  const tokens = new Map<string, string>();
  return {
    running,
    app: running.app,
    databaseUrl,
    storageDir,
    async token(role) {
      if (!tokens.has(role)) {
        const r = await request(running.app).post('/api/auth/login').send({ email: ROLE_EMAIL[role], password: DEMO_PASSWORD });
        if (r.status !== 200) throw new Error(`login as ${role} failed: ${r.status} ${JSON.stringify(r.body)}`);
        tokens.set(role, r.body.token);
      }
      return tokens.get(role)!;
    },
    async close() {
      await running.close();
      if (ownStorage) fs.rmSync(storageDir, { recursive: true, force: true });
    },
  };
}

export const bearer = (t: string) => ({ Authorization: `Bearer ${t}` });
