/**
 * deadJobReason: the one decision both the section builds and the reports use
 * to tell work that lost its process from work that is alive or still queued.
 * The queue and the liveness table are replaced by small in-memory stand-ins.
 */
import type PgBoss from 'pg-boss';
import { describe, expect, it } from 'vitest';
import { deadJobReason, type Liveness, type WorkerRow } from '../../../server/jobs/liveness';

const STALE = { staleAfterSeconds: 30 };
const owners = new Map<string, WorkerRow>([['w-live', { id: 'w-live', host: 'tb-host', pid: 1, ageSeconds: 2 }]]);
const liveness = { isAlive: (id: string, row: WorkerRow | undefined) => id === 'w-live' && !!row } as unknown as Liveness;

function queueWith(jobs: Record<string, { state: string; startedOn?: Date }>, asked: string[] = []): PgBoss {
  return {
    getJobById: async (queue: string, id: string) => {
      asked.push(`${queue}/${id}`);
      return jobs[id] ?? null;
    },
  } as unknown as PgBoss;
}

describe('deadJobReason', () => {
  it('an owned row is alive while its owner is, and owner_dead after', async () => {
    const boss = queueWith({});
    expect(await deadJobReason(boss, 'q', { workerId: 'w-live', jobId: 'j1' }, owners, liveness, STALE)).toBeNull();
    expect(await deadJobReason(boss, 'q', { workerId: 'w-gone', jobId: 'j1' }, owners, liveness, STALE)).toBe('owner_dead');
  });

  it('an unowned row: queued jobs wait, missing or finished jobs ended, a long-taken unclaimed job is dead', async () => {
    const asked: string[] = [];
    const boss = queueWith(
      {
        created: { state: 'created' },
        retry: { state: 'retry' },
        done: { state: 'completed' },
        fresh: { state: 'active', startedOn: new Date(Date.now() - 5_000) },
        old: { state: 'active', startedOn: new Date(Date.now() - 120_000) },
      },
      asked,
    );
    const why = (jobId: string | null) => deadJobReason(boss, 'report', { workerId: null, jobId }, owners, liveness, STALE);
    expect(await why('created')).toBeNull();
    expect(await why('retry')).toBeNull();
    expect(await why('fresh')).toBeNull();
    expect(await why('old')).toBe('unclaimed');
    expect(await why('done')).toBe('job_ended');
    expect(await why('missing')).toBe('job_ended');
    expect(await why(null)).toBe('job_ended');
    expect(asked).toContain('report/old'); // the row's own queue is asked
  });

  it('a queue that fails to answer counts as the job having ended', async () => {
    const boss = { getJobById: async () => Promise.reject(new Error('connection lost')) } as unknown as PgBoss;
    expect(await deadJobReason(boss, 'q', { workerId: null, jobId: 'j' }, owners, liveness, STALE)).toBe('job_ended');
  });
});
