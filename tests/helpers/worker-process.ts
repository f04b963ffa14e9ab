/**
 * A real background worker process (server/scripts/worker.ts) against a test's
 * database and storage folder, started with `node --import tsx` so that its
 * pid is the worker itself (`npx tsx` would put two launcher processes in
 * front of it, and SIGKILL would only reach those).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export async function sql(url: string, text: string, values: unknown[] = []) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return (await c.query(text, values)).rows;
  } finally {
    await c.end();
  }
}

export interface WorkerProcess {
  child: ChildProcess;
  pid: number;
  /** Its job_workers id (known once it registered). */
  id: string;
  /** What it printed (pino lines), for failure messages. */
  output(): string;
  /** Resolves with the exit code or signal. */
  exited: Promise<number | string | null>;
  kill(signal: NodeJS.Signals): Promise<number | string | null>;
}

/**
 * Start a worker and wait until it has registered in job_workers and works
 * the queues (its `working the job queues` line: boot recovery and every
 * queue's start are behind it), bounded waits.
 */
export async function startWorker(opts: { databaseUrl: string; storageDir: string; env?: Record<string, string> }): Promise<WorkerProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/scripts/worker.ts'], {
    cwd: ROOT,
    env: {
      ...process.env,
      DATABASE_URL: opts.databaseUrl,
      CAYLINE_STORAGE: opts.storageDir,
      JWT_SECRET: 'worker-process-test-secret-0123456789',
      JOB_POLL_SECONDS: '0.5',
      LOG_LEVEL: 'info',
      ...opts.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let text = '';
  child.stdout!.on('data', (b: Buffer) => (text += b.toString()));
  child.stderr!.on('data', (b: Buffer) => (text += b.toString()));
  const exited = new Promise<number | string | null>((resolve) => child.once('exit', (code, signal) => resolve(signal ?? code)));
  let gone = false;
  void exited.then(() => (gone = true));
  const pid = child.pid!;
  const until = Date.now() + 60_000;
  let id = '';
  while (!id) {
    if (gone) throw new Error(`the worker exited before it registered:\n${text}`);
    if (Date.now() > until) {
      child.kill('SIGKILL');
      throw new Error(`the worker did not register within 60 s:\n${text}`);
    }
    const rows = await sql(opts.databaseUrl, 'SELECT id FROM job_workers WHERE pid = $1 AND runs_workers', [pid]).catch(() => []);
    if (rows.length) id = rows[0].id;
    else await new Promise((r) => setTimeout(r, 100));
  }
  while (!/^working the job queues$/m.test(text)) {
    if (gone) throw new Error(`the worker exited before it worked the queues:\n${text}`);
    if (Date.now() > until) {
      child.kill('SIGKILL');
      throw new Error(`the worker registered but did not work the queues within 60 s:\n${text}`);
    }
    await new Promise((r) => setTimeout(r, 50));
  }
  return {
    child,
    pid,
    id,
    output: () => text,
    exited,
    async kill(signal) {
      if (!gone) child.kill(signal);
      return exited;
    },
  };
}

/** The pid of a process that existed and has exited (reaped), for a dead owner on this host. */
export async function deadPid(): Promise<number> {
  const child = spawn(process.execPath, ['-e', ''], { stdio: 'ignore' });
  await new Promise((r) => child.once('exit', r));
  return child.pid!;
}
