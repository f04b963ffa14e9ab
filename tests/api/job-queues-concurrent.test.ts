/**
 * Processes that boot together on a fresh database create every job queue at
 * the same moment. With pg-boss's own createQueue alone, PostgreSQL sometimes
 * picks one of them as the victim of a deadlock (one process inserts a queue
 * row while another attaches its queue's partition to the job table), and that
 * process used to exit during boot. Here several pg-boss instances, each with
 * its own connections as separate processes have, create all of Cayline's
 * queues at once in different orders through `createQueue` (queue.ts), on a
 * fresh database per round: every instance must get through, and every queue
 * must exist once.
 */
import PgBoss from 'pg-boss';
import { describe, expect, it } from 'vitest';
import { createDatabase } from '../helpers/app';
import { sql } from '../helpers/worker-process';
import { createQueue, PYRAMID_QUEUE } from '../../server/jobs/queue';
import { JOB_REGISTRATIONS } from '../../server/jobs/registry';

const NAMES = [PYRAMID_QUEUE, ...JOB_REGISTRATIONS.flatMap((r) => r.queues)];
const INSTANCES = 4;
const ROUNDS = Number(process.env.QUEUE_RACE_ROUNDS ?? 6);

/** The names rotated and, for odd instances, reversed: every instance asks in another order. */
function orderFor(i: number): string[] {
  const rotated = [...NAMES.slice(i % NAMES.length), ...NAMES.slice(0, i % NAMES.length)];
  return i % 2 ? rotated.reverse() : rotated;
}

async function race(create: (boss: PgBoss, name: string) => Promise<void>) {
  const url = await createDatabase();
  const bosses = Array.from({ length: INSTANCES }, () => new PgBoss({ connectionString: url, schema: 'pgboss', max: 2, supervise: false, schedule: false }));
  for (const b of bosses) b.on('error', () => {});
  try {
    await Promise.all(bosses.map((b) => b.start()));
    const results = await Promise.allSettled(
      bosses.map(async (b, i) => {
        for (const name of orderFor(i)) await create(b, name);
      }),
    );
    const rows = await sql(url, 'SELECT name FROM pgboss.queue ORDER BY name');
    return { failures: results.flatMap((r) => (r.status === 'rejected' ? [String(r.reason?.message ?? r.reason)] : [])), names: rows.map((r) => r.name) };
  } finally {
    await Promise.all(bosses.map((b) => b.stop({ graceful: false, wait: true }).catch(() => {})));
  }
}

describe('job queues created by several processes at once', () => {
  it(`every instance gets through and every queue exists once (${ROUNDS} fresh databases, ${INSTANCES} instances, ${NAMES.length} queues)`, async () => {
    expect(NAMES.length).toBeGreaterThanOrEqual(6);
    for (let round = 0; round < ROUNDS; round++) {
      const { failures, names } = await race((b, name) => createQueue(b, name));
      expect(failures).toEqual([]);
      expect(names).toEqual([...NAMES].sort());
    }
  }, 240_000);
});
