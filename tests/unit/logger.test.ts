/**
 * The log is written to stdout asynchronously (server/logger.ts): a request
 * never waits on the reader. What is still buffered must not be lost when
 * the process ends on its own or through process.exit (a fatal error at
 * boot is logged and then exits), and lines keep their order.
 */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const tsx = path.join(process.cwd(), 'node_modules', '.bin', 'tsx');
const LINES = 5000;

function run(ending: string) {
  const code = `import { logger } from './server/logger.ts';
for (let i = 0; i < ${LINES}; i++) logger.info({ i }, 'line');
${ending}`;
  const r = spawnSync(tsx, ['--eval', code], { encoding: 'utf8', cwd: process.cwd(), env: { ...process.env, LOG_LEVEL: 'info', VITEST: '', NODE_ENV: 'production' }, maxBuffer: 64 * 2 ** 20 });
  expect(r.status, r.stderr).toBe(0);
  return r.stdout
    .split('\n')
    .filter(Boolean)
    .map((l) => (JSON.parse(l) as { i: number }).i);
}

describe('logger', () => {
  it('writes every line, in order, when the process ends by itself', () => {
    expect(run('')).toEqual(Array.from({ length: LINES }, (_, i) => i));
  });

  it('writes every line, in order, when the process calls process.exit right after logging', () => {
    expect(run('process.exit(0);')).toEqual(Array.from({ length: LINES }, (_, i) => i));
  });
});
