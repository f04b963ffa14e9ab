/**
 * `npm start`: own PostgreSQL (unless DATABASE_URL is set), migrations, demo
 * data once, client build, then API and client from one process.
 * Ctrl-C stops the server and then the database.
 */
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { ROOT_DIR, loadConfig } from '../config';
import { startCluster, type ClusterHandle } from '../db/cluster';
import { boot, type Running } from '../index';
import { seedDemo } from '../db/seeders/index';
import { DEMO_PASSWORD, DEMO_USERS } from '../db/seeders/demo';

const say = (m: string) => console.log(`[cayline] ${m}`);

async function main() {
  const config = loadConfig();
  let cluster: ClusterHandle | null = null;
  let databaseUrl = process.env.DATABASE_URL;
  if (!databaseUrl) {
    cluster = await startCluster({ dataDir: path.join(config.storageDir, 'pg'), log: say });
    databaseUrl = cluster.url;
    say(`PostgreSQL running on 127.0.0.1:${cluster.port} (data in ${cluster.dataDir})`);
  } else {
    say('Using the PostgreSQL server in DATABASE_URL');
  }

  let running: Running | null = null;
  let stopping = false;
  const shutdown = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    say(`${signal}: stopping the server…`);
    try {
      await running?.close();
    } finally {
      if (cluster) {
        say('stopping PostgreSQL…');
        await cluster.stop();
      }
      say('stopped.');
      process.exit(0);
    }
  };
  process.on('SIGINT', () => void shutdown('SIGINT'));
  process.on('SIGTERM', () => void shutdown('SIGTERM'));

  try {
    if (process.env.CAYLINE_SKIP_BUILD !== '1') {
      say('building the client…');
      const r = spawnSync(path.join(ROOT_DIR, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn'], {
        cwd: ROOT_DIR,
        stdio: 'inherit',
      });
      if (r.status !== 0) throw new Error('the client build failed');
    }
    running = await boot({
      databaseUrl,
      afterMigrate: async ({ sequelize, config }) => seedDemo({ sequelize, config, log: say }),
    });
  } catch (err) {
    console.error(err);
    await cluster?.stop();
    process.exit(1);
  }
  say(`ready at ${running.url}`);
  say(`demo accounts (password "${DEMO_PASSWORD}", for demonstration only):`);
  for (const u of DEMO_USERS) say(`  ${u.role.padEnd(12)} ${u.email}`);
  say('press Ctrl-C to stop.');
}

void main();
