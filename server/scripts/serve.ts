/**
 * One web process against a PostgreSQL someone runs: `DATABASE_URL=… npm run serve`.
 * No database of its own, no demo data, no client build (it serves a built
 * client when one is there). Run several behind a load balancer with the same
 * DATABASE_URL, JWT_SECRET and file store (CAYLINE_STORE=s3 …), usually with
 * CAYLINE_JOB_WORKERS=0 next to `npm run worker` processes. PORT=0 picks a
 * free port; the address is printed as `listening <url>`.
 */
import { boot, type Running } from '../index';

async function main() {
  const databaseUrl = process.env.DATABASE_URL;
  if (!databaseUrl) throw new Error('DATABASE_URL: set it to the PostgreSQL server every Cayline process shares');
  if (!process.env.JWT_SECRET) console.warn('JWT_SECRET is unset: this process signs sessions with the secret in its storage folder, which other machines do not share');
  let running: Running | null = null;
  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    await running?.close();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop());
  process.on('SIGTERM', () => void stop());
  running = await boot({ databaseUrl });
  console.log(`listening ${running.url}`);
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
