/**
 * createQueue (server/jobs/queue.ts): pg-boss queue creation retried when
 * PostgreSQL makes it the victim of a deadlock (SQLSTATE 40P01, "deadlock
 * detected", PostgreSQL 15 manual, appendix A "PostgreSQL error codes"), and
 * only then. The same path against real processes racing on a fresh database
 * is in tests/api/job-queues-concurrent.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { createQueue } from '../../../server/jobs/queue';

function fakeBoss(failures: Array<{ code?: string; message: string }>) {
  const calls: Array<[string, unknown]> = [];
  return {
    calls,
    async createQueue(name: string, options?: unknown) {
      calls.push([name, options]);
      const f = failures.shift();
      if (f) throw Object.assign(new Error(f.message), f.code ? { code: f.code } : {});
    },
  };
}

describe('createQueue', () => {
  it('tries again after losing a deadlock, with the same name and options', async () => {
    const boss = fakeBoss([
      { code: '40P01', message: 'deadlock detected' },
      { code: '40P01', message: 'deadlock detected' },
    ]);
    await createQueue(boss as never, 'buildup-report', { name: 'buildup-report', retryLimit: 0 });
    expect(boss.calls).toEqual([
      ['buildup-report', { name: 'buildup-report', retryLimit: 0 }],
      ['buildup-report', { name: 'buildup-report', retryLimit: 0 }],
      ['buildup-report', { name: 'buildup-report', retryLimit: 0 }],
    ]);
  });

  it('passes any other error on at once', async () => {
    const boss = fakeBoss([{ code: '42501', message: 'permission denied for schema pgboss' }]);
    await expect(createQueue(boss as never, 'section-depth')).rejects.toThrow(/permission denied/);
    expect(boss.calls).toHaveLength(1);
  });

  it('gives up after eight deadlocks in a row', async () => {
    const boss = fakeBoss(Array.from({ length: 20 }, () => ({ code: '40P01', message: 'deadlock detected' })));
    await expect(createQueue(boss as never, 'section-pyramid')).rejects.toThrow(/deadlock/);
    expect(boss.calls).toHaveLength(8);
  }, 20_000);
});
