/**
 * Runs vitest projects side by side (`tsx tests/setup/run-projects.ts api e2e`).
 *
 * The API and end-to-end suites spend most of their time waiting on
 * PostgreSQL, child processes and the browser, and each starts its own
 * throwaway cluster on a free port, so running them at once roughly halves
 * the wall time on two cores. Each project's output goes to its own buffer
 * and is printed whole when that project ends (so the vitest summary lines
 * that `.ci/run` counts stay intact); the exit code is non-zero when any
 * project failed. `CAYLINE_SERIAL_PROJECTS=1` runs them one after another.
 */
import { spawn } from 'node:child_process';
import path from 'node:path';

const ROOT = path.resolve(import.meta.dirname, '..', '..');
const projects = process.argv.slice(2);
if (!projects.length) {
  console.error('usage: tsx tests/setup/run-projects.ts PROJECT [PROJECT…]');
  process.exit(2);
}

function run(project: string): Promise<number> {
  return new Promise((resolve) => {
    const started = Date.now();
    const child = spawn(path.join(ROOT, 'node_modules', '.bin', 'vitest'), ['run', '--project', project], {
      cwd: ROOT,
      env: { ...process.env, FORCE_COLOR: process.env.FORCE_COLOR ?? '1' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const chunks: Buffer[] = [];
    child.stdout.on('data', (c: Buffer) => chunks.push(c));
    child.stderr.on('data', (c: Buffer) => chunks.push(c));
    console.log(`[run-projects] ${project}: started`);
    child.on('close', (code, signal) => {
      process.stdout.write(Buffer.concat(chunks));
      const secs = Math.round((Date.now() - started) / 1000);
      console.log(`[run-projects] ${project}: ${code === 0 ? 'passed' : `failed (${signal ?? `exit ${code}`})`} after ${secs} s\n`);
      resolve(code ?? 1);
    });
  });
}

let codes: number[];
if (process.env.CAYLINE_SERIAL_PROJECTS === '1') {
  codes = [];
  for (const p of projects) codes.push(await run(p));
} else {
  codes = await Promise.all(projects.map(run));
}
process.exit(codes.some((c) => c !== 0) ? 1 : 0);
