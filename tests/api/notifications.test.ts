/**
 * The bell API (one's own notifications, newest first, unread count, marking
 * read), the notification preference, and changing one's password (the other
 * sessions end, this one stays; the wrong current password is refused naming
 * the field).
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, ROLE_EMAIL, type DemoRole, type TestApp } from '../helpers/app';
import { signIn } from '../helpers/api-fixtures';
import { ctx } from '../../server/context';
import { notify, type NotifyEvent } from '../../server/services/notify.service';

let t: TestApp;
let demoId: number;
const ids = {} as Record<DemoRole, number>;

async function tell(recipient: number, subject: string, actor = ids.reviewer) {
  const e: NotifyEvent = { kind: 'mention', recipientIds: [recipient], actorId: actor, projectId: demoId, subject, text: 'text', link: `/projects/${demoId}` };
  await ctx().sequelize.transaction((tx) => notify(e, tx));
}
const bell = async (role: DemoRole, query = '') => request(t.app).get(`/api/notifications${query}`).set(bearer(await t.token(role)));

beforeAll(async () => {
  t = await createTestApp();
  const admin = await t.token('admin');
  const projects = await request(t.app).get('/api/projects').set(bearer(admin));
  demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  const members = await request(t.app).get(`/api/projects/${demoId}/members`).set(bearer(admin));
  for (const r of Object.keys(ROLE_EMAIL) as DemoRole[]) ids[r] = members.body.find((m: { email: string }) => m.email === ROLE_EMAIL[r]).id;
});
afterAll(async () => t?.close());

describe('the bell', () => {
  it('lists one’s own notifications newest first with the actor, pages them and counts the unread', async () => {
    for (let i = 1; i <= 5; i++) await tell(ids.curator, `Curator item ${i}`);
    await tell(ids.interpreter, 'Not for the curator');
    const p1 = await bell('curator', '?pageSize=2');
    expect(p1.status).toBe(200);
    expect(p1.body).toMatchObject({ total: 5, page: 1, pageSize: 2, unread: 5 });
    expect(p1.body.items.map((n: { subject: string }) => n.subject)).toEqual(['Curator item 5', 'Curator item 4']);
    expect(p1.body.items[0]).toMatchObject({ kind: 'mention', projectId: demoId, actor: { id: ids.reviewer, name: 'Remy Dunlin' }, link: `/projects/${demoId}`, readAt: null });
    const p3 = await bell('curator', '?pageSize=2&page=3');
    expect(p3.body.items.map((n: { subject: string }) => n.subject)).toEqual(['Curator item 1']);
  });

  it('marks given ids read (others’ ids are ignored), then all; the unread filter follows', async () => {
    const mine = (await bell('curator')).body.items as { id: number; subject: string }[];
    const theirs = (await bell('interpreter')).body.items as { id: number }[];
    const r = await request(t.app).post('/api/notifications/read').set(bearer(await t.token('curator'))).send({ ids: [mine[0].id, mine[1].id, theirs[0].id] });
    expect(r.status).toBe(200);
    expect(r.body).toEqual({ marked: 2, unread: 3 });
    expect((await bell('interpreter')).body.unread).toBe(1); // the interpreter's stays unread
    const unread = await bell('curator', '?unread=true');
    expect(unread.body.items.map((n: { subject: string }) => n.subject)).toEqual(['Curator item 3', 'Curator item 2', 'Curator item 1']);
    expect((await bell('curator')).body.items[0].readAt).toEqual(expect.any(String));
    const all = await request(t.app).post('/api/notifications/read').set(bearer(await t.token('curator'))).send({ all: true });
    expect(all.body).toEqual({ marked: 3, unread: 0 });
  });

  it('refuses bad bodies and queries naming the field', async () => {
    const tok = bearer(await t.token('curator'));
    const empty = await request(t.app).post('/api/notifications/read').set(tok).send({ ids: [] });
    expect(empty.status).toBe(400);
    expect(empty.body.message).toMatch(/ids/);
    const junk = await request(t.app).post('/api/notifications/read').set(tok).send({ ids: ['x'] });
    expect(junk.status).toBe(400);
    expect(junk.body.message).toMatch(/ids/);
    const allFalse = await request(t.app).post('/api/notifications/read').set(tok).send({ all: false });
    expect(allFalse.status).toBe(400);
    expect(allFalse.body.details[0].path).toBe('all');
    const neither = await request(t.app).post('/api/notifications/read').set(tok).send({});
    expect(neither.body.details[0]).toEqual({ path: 'ids', message: 'give either ids or all: true' });
    const both = await request(t.app).post('/api/notifications/read').set(tok).send({ ids: [1], all: true });
    expect(both.status).toBe(400);
    const q = await request(t.app).get('/api/notifications?pageSize=0').set(tok);
    expect(q.status).toBe(400);
    expect(q.body.details[0].path).toBe('pageSize');
  });
});

describe('preferences', () => {
  it('defaults to immediate, keeps a valid choice and refuses others naming notifyMode', async () => {
    const tok = bearer(await t.token('reviewer'));
    expect((await request(t.app).get('/api/account/preferences').set(tok)).body).toEqual({ notifyMode: 'immediate' });
    expect((await request(t.app).put('/api/account/preferences').set(tok).send({ notifyMode: 'digest' })).body).toEqual({ notifyMode: 'digest' });
    expect((await request(t.app).get('/api/account/preferences').set(tok)).body).toEqual({ notifyMode: 'digest' });
    const bad = await request(t.app).put('/api/account/preferences').set(tok).send({ notifyMode: 'hourly' });
    expect(bad.status).toBe(400);
    expect(bad.body.details[0].path).toBe('notifyMode');
    expect((await request(t.app).get('/api/account/preferences').set(tok)).body).toEqual({ notifyMode: 'digest' });
  });
});

describe('change password', () => {
  it('needs the current password; ends the other sessions and keeps this one', async () => {
    const admin = await t.token('admin');
    await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'changer@tessel.example', name: 'Cass Changer', role: 'reviewer', password: 'first-password-1' });
    const here = await signIn(t, 'changer@tessel.example', 'first-password-1');
    const elsewhere = await signIn(t, 'changer@tessel.example', 'first-password-1');

    const wrong = await request(t.app).post('/api/account/password').set(bearer(here)).send({ currentPassword: 'not-it-at-all', newPassword: 'second-password-2' });
    expect(wrong.status).toBe(400);
    expect(wrong.body).toMatchObject({ code: 'wrong_password', details: [{ path: 'currentPassword' }] });
    const short = await request(t.app).post('/api/account/password').set(bearer(here)).send({ currentPassword: 'first-password-1', newPassword: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.details[0].path).toBe('newPassword');
    const same = await request(t.app).post('/api/account/password').set(bearer(here)).send({ currentPassword: 'first-password-1', newPassword: 'first-password-1' });
    expect(same.status).toBe(400);
    expect(same.body.details[0].path).toBe('newPassword');
    // refusals changed nothing
    expect((await request(t.app).get('/api/auth/me').set(bearer(elsewhere))).status).toBe(200);

    const ok = await request(t.app).post('/api/account/password').set(bearer(here)).send({ currentPassword: 'first-password-1', newPassword: 'second-password-2' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(204);
    expect((await request(t.app).get('/api/auth/me').set(bearer(here))).status).toBe(200);
    expect((await request(t.app).get('/api/auth/me').set(bearer(elsewhere))).status).toBe(401);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'changer@tessel.example', password: 'first-password-1' })).status).toBe(401);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'changer@tessel.example', password: 'second-password-2' })).status).toBe(200);
  });
});
