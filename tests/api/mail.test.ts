/**
 * E-mail as people receive it: every kind of mail actually goes through SMTP
 * to the local sink and is read back from the Outbox API (parsed with
 * mailparser) — invitation, password reset, mention, reply, review state
 * change, the daily digest — with the right recipients, subject and link.
 * Account links work once, not twice, and not after expiry (the stored expiry
 * is moved into the past; nothing sleeps). No password or secret is ever in a
 * mail.
 */
import fs from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, ROLE_EMAIL, type DemoRole, type TestApp } from '../helpers/app';
import { SMALL_GEOMETRY, readyCalibratedSection, savedBuildup, signIn } from '../helpers/api-fixtures';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { mailSettled, notify, runDigest, type NotifyEvent } from '../../server/services/notify.service';
import { sha256 } from '../../server/services/account.service';
import { jobQueue } from '../../server/jobs/queue';
import { ctx } from '../../server/context';
import { DIGEST_QUEUE } from '../../server/jobs/digest.job';
import { FORGOT_PASSWORD_ANSWER } from '../../shared/schemas/account';
import type { OutboxMessage, OutboxSummary } from '../../shared/schemas/notifications';

const FORGOT_MAX = 8;
let t: TestApp;
let demoId: number;
const ids = {} as Record<DemoRole, number>;
/** Every password this file sets; none may ever appear in a mail. */
const passwordsUsed: string[] = [DEMO_PASSWORD];

const admin = () => t.token('admin');
async function sql<T = Record<string, unknown>>(text: string, values: unknown[] = []): Promise<T[]> {
  const c = new pg.Client({ connectionString: t.databaseUrl });
  await c.connect();
  try {
    return (await c.query(text, values)).rows as T[];
  } finally {
    await c.end();
  }
}

/** All Outbox messages (newest first), read through the admin API after pending sends finished. */
async function outbox(): Promise<OutboxMessage[]> {
  await mailSettled();
  const tok = await admin();
  const list = await request(t.app).get('/api/admin/mail?pageSize=100').set(bearer(tok));
  expect(list.status, JSON.stringify(list.body)).toBe(200);
  const out: OutboxMessage[] = [];
  for (const s of list.body.items as OutboxSummary[]) {
    const one = await request(t.app).get(`/api/admin/mail/${s.id}`).set(bearer(tok));
    expect(one.status).toBe(200);
    out.push(one.body);
  }
  return out;
}
async function mailsTo(email: string) {
  return (await outbox()).filter((m) => m.recipients.includes(email));
}
/** The token of the one set-password link in a mail. */
function tokenIn(m: OutboxMessage): string {
  const links = m.links.filter((l) => l.includes('/set-password?token='));
  expect(links, m.text).toHaveLength(1);
  return new URL(links[0]).searchParams.get('token')!;
}
async function invite(email: string, name = 'New Hand') {
  const r = await request(t.app).post('/api/users').set(bearer(await admin())).send({ email, name, role: 'interpreter' });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.id as number;
}
const setPassword = (token: string, password: string) => {
  passwordsUsed.push(password);
  return request(t.app).post('/api/auth/set-password').send({ token, password });
};
const login = (email: string, password: string) => request(t.app).post('/api/auth/login').send({ email, password });

/** Call notify in its own transaction, as a route's service does. */
async function notifyNow(e: NotifyEvent) {
  await ctx().sequelize.transaction((tx) => notify(e, tx));
}

beforeAll(async () => {
  t = await createTestApp({ listen: true, config: { accountLinks: { inviteHours: 72, resetHours: 2, forgotRateLimit: { windowMs: 60_000, max: FORGOT_MAX } } } });
  const projects = await request(t.app).get('/api/projects').set(bearer(await admin()));
  demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  const members = await request(t.app).get(`/api/projects/${demoId}/members`).set(bearer(await admin()));
  for (const r of Object.keys(ROLE_EMAIL) as DemoRole[]) ids[r] = members.body.find((m: { email: string }) => m.email === ROLE_EMAIL[r]).id;
}, 60_000);
afterAll(async () => t?.close());

describe('invitation', () => {
  it('mails a single-use link (no password); the link sets a password once, not twice', async () => {
    const id = await invite('new.hand@tessel.example', 'New Hand');
    const mails = await mailsTo('new.hand@tessel.example');
    expect(mails).toHaveLength(1);
    const [m] = mails;
    expect(m.subject).toBe('You are invited to Cayline');
    expect(m.sender).toContain('no-reply@cayline.example');
    expect(m.text).toMatch(/works once and expires in 72 hours/);
    expect(m.text).not.toMatch(/password is/i);
    // the link points at this server (PUBLIC_URL unset → the listening address)
    expect(m.links[0].startsWith(`${t.running.url}/set-password?token=`)).toBe(true);
    const token = tokenIn(m);
    const stored = await sql<{ token_hash: string; purpose: string; expires_at: Date }>('SELECT token_hash, purpose, expires_at FROM account_tokens WHERE user_id = $1', [id]);
    expect(stored).toHaveLength(1);
    expect(stored[0].token_hash).toBe(sha256(token)); // only the hash is kept
    expect(stored[0].purpose).toBe('invite');
    const hours = (new Date(stored[0].expires_at).getTime() - Date.now()) / 3600_000;
    expect(hours).toBeGreaterThan(71.9);
    expect(hours).toBeLessThanOrEqual(72);

    // before the link is used nobody can sign in (the unknown random password is never told)
    const first = await setPassword(token, 'reef-crest-01');
    expect(first.status, JSON.stringify(first.body)).toBe(200);
    expect(first.body).toEqual({ email: 'new.hand@tessel.example' });
    expect((await login('new.hand@tessel.example', 'reef-crest-01')).status).toBe(200);

    const second = await setPassword(token, 'reef-crest-02');
    expect(second.status).toBe(410);
    expect(second.body).toMatchObject({ code: 'link_used', details: [{ path: 'token' }] });
    expect((await login('new.hand@tessel.example', 'reef-crest-02')).status).toBe(401);
  });

  it('refuses an expired link and an unknown one, naming the token; nothing changes', async () => {
    const id = await invite('late.hand@tessel.example', 'Late Hand');
    const token = tokenIn((await mailsTo('late.hand@tessel.example'))[0]);
    await sql(`UPDATE account_tokens SET expires_at = now() - interval '1 minute' WHERE user_id = $1`, [id]);
    const r = await setPassword(token, 'reef-crest-03');
    expect(r.status).toBe(410);
    expect(r.body).toMatchObject({ code: 'link_expired', message: expect.stringMatching(/^token: /) });
    expect((await sql<{ used_at: Date | null }>('SELECT used_at FROM account_tokens WHERE user_id = $1', [id]))[0].used_at).toBeNull();
    expect((await login('late.hand@tessel.example', 'reef-crest-03')).status).toBe(401);

    const unknown = await setPassword('A'.repeat(43), 'reef-crest-04');
    expect(unknown.status).toBe(400);
    expect(unknown.body.code).toBe('link_invalid');
    const malformed = await request(t.app).post('/api/auth/set-password').send({ token: 'x<y', password: 'short' });
    expect(malformed.status).toBe(400);
    expect(malformed.body.details.map((d: { path: string }) => d.path).sort()).toEqual(['password', 'token']);
  });

  it('an account created with a password gets no mail', async () => {
    const before = (await outbox()).length;
    const r = await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: 'given.pw@tessel.example', name: 'Given', role: 'curator', password: 'given-password-1' });
    passwordsUsed.push('given-password-1');
    expect(r.status).toBe(201);
    expect((await outbox()).length).toBe(before);
  });
});

describe('forgot password', () => {
  it('answers the same for a known and an unknown address; only the known one gets a mail', async () => {
    await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: 'forgetful@tessel.example', name: 'Fern Forgetful', role: 'reviewer', password: 'old-password-1' });
    passwordsUsed.push('old-password-1');
    const known = await request(t.app).post('/api/auth/forgot-password').send({ email: 'Forgetful@tessel.example' });
    const unknown = await request(t.app).post('/api/auth/forgot-password').send({ email: 'nobody.here@tessel.example' });
    expect(known.status).toBe(202);
    expect(unknown.status).toBe(202);
    expect(known.body).toEqual({ message: FORGOT_PASSWORD_ANSWER });
    expect(unknown.body).toEqual(known.body);
    expect(await mailsTo('nobody.here@tessel.example')).toHaveLength(0);
    const mails = await mailsTo('forgetful@tessel.example');
    expect(mails).toHaveLength(1);
    expect(mails[0].subject).toBe('Choose a new Cayline password');
    expect(mails[0].text).toMatch(/expires in 2 hours/);
  });

  it('the reset link works once, ends the old sessions, and not twice; an expired one is refused', async () => {
    const oldSession = await signIn(t, 'forgetful@tessel.example', 'old-password-1');
    const token = tokenIn((await mailsTo('forgetful@tessel.example'))[0]);
    const r = await setPassword(token, 'new-password-22');
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect((await request(t.app).get('/api/auth/me').set(bearer(oldSession))).status).toBe(401);
    expect((await login('forgetful@tessel.example', 'old-password-1')).status).toBe(401);
    expect((await login('forgetful@tessel.example', 'new-password-22')).status).toBe(200);
    expect((await setPassword(token, 'new-password-33')).body.code).toBe('link_used');

    await request(t.app).post('/api/auth/forgot-password').send({ email: 'forgetful@tessel.example' });
    const newest = (await mailsTo('forgetful@tessel.example'))[0];
    const late = tokenIn(newest);
    await sql(`UPDATE account_tokens SET expires_at = now() - interval '1 second' WHERE token_hash = $1`, [sha256(late)]);
    const expired = await setPassword(late, 'new-password-44');
    expect(expired.status).toBe(410);
    expect(expired.body.code).toBe('link_expired');
  });

  it('sends at most three reset mails per address in the window, and the route is rate-limited', async () => {
    await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: 'flood@tessel.example', name: 'Flo Od', role: 'reviewer', password: 'flood-password-1' });
    passwordsUsed.push('flood-password-1');
    const statuses: number[] = [];
    for (let i = 0; i < FORGOT_MAX + 2; i++) statuses.push((await request(t.app).post('/api/auth/forgot-password').send({ email: 'flood@tessel.example' })).status);
    expect(await mailsTo('flood@tessel.example')).toHaveLength(3);
    expect(statuses).toContain(429);
    const limited = await request(t.app).post('/api/auth/forgot-password').send({ email: 'flood@tessel.example' });
    expect(limited.status).toBe(429);
    expect(limited.body.code).toBe('rate_limited');
  });
});

describe('notification mails', () => {
  it('a mention through the Note pin routes mails the mentioned member at once, with a link to the thread', async () => {
    const section = await readyCalibratedSection(t, await t.token('interpreter'), demoId);
    const th = await request(t.app)
      .post(`/api/sections/${section}/threads`)
      .set(bearer(await t.token('reviewer')))
      .send({ anchor: { kind: 'point', at: [20, 30] }, body: 'Margin looks early here, can you check?', mentions: [ids.interpreter] });
    expect(th.status, JSON.stringify(th.body)).toBe(201);
    const m = (await mailsTo(ROLE_EMAIL.interpreter)).find((x) => /mentioned you/.test(x.subject));
    expect(m, 'mention mail').toBeTruthy();
    expect(m!.recipients).toEqual([ROLE_EMAIL.interpreter]);
    expect(m!.subject).toMatch(/^Remy Dunlin mentioned you in Note \d+/);
    expect(m!.text).toContain('> Margin looks early here, can you check?');
    expect(m!.links).toContain(`${t.running.url}/sections/${section}/interpret?thread=${th.body.id}`);

    // the reply tells the reviewer, who wrote before
    const reply = await request(t.app).post(`/api/threads/${th.body.id}/messages`).set(bearer(await t.token('interpreter'))).send({ body: 'Moved it to the toe of the slope.' });
    expect(reply.status, JSON.stringify(reply.body)).toBe(201);
    const r = (await mailsTo(ROLE_EMAIL.reviewer)).find((x) => /replied in Note/.test(x.subject));
    expect(r, 'reply mail').toBeTruthy();
    expect(r!.recipients).toEqual([ROLE_EMAIL.reviewer]);
    expect(r!.subject).toMatch(/^Ivo Marlstone replied in Note \d+/);
    expect(r!.text).toContain('> Moved it to the toe of the slope.');
  });

  it('review state changes through the review route mail the owner and the reviewer, with the comment and a link to the buildup', async () => {
    const interp = await t.token('interpreter');
    const rev = await t.token('reviewer');
    const section = await readyCalibratedSection(t, interp, demoId);
    const b = await savedBuildup(t, interp, section, 'Marrow Bank');
    const review = (token: string, body: object) => request(t.app).post(`/api/buildups/${b.id}/review`).set(bearer(token)).send(body);
    const before = { interp: (await mailsTo(ROLE_EMAIL.interpreter)).length, rev: (await mailsTo(ROLE_EMAIL.reviewer)).length };

    expect((await review(interp, { from: 'draft', to: 'out_for_review' })).status).toBe(200);
    // the owner acted (no mail to them); the project's reviewer is asked to look
    expect((await mailsTo(ROLE_EMAIL.interpreter)).length).toBe(before.interp);
    expect((await mailsTo(ROLE_EMAIL.reviewer)).length).toBe(before.rev + 1);
    expect((await mailsTo(ROLE_EMAIL.reviewer))[0].subject).toMatch(/^Ivo Marlstone .*Marrow Bank \(Draft → Out for review/);
    const rework = await review(rev, { from: 'out_for_review', to: 'needs_rework', comment: 'The right Margin pin sits on a multiple.' });
    expect(rework.status, JSON.stringify(rework.body)).toBe(200);
    const toOwner = (await mailsTo(ROLE_EMAIL.interpreter))[0];
    expect((await mailsTo(ROLE_EMAIL.interpreter)).length).toBe(before.interp + 1);
    expect(toOwner.recipients).toEqual([ROLE_EMAIL.interpreter]);
    expect(toOwner.subject).toMatch(/^Remy Dunlin .*Marrow Bank \(Out for review → Needs rework/);
    expect(toOwner.text).toContain('> The right Margin pin sits on a multiple.');
    expect(toOwner.links.some((l) => l.startsWith(`${t.running.url}/sections/${section}/interpret`) && l.includes(String(b.id)))).toBe(true);

    // the owner edits (Needs rework → Draft by saving) and sends it again: the reviewer, who took part, hears of both
    const current = await request(t.app).get(`/api/buildups/${b.id}`).set(bearer(interp));
    const save = await request(t.app).put(`/api/buildups/${b.id}`).set(bearer(interp)).send({ version: current.body.version, geometry: SMALL_GEOMETRY });
    expect(save.status, JSON.stringify(save.body)).toBe(200);
    expect((await review(interp, { from: 'draft', to: 'out_for_review' })).status).toBe(200);
    const toReviewer = (await mailsTo(ROLE_EMAIL.reviewer)).slice(0, 2).map((m) => m.subject);
    expect((await mailsTo(ROLE_EMAIL.reviewer)).length).toBe(before.rev + 3);
    expect(toReviewer[1]).toMatch(/^Ivo Marlstone .*Marrow Bank \(Needs rework → Draft/);
    expect(toReviewer[0]).toMatch(/^Ivo Marlstone .*Marrow Bank \(Draft → Out for review/);
    const sign = await review(rev, { from: 'out_for_review', to: 'signed_off', comment: 'Good to go.' });
    expect(sign.status, JSON.stringify(sign.body)).toBe(200);
    const signed = (await mailsTo(ROLE_EMAIL.interpreter))[0];
    expect(signed.subject).toMatch(/Marrow Bank \(Out for review → Signed off/);
    expect(signed.text).toContain('> Good to go.');
    expect((await mailsTo(ROLE_EMAIL.reviewer)).length).toBe(before.rev + 3); // not told of their own sign-off
  });

  it('notify drops the actor, duplicates, non-members and inactive people; each kind mails its subject and link', async () => {
    const outsider = (await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: 'not.member@tessel.example', name: 'Not Member', role: 'reviewer', password: 'outside-pw-01' })).body.id;
    passwordsUsed.push('outside-pw-01');
    const gone = (await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: 'gone.member@tessel.example', name: 'Gone Member', role: 'reviewer', password: 'gone-pw-0001' })).body.id;
    passwordsUsed.push('gone-pw-0001');
    await request(t.app).post(`/api/projects/${demoId}/members`).set(bearer(await admin())).send({ userId: gone });
    await request(t.app).patch(`/api/users/${gone}`).set(bearer(await admin())).send({ active: false });
    const before = (await outbox()).length;
    const cases: NotifyEvent[] = [
      { kind: 'mention', recipientIds: [ids.curator, ids.curator, ids.reviewer, outsider, gone], actorId: ids.reviewer, projectId: demoId, subject: 'Remy Dunlin mentioned you on Kestrel Knoll', text: 'see the leeward flank', link: '/sections/1/interpret?thread=1' },
      { kind: 'reply', recipientIds: [ids.curator], actorId: ids.interpreter, projectId: demoId, subject: 'Ivo Marlstone replied on Marrow Bank', text: 'fixed', link: '/sections/1/interpret?thread=2' },
      { kind: 'review_state', recipientIds: [ids.curator, ids.admin], actorId: ids.reviewer, projectId: demoId, subject: 'Remy Dunlin moved Kestrel Knoll to Signed off', text: 'Good to go.', link: '/sections/1/interpret?buildup=3' },
    ];
    for (const e of cases) await notifyNow(e);
    const all = await outbox();
    const fresh = all.slice(0, all.length - before);
    const seen = fresh.map((m) => `${m.recipients.join(',')} | ${m.subject}`).sort();
    expect(seen).toEqual(
      [
        `${ROLE_EMAIL.admin} | Remy Dunlin moved Kestrel Knoll to Signed off`, // an admin sees every project
        `${ROLE_EMAIL.curator} | Ivo Marlstone replied on Marrow Bank`,
        `${ROLE_EMAIL.curator} | Remy Dunlin mentioned you on Kestrel Knoll`,
        `${ROLE_EMAIL.curator} | Remy Dunlin moved Kestrel Knoll to Signed off`,
      ].sort(),
    );
    const review = fresh.find((m) => m.recipients[0] === ROLE_EMAIL.curator && /Signed off/.test(m.subject))!;
    expect(review.text).toContain('> Good to go.');
    expect(review.links).toContain(`${t.running.url}/sections/1/interpret?buildup=3`);
    // the bell rows match the mails: nothing for the actor, the outsider or the deactivated member
    const rows = await sql<{ recipient_id: number; email_state: string }>(`SELECT recipient_id, email_state FROM notifications WHERE subject = $1`, [cases[0].subject]);
    expect(rows).toEqual([{ recipient_id: ids.curator, email_state: 'sent' }]);
  });

  it('a notification made in a transaction that rolls back leaves no row and sends no mail', async () => {
    const before = (await outbox()).length;
    await expect(
      ctx().sequelize.transaction(async (tx) => {
        await notify({ kind: 'mention', recipientIds: [ids.curator], actorId: ids.reviewer, projectId: demoId, subject: 'Rolled back mention', text: '', link: '/projects' }, tx);
        throw new Error('the change failed');
      }),
    ).rejects.toThrow('the change failed');
    expect((await outbox()).length).toBe(before);
    expect(await sql(`SELECT id FROM notifications WHERE subject = 'Rolled back mention'`)).toEqual([]);
  });

  it('refuses a link that is not an app path', async () => {
    for (const link of ['https://elsewhere.example/x', '//elsewhere.example', 'projects']) {
      await expect(ctx().sequelize.transaction((tx) => notify({ kind: 'reply', recipientIds: [ids.curator], actorId: ids.admin, projectId: demoId, subject: 's', text: '', link }, tx))).rejects.toThrow(/app-relative/);
    }
  });
});

describe('preferences: digest and none', () => {
  it('digest: no mail at once, then one digest listing every unmailed notification, and nothing on the next run', async () => {
    const cur = await t.token('curator');
    expect((await request(t.app).put('/api/account/preferences').set(bearer(cur)).send({ notifyMode: 'digest' })).status).toBe(200);
    const before = (await mailsTo(ROLE_EMAIL.curator)).length;
    await notifyNow({ kind: 'mention', recipientIds: [ids.curator], actorId: ids.reviewer, projectId: demoId, subject: 'Digest item one on Kestrel Knoll', text: 'first', link: '/projects/1' });
    await notifyNow({ kind: 'review_state', recipientIds: [ids.curator], actorId: ids.admin, projectId: demoId, subject: 'Digest item two on Marrow Bank', text: 'second', link: '/projects/2' });
    expect((await mailsTo(ROLE_EMAIL.curator)).length).toBe(before);

    const run = await runDigest();
    expect(run).toEqual({ mails: 1, notifications: 2 });
    const mails = await mailsTo(ROLE_EMAIL.curator);
    expect(mails.length).toBe(before + 1);
    const digest = mails[0];
    expect(digest.subject).toBe('Cayline digest: 2 notifications');
    expect(digest.text.indexOf('Digest item one on Kestrel Knoll')).toBeGreaterThan(0);
    expect(digest.text.indexOf('Digest item two on Marrow Bank')).toBeGreaterThan(digest.text.indexOf('Digest item one'));
    expect(digest.links).toEqual(expect.arrayContaining([`${t.running.url}/projects/1`, `${t.running.url}/projects/2`]));

    expect(await runDigest()).toEqual({ mails: 0, notifications: 0 });
    expect((await mailsTo(ROLE_EMAIL.curator)).length).toBe(before + 1);
  });

  it('none: nothing by mail, now or in a digest, while the bell still shows it', async () => {
    const cur = await t.token('curator');
    expect((await request(t.app).put('/api/account/preferences').set(bearer(cur)).send({ notifyMode: 'none' })).body).toEqual({ notifyMode: 'none' });
    const before = (await mailsTo(ROLE_EMAIL.curator)).length;
    await notifyNow({ kind: 'reply', recipientIds: [ids.curator], actorId: ids.reviewer, projectId: demoId, subject: 'Quiet reply on Kestrel Knoll', text: 'quiet', link: '/projects/1' });
    expect(await runDigest()).toEqual({ mails: 0, notifications: 0 });
    expect((await mailsTo(ROLE_EMAIL.curator)).length).toBe(before);
    const bell = await request(t.app).get('/api/notifications').set(bearer(cur));
    expect(bell.body.items[0].subject).toBe('Quiet reply on Kestrel Knoll');
    await request(t.app).put('/api/account/preferences').set(bearer(cur)).send({ notifyMode: 'immediate' });
  });

  it('the digest is a daily pg-boss schedule on its queue', async () => {
    const schedules = await jobQueue().getSchedules();
    expect(schedules.find((s) => s.name === DIGEST_QUEUE)).toMatchObject({ cron: '0 7 * * *', timezone: 'UTC' });
  });
});

describe('Outbox API', () => {
  it('pages newest first, reads one message with sender, recipients, text and links; 404 and 400 name the problem', async () => {
    const tok = await admin();
    const total = (await outbox()).length;
    expect(total).toBeGreaterThan(4);
    const p1 = await request(t.app).get('/api/admin/mail?page=1&pageSize=2').set(bearer(tok));
    const p2 = await request(t.app).get('/api/admin/mail?page=2&pageSize=2').set(bearer(tok));
    expect(p1.body).toMatchObject({ total, page: 1, pageSize: 2 });
    expect(p1.body.items).toHaveLength(2);
    expect(p2.body.items).toHaveLength(2);
    const order = [...p1.body.items, ...p2.body.items].map((m: OutboxSummary) => Date.parse(m.receivedAt));
    expect([...order].sort((a, b) => b - a)).toEqual(order);
    expect(new Set([...p1.body.items, ...p2.body.items].map((m: OutboxSummary) => m.id)).size).toBe(4);
    expect(p1.body.items[0]).toEqual({ id: expect.any(Number), sender: expect.stringContaining('no-reply@cayline.example'), recipients: expect.any(Array), subject: expect.any(String), receivedAt: expect.any(String), excerpt: expect.any(String) });

    expect((await request(t.app).get('/api/admin/mail/999999').set(bearer(tok))).status).toBe(404);
    const bad = await request(t.app).get('/api/admin/mail?pageSize=1000').set(bearer(tok));
    expect(bad.status).toBe(400);
    expect(bad.body.details[0].path).toBe('pageSize');
  });

  it('keeps the sink files private (0600 in a 0700 folder) and imports files it has not seen on boot', async () => {
    const dir = path.join(t.storageDir, 'mail');
    expect(fs.statSync(dir).mode & 0o777).toBe(0o700);
    for (const f of fs.readdirSync(dir)) expect(fs.statSync(path.join(dir, f)).mode & 0o777).toBe(0o600);
    const files = fs.readdirSync(dir).filter((f) => f.endsWith('.eml'));
    const rows = await sql<{ file: string }>('SELECT file FROM mail_messages');
    expect(rows.map((r) => r.file).sort()).toEqual(files.sort());

    // a message left by an older version (not in the table) is imported on the next boot
    const { importSinkBacklog } = await import('../../server/mail/outbox');
    fs.writeFileSync(path.join(dir, '2024-01-01T00-00-00-000Z-0000beef.eml'), 'From: Cayline <no-reply@cayline.example>\r\nTo: old@tessel.example\r\nSubject: From before\r\n\r\nSee http://localhost/x.\r\n', { mode: 0o600 });
    expect(await importSinkBacklog(dir)).toBe(1);
    expect(await importSinkBacklog(dir)).toBe(0);
    const old = (await outbox()).find((m) => m.subject === 'From before')!;
    expect(old).toMatchObject({ recipients: ['old@tessel.example'], links: ['http://localhost/x'] });
  });
});

describe('secrets', () => {
  it('no mail holds a password, a token hash or the signing secret; each account link appears in its own mail only', async () => {
    const mails = await outbox();
    expect(mails.length).toBeGreaterThan(8);
    const hashes = (await sql<{ token_hash: string }>('SELECT token_hash FROM account_tokens')).map((r) => r.token_hash);
    expect(hashes.length).toBeGreaterThan(4);
    for (const m of mails) {
      const all = `${m.subject}\n${m.text}`;
      for (const pw of passwordsUsed) expect(all, `${m.subject} holds a password`).not.toContain(pw);
      for (const h of hashes) expect(all).not.toContain(h);
      expect(all).not.toContain(t.running.config.jwtSecret);
      expect(all).not.toMatch(/password is/i);
    }
    // the raw files too (what an admin with disk access would read)
    const dir = path.join(t.storageDir, 'mail');
    for (const f of fs.readdirSync(dir)) {
      const raw = fs.readFileSync(path.join(dir, f), 'utf8');
      for (const pw of passwordsUsed) expect(raw).not.toContain(pw);
    }
  });
});
