/**
 * Note pins and threads: permissions by role and for non-members, anchors on
 * a point (inside / outside the image) and on objects (following an edit,
 * surviving the object's deletion marked removed), replies, edit mark and
 * tombstone, resolve / reopen, mention checks, HTML kept as plain text,
 * nothing half-written on refusal, and who is notified.
 *
 * Notifications are observed by wrapping the notify entry point
 * (server/services/notify.service.ts): every call is recorded and passed on
 * to the real implementation.
 */
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { bearer, createTestApp, ROLE_EMAIL, type DemoRole, type TestApp } from '../helpers/app';
import { SMALL_GEOMETRY, readyCalibratedSection, savedBuildup, signIn } from '../helpers/api-fixtures';
import type { NotifyEvent } from '../../server/services/notify.service';
import { NOTE_BODY_MAX } from '../../shared/schemas/notes';

const calls = vi.hoisted(() => [] as NotifyEvent[]);
vi.mock('../../server/services/notify.service', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../server/services/notify.service')>();
  return {
    ...real,
    notify: async (e: NotifyEvent, tx: unknown) => {
      calls.push(structuredClone(e));
      return real.notify(e, tx as never);
    },
  };
});

let t: TestApp;
let demoId: number;
let section: number;
let outsiderToken: string;
const ids = {} as Record<DemoRole | 'outsider', number>;

const tok = (r: DemoRole) => t.token(r);
async function as(who: DemoRole | 'outsider') {
  return bearer(who === 'outsider' ? outsiderToken : await tok(who));
}
async function sql<T>(text: string): Promise<T[]> {
  const c = new pg.Client({ connectionString: t.databaseUrl });
  await c.connect();
  try {
    return (await c.query(text)).rows as T[];
  } finally {
    await c.end();
  }
}
async function countRows(table: string) {
  return (await sql<{ n: number }>(`SELECT count(*)::int AS n FROM ${table}`))[0].n;
}
async function newThread(who: DemoRole, body: Record<string, unknown>) {
  return request(t.app).post(`/api/sections/${section}/threads`).set(await as(who)).send(body);
}

beforeAll(async () => {
  t = await createTestApp();
  const admin = await tok('admin');
  const projects = await request(t.app).get('/api/projects').set(bearer(admin));
  demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  const members = await request(t.app).get(`/api/projects/${demoId}/members`).set(bearer(admin));
  for (const r of Object.keys(ROLE_EMAIL) as DemoRole[]) ids[r] = members.body.find((m: { email: string }) => m.email === ROLE_EMAIL[r]).id;
  const o = await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'outsider@tessel.example', name: 'Out Sider', role: 'interpreter', password: 'long-enough-pw' });
  ids.outsider = o.body.id;
  outsiderToken = await signIn(t, 'outsider@tessel.example', 'long-enough-pw');
  section = await readyCalibratedSection(t, await tok('interpreter'), demoId);
}, 120_000);
afterAll(async () => t?.close());
beforeEach(() => {
  calls.length = 0;
});

describe('threads and permissions', () => {
  it('every member role opens a thread on a point; numbers run per section; a non-member gets 404 and anonymous 401', async () => {
    const numbers: number[] = [];
    for (const role of ['reviewer', 'curator', 'interpreter', 'admin'] as const) {
      const r = await newThread(role, { anchor: { kind: 'point', at: [20, 30] }, body: `from the ${role}` });
      expect(r.status, JSON.stringify(r.body)).toBe(201);
      expect(r.body.anchor).toEqual({ kind: 'point' });
      expect(r.body.at).toEqual([20, 30]);
      expect(r.body.messages).toHaveLength(1);
      expect(r.body.messages[0].author.id).toBe(ids[role]);
      numbers.push(r.body.number);
    }
    expect(numbers.slice(1).map((n, i) => n - numbers[i])).toEqual([1, 1, 1]);
    const before = await countRows('note_threads');
    const out = await request(t.app).post(`/api/sections/${section}/threads`).set(await as('outsider')).send({ anchor: { kind: 'point', at: [1, 1] }, body: 'hello' });
    expect(out.status).toBe(404);
    expect((await request(t.app).get(`/api/sections/${section}/threads`).set(await as('outsider'))).status).toBe(404);
    expect((await request(t.app).post(`/api/sections/${section}/threads`).send({ anchor: { kind: 'point', at: [1, 1] }, body: 'x' })).status).toBe(401);
    expect(await countRows('note_threads')).toBe(before);
    const list = await request(t.app).get(`/api/sections/${section}/threads`).set(await as('curator'));
    expect(list.status).toBe(200);
    expect(list.body.map((x: { number: number }) => x.number)).toEqual(expect.arrayContaining(numbers));
  });

  it('threads opened at the same moment get distinct consecutive numbers', async () => {
    const rs = await Promise.all(
      (['reviewer', 'curator', 'interpreter', 'admin', 'reviewer', 'curator'] as const).map((role, i) => newThread(role, { anchor: { kind: 'point', at: [i, i] }, body: `race ${i}` })),
    );
    for (const r of rs) expect(r.status, JSON.stringify(r.body)).toBe(201);
    const nums = rs.map((r) => r.body.number as number).sort((a, b) => a - b);
    expect(nums.map((n) => n - nums[0])).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('a point outside the image is refused with 422 naming anchor.at, and nothing is written', async () => {
    const threads = await countRows('note_threads');
    const messages = await countRows('note_messages');
    for (const at of [[-1, 10], [201, 10], [10, 100.5], [10, -0.1]]) {
      const r = await newThread('reviewer', { anchor: { kind: 'point', at }, body: 'outside' });
      expect(r.status, JSON.stringify(at)).toBe(422);
      expect(r.body.code).toBe('anchor_outside');
      expect(r.body.details[0].path).toBe('anchor.at');
      expect(r.body.message).toMatch(/^anchor\.at: /);
    }
    // the corners themselves are on the image (200 × 100 px)
    expect((await newThread('reviewer', { anchor: { kind: 'point', at: [200, 100] }, body: 'corner' })).status).toBe(201);
    expect(await countRows('note_threads')).toBe(threads + 1);
    expect(await countRows('note_messages')).toBe(messages + 1);
  });

  it('malformed bodies answer 400 naming the field; an empty body is refused', async () => {
    const r = await newThread('reviewer', { anchor: { kind: 'point', at: [1] }, body: 'x' });
    expect(r.status).toBe(400);
    expect(r.body.message).toMatch(/anchor\.at/);
    const e = await newThread('reviewer', { anchor: { kind: 'point', at: [1, 1] }, body: '   ' });
    expect(e.status).toBe(400);
    expect(e.body.details[0].path).toBe('body');
    const c = await newThread('reviewer', { anchor: { kind: 'point', at: [1, 1] }, body: 'bell\u0007' });
    expect(c.status).toBe(400);
    expect(c.body.details[0].path).toBe('body');
  });
});

describe('object anchors', () => {
  it('a pin on a Margin pin follows the edit, and when the cycle is deleted the thread stays marked removed at its last position', async () => {
    const interp = await tok('interpreter');
    const b = await savedBuildup(t, interp, section, 'Kestrel Knoll');
    const r = await newThread('reviewer', { anchor: { kind: 'object', buildupId: b.id, object: 'marginRight', cycleId: 'c1' }, body: 'Is this margin right?' });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    expect(r.body.at).toEqual([150, 50]);
    expect(r.body.anchor).toMatchObject({ kind: 'object', buildupId: b.id, object: 'marginRight', cycleId: 'c1', buildupName: 'Kestrel Knoll' });
    const top = await newThread('curator', { anchor: { kind: 'object', buildupId: b.id, object: 'top', cycleId: 'c1' }, body: 'top' });
    expect(top.body.at).toEqual([100, 40]); // halfway along [[50,50],[100,40],[150,50]] by arc length
    const crest = await newThread('curator', { anchor: { kind: 'object', buildupId: b.id, object: 'buildup' }, body: 'crest' });
    expect(crest.body.at).toEqual([100, 40]);

    // the interpreter moves the right Margin pin and the top's end
    const moved = structuredClone(SMALL_GEOMETRY) as typeof SMALL_GEOMETRY;
    moved.cycles[0].top = [[50, 50], [100, 40], [160, 55]];
    moved.cycles[0].marginRight = [160, 55];
    const s = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: b.version, geometry: moved });
    expect(s.status, JSON.stringify(s.body)).toBe(200);
    const after = await request(t.app).get(`/api/threads/${r.body.id}`).set(await as('reviewer'));
    expect(after.body.at).toEqual([160, 55]);
    expect(after.body.objectRemoved).toBe(false);

    // a new cycle goes under the old one (its own stable id), the old one keeps "c1" even at index 2
    const two = structuredClone(moved) as typeof SMALL_GEOMETRY & { cycles: { id?: string }[] };
    two.cycles = [{ id: 'fresh-cycle', index: 1, top: [[60, 70], [140, 70]], marginLeft: [60, 70], marginRight: [140, 70] }, { ...moved.cycles[0], index: 2, id: 'c1' }];
    const s2 = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: s.body.version, geometry: two });
    expect(s2.status, JSON.stringify(s2.body)).toBe(200);
    expect((await request(t.app).get(`/api/threads/${r.body.id}`).set(await as('reviewer'))).body.at).toEqual([160, 55]);
    const stored = await request(t.app).get(`/api/buildups/${b.id}`).set(bearer(interp));
    expect(stored.body.geometry.cycles.map((c: { id?: string }) => c.id)).toEqual(['fresh-cycle', 'c1']);

    // the cycle with the pin is deleted: the thread stays at its last position, marked removed
    const one = { ...two, cycles: [two.cycles[0]] };
    const s3 = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: s2.body.version, geometry: one });
    expect(s3.status).toBe(200);
    const gone = await request(t.app).get(`/api/threads/${r.body.id}`).set(await as('reviewer'));
    expect(gone.body).toMatchObject({ at: [160, 55], objectRemoved: true });
    expect(gone.body.messages[0].body).toBe('Is this margin right?');
    // the crest pin follows to the remaining (youngest) top
    expect((await request(t.app).get(`/api/threads/${crest.body.id}`).set(await as('reviewer'))).body).toMatchObject({ at: [60, 70], objectRemoved: false });

    // the whole buildup is deleted: its pins stay, marked removed
    expect((await request(t.app).delete(`/api/buildups/${b.id}`).set(bearer(interp))).status).toBe(204);
    const afterDelete = await request(t.app).get(`/api/threads/${crest.body.id}`).set(await as('curator'));
    expect(afterDelete.status).toBe(200);
    expect(afterDelete.body).toMatchObject({ at: [60, 70], objectRemoved: true });
  });

  it('an object that does not exist is refused naming the anchor field', async () => {
    const b = await savedBuildup(t, await tok('interpreter'), section, 'Marrow Bank');
    const threads = await countRows('note_threads');
    const noCycle = await newThread('reviewer', { anchor: { kind: 'object', buildupId: b.id, object: 'marginLeft', cycleId: 'c9' }, body: 'x' });
    expect(noCycle.status).toBe(422);
    expect(noCycle.body.details[0].path).toBe('anchor.cycleId');
    const noStamp = await newThread('reviewer', { anchor: { kind: 'object', buildupId: b.id, object: 'termination', terminationId: 't1' }, body: 'x' });
    expect(noStamp.status).toBe(422);
    expect(noStamp.body.details[0].path).toBe('anchor.terminationId');
    const noBuildup = await newThread('reviewer', { anchor: { kind: 'object', buildupId: 999999, object: 'buildup' }, body: 'x' });
    expect(noBuildup.status).toBe(422);
    expect(noBuildup.body.details[0].path).toBe('anchor.buildupId');
    expect(await countRows('note_threads')).toBe(threads);
  });

  it('duplicate stable ids in a saved geometry are refused naming the field', async () => {
    const interp = await tok('interpreter');
    const b = await savedBuildup(t, interp, section, 'Twin ids');
    const g = structuredClone(SMALL_GEOMETRY) as typeof SMALL_GEOMETRY & { cycles: { id?: string }[] };
    g.cycles = [{ ...g.cycles[0], id: 'c2' }, { ...g.cycles[0], index: 2 }]; // the second's default id is c2 too
    const r = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: b.version, geometry: g });
    expect(r.status).toBe(400);
    expect(r.body.details.map((d: { path: string }) => d.path)).toContain('geometry.cycles[1].id');
  });
});

describe('messages', () => {
  it('replies, own edits (marked) and deletes (tombstone); others may not edit or delete', async () => {
    const th = await newThread('reviewer', { anchor: { kind: 'point', at: [5, 5] }, body: 'first' });
    const reply = await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(await as('interpreter')).send({ body: 'second\nwith a line break' });
    expect(reply.status).toBe(201);
    expect(reply.body.body).toBe('second\nwith a line break');
    expect(reply.body.editedAt).toBeNull();

    const notMine = await request(t.app).patch(`/api/messages/${reply.body.id}`).set(await as('reviewer')).send({ body: 'hijack' });
    expect(notMine.status).toBe(403);
    expect((await request(t.app).delete(`/api/messages/${reply.body.id}`).set(await as('admin'))).status).toBe(403);
    expect((await request(t.app).patch(`/api/messages/${reply.body.id}`).set(await as('outsider')).send({ body: 'x' })).status).toBe(404);

    const edited = await request(t.app).patch(`/api/messages/${reply.body.id}`).set(await as('interpreter')).send({ body: 'second, reworded' });
    expect(edited.status).toBe(200);
    expect(edited.body.body).toBe('second, reworded');
    expect(edited.body.editedAt).not.toBeNull();

    const del = await request(t.app).delete(`/api/messages/${reply.body.id}`).set(await as('interpreter'));
    expect(del.status).toBe(200);
    expect(del.body).toMatchObject({ body: '', deletedAt: expect.any(String) });
    const again = await request(t.app).patch(`/api/messages/${reply.body.id}`).set(await as('interpreter')).send({ body: 'back' });
    expect(again.status).toBe(409);
    expect(again.body.code).toBe('message_deleted');

    const view = await request(t.app).get(`/api/threads/${th.body.id}`).set(await as('curator'));
    expect(view.body.messages).toHaveLength(2);
    expect(view.body.messages[1]).toMatchObject({ id: reply.body.id, body: '', deletedAt: expect.any(String), author: { id: ids.interpreter } });
    // the stored text is gone from the answer, not only hidden by the client
    expect(JSON.stringify(view.body)).not.toContain('reworded');
  });

  it('an oversized body is refused with 422 naming body, nothing written; the limit itself is accepted', async () => {
    const th = await newThread('curator', { anchor: { kind: 'point', at: [9, 9] }, body: 'limits' });
    const before = await countRows('note_messages');
    const big = await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(await as('curator')).send({ body: 'x'.repeat(NOTE_BODY_MAX + 1) });
    expect(big.status).toBe(422);
    expect(big.body.code).toBe('body_too_long');
    expect(big.body.details[0].path).toBe('body');
    const bigThread = await newThread('curator', { anchor: { kind: 'point', at: [9, 9] }, body: 'y'.repeat(NOTE_BODY_MAX + 1) });
    expect(bigThread.status).toBe(422);
    expect(await countRows('note_messages')).toBe(before);
    const edit = await request(t.app).patch(`/api/messages/${th.body.messages[0].id}`).set(await as('curator')).send({ body: 'z'.repeat(NOTE_BODY_MAX + 1) });
    expect(edit.status).toBe(422);
    expect((await request(t.app).get(`/api/threads/${th.body.id}`).set(await as('curator'))).body.messages[0]).toMatchObject({ body: 'limits', editedAt: null });
    expect((await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(await as('curator')).send({ body: 'x'.repeat(NOTE_BODY_MAX) })).status).toBe(201);
  });

  it('script and HTML come back exactly as typed, as JSON text', async () => {
    const evil = '<script>alert(1)</script> and <img src=x onerror="alert(2)"> & "quotes"';
    const th = await newThread('reviewer', { anchor: { kind: 'point', at: [3, 3] }, body: evil });
    expect(th.status).toBe(201);
    const got = await request(t.app).get(`/api/threads/${th.body.id}`).set(await as('interpreter'));
    expect(got.headers['content-type']).toMatch(/^application\/json/);
    expect(got.body.messages[0].body).toBe(evil);
  });

  it('resolve and reopen by any member, recorded with who', async () => {
    const th = await newThread('interpreter', { anchor: { kind: 'point', at: [4, 4] }, body: 'to resolve' });
    const res = await request(t.app).patch(`/api/threads/${th.body.id}`).set(await as('curator')).send({ resolved: true });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ resolved: true, resolvedBy: { id: ids.curator } });
    expect((await request(t.app).patch(`/api/threads/${th.body.id}`).set(await as('outsider')).send({ resolved: false })).status).toBe(404);
    const re = await request(t.app).patch(`/api/threads/${th.body.id}`).set(await as('reviewer')).send({ resolved: false });
    expect(re.body).toMatchObject({ resolved: false, resolvedBy: null, resolvedAt: null });
    const rows = await sql<{ action: string }>(`SELECT action FROM audit_events WHERE target_type = 'note_thread' AND target_id = '${th.body.id}' ORDER BY id`);
    expect(rows.map((r) => r.action)).toEqual(['note.thread.create', 'note.thread.resolve', 'note.thread.reopen']);
  });
});

describe('mentions and notifications', () => {
  it('unknown and non-member mention targets are refused naming mentions[i]; nothing written, nobody notified', async () => {
    const threads = await countRows('note_threads');
    const messages = await countRows('note_messages');
    const r = await newThread('reviewer', { anchor: { kind: 'point', at: [7, 7] }, body: '@someone', mentions: [ids.interpreter, ids.outsider] });
    expect(r.status).toBe(422);
    expect(r.body.code).toBe('unknown_mention');
    expect(r.body.details[0].path).toBe('mentions[1]');
    const u = await newThread('reviewer', { anchor: { kind: 'point', at: [7, 7] }, body: '@nobody', mentions: [987654] });
    expect(u.body.details[0].path).toBe('mentions[0]');
    expect(await countRows('note_threads')).toBe(threads);
    expect(await countRows('note_messages')).toBe(messages);
    expect(calls).toEqual([]);
  });

  it('mentions notify the mentioned people; a reply notifies earlier writers minus the actor and those mentioned', async () => {
    const th = await newThread('reviewer', { anchor: { kind: 'point', at: [8, 8] }, body: '@Ina Interpreter please check', mentions: [ids.interpreter, ids.reviewer] });
    expect(th.status).toBe(201);
    expect(th.body.messages[0].mentions.map((m: { id: number }) => m.id).sort()).toEqual([ids.interpreter, ids.reviewer].sort());
    expect(calls).toHaveLength(1);
    expect(calls[0]).toMatchObject({ kind: 'mention', recipientIds: [ids.interpreter], actorId: ids.reviewer, projectId: demoId, link: `/sections/${section}/interpret?thread=${th.body.id}` });

    calls.length = 0;
    await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(await as('curator')).send({ body: 'me too' });
    expect(calls.map((c) => [c.kind, c.recipientIds])).toEqual([['reply', [ids.reviewer]]]);

    calls.length = 0;
    const r = await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(await as('interpreter')).send({ body: 'done, @Carl', mentions: [ids.curator] });
    expect(r.status).toBe(201);
    const kinds = Object.fromEntries(calls.map((c) => [c.kind, [...c.recipientIds].sort()]));
    expect(kinds).toEqual({ mention: [ids.curator], reply: [ids.reviewer] });

    // the notifications helper keeps a row per recipient, committed with the message
    const rows = await sql<{ recipient_id: number; kind: string }>(
      `SELECT recipient_id, kind FROM notifications WHERE link = '/sections/${section}/interpret?thread=${th.body.id}' ORDER BY id`,
    );
    expect(rows.map((x) => [x.kind, x.recipient_id])).toEqual([
      ['mention', ids.interpreter],
      ['reply', ids.reviewer],
      ['mention', ids.curator],
      ['reply', ids.reviewer],
    ]);

    // an edit tells only the people it newly mentions
    calls.length = 0;
    await request(t.app).patch(`/api/messages/${r.body.id}`).set(await as('interpreter')).send({ body: 'done, @Carl @Ada', mentions: [ids.curator, ids.admin] });
    expect(calls.map((c) => [c.kind, c.recipientIds])).toEqual([['mention', [ids.admin]]]);
  });
});
