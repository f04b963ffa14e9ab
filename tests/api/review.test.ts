/**
 * Review of buildups: the state machine as a table (every state × asked
 * state × role → allowed or the exact refusal), saves returning work to
 * Draft, the freeze of signed-off buildups (geometry, rename, delete,
 * velocity), the history, racing transitions, every kept version rebuilt
 * exactly for 50 seeded random edit sequences, and a signed-off version's
 * measurements unchanged after the live buildup is reopened and changed.
 */
import crypto from 'node:crypto';
import request from 'supertest';
import seedrandom from 'seedrandom';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type DemoRole, type TestApp } from '../helpers/app';
import { SMALL_GEOMETRY, SMALL_TIES, signIn } from '../helpers/api-fixtures';
import { Section, SectionCalibration } from '../../server/models/section';
import { AuditEvent } from '../../server/models/index';
import { Notification } from '../../server/models/notification';
import { measure } from '../../shared/measure/index';
import { fromGeometry, toInterpretationInput, type BuildupGeometry } from '../../shared/editor/model';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';
import { REVIEW_STATES, REVIEW_STATE_LABELS, type ReviewState } from '../../shared/schemas/review';

let t: TestApp;
let demoId: number;
let outsiderToken: string;
const ids: Record<DemoRole, number> = { admin: 0, interpreter: 0, curator: 0, reviewer: 0 };

type Who = DemoRole | 'outsider';
const tok = async (who: Who) => (who === 'outsider' ? outsiderToken : t.token(who));

/** A ready section with SMALL_TIES as calibration version 1 (rows made directly: no tiles needed here). */
async function makeSection(): Promise<number> {
  const s = await Section.create({
    projectId: demoId,
    title: 'TB-11 review copy',
    lineName: 'TB-11',
    survey: 'TB-2024',
    verticalDomain: 'twt_ms',
    status: 'ready',
    width: 200,
    height: 100,
    sourceFormat: 'png',
    sourceBytes: 1,
    storageKey: crypto.randomBytes(12).toString('hex'),
    uploadedById: null,
  });
  await SectionCalibration.create({ sectionId: s.id, version: 1, ties: SMALL_TIES as never, fit: {}, createdBy: null });
  return s.id;
}

async function createBuildup(sectionId: number, who: Who = 'interpreter', name = 'Kestrel Knoll') {
  const c = await request(t.app).post(`/api/sections/${sectionId}/buildups`).set(bearer(await tok(who))).send({ name });
  expect(c.status, JSON.stringify(c.body)).toBe(201);
  return c.body as { id: number; version: number };
}
async function save(id: number, version: number, geometry: unknown, who: Who = 'interpreter', name?: string) {
  return request(t.app)
    .put(`/api/buildups/${id}`)
    .set(bearer(await tok(who)))
    .send({ version, geometry, ...(name ? { name } : {}) });
}
async function move(id: number, from: ReviewState, to: ReviewState, who: Who, extra: Record<string, unknown> = {}) {
  return request(t.app).post(`/api/buildups/${id}/review`).set(bearer(await tok(who))).send({ from, to, ...extra });
}
async function review(id: number, who: Who = 'curator') {
  const r = await request(t.app).get(`/api/buildups/${id}/review`).set(bearer(await tok(who)));
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
}
async function stateOf(id: number): Promise<ReviewState> {
  return (await review(id)).state;
}

/** A saved buildup by the interpreter, driven through the API into `state` (reviewer's steps by the demo reviewer). */
async function buildupIn(sectionId: number, state: ReviewState): Promise<{ id: number; version: number }> {
  const c = await createBuildup(sectionId);
  const s = await save(c.id, c.version, SMALL_GEOMETRY);
  expect(s.status, JSON.stringify(s.body)).toBe(200);
  const step = async (from: ReviewState, to: ReviewState, who: Who) => expect((await move(c.id, from, to, who)).status).toBe(200);
  if (state !== 'draft') await step('draft', 'out_for_review', 'interpreter');
  if (state === 'needs_rework') await step('out_for_review', 'needs_rework', 'reviewer');
  if (state === 'signed_off') await step('out_for_review', 'signed_off', 'reviewer');
  expect(await stateOf(c.id)).toBe(state);
  return { id: c.id, version: s.body.version };
}

beforeAll(async () => {
  t = await createTestApp();
  const admin = await t.token('admin');
  const projects = await request(t.app).get('/api/projects').set(bearer(admin));
  demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  for (const role of Object.keys(ids) as DemoRole[]) ids[role] = (await request(t.app).get('/api/auth/me').set(bearer(await t.token(role)))).body.user.id;
  // a reviewer who belongs to no project
  await request(t.app).post('/api/users').set(bearer(admin)).send({ email: 'far-reviewer@tessel.example', name: 'Far Reviewer', role: 'reviewer', password: 'long-enough-pw' });
  outsiderToken = await signIn(t, 'far-reviewer@tessel.example', 'long-enough-pw');
}, 120_000);
afterAll(async () => t?.close());

// ---------------------------------------------------------------------------
// the state machine as a table

/**
 * Written out by hand from the rules (not computed from the shared table):
 * the asked transitions that exist and who may take them. The buildup is the
 * interpreter's work; the admin, curator and reviewer are not its authors.
 * Any other (from, to) pair answers 409 `transition_not_allowed`; a signed-in
 * reviewer of another project always gets 404.
 */
const ALLOWED: Record<string, Partial<Record<Who, true>>> = {
  'draft>out_for_review': { admin: true, interpreter: true },
  'out_for_review>needs_rework': { admin: true, reviewer: true },
  'out_for_review>signed_off': { admin: true, reviewer: true },
  'signed_off>draft': { admin: true, reviewer: true },
};
const WHO: Who[] = ['admin', 'interpreter', 'curator', 'reviewer', 'outsider'];

function expected(from: ReviewState, to: ReviewState, who: Who): { status: number; code?: string } {
  if (who === 'outsider') return { status: 404, code: 'not_found' };
  const rule = ALLOWED[`${from}>${to}`];
  if (!rule) return { status: 409, code: 'transition_not_allowed' };
  return rule[who] ? { status: 200 } : { status: 403, code: 'forbidden' };
}

describe('review state machine', () => {
  let sectionId: number;
  beforeAll(async () => {
    sectionId = await makeSection();
  });

  for (const from of REVIEW_STATES) {
    it(`from ${from}: every asked state × every role`, async () => {
      for (const to of REVIEW_STATES) {
        if (to === from) continue;
        for (const who of WHO) {
          const b = await buildupIn(sectionId, from);
          const before = await review(b.id);
          const r = await move(b.id, from, to, who, { comment: `table ${who}`, reason: `table reason ${who}` });
          const want = expected(from, to, who);
          const label = `${from} → ${to} as ${who}: ${JSON.stringify(r.body)}`;
          expect(r.status, label).toBe(want.status);
          const after = await review(b.id);
          if (want.status === 200) {
            expect(r.body.state, label).toBe(to);
            expect(after.history).toHaveLength(before.history.length + 1);
            const last = after.history.at(-1);
            expect(last).toMatchObject({ from, to, version: b.version, by: { id: ids[who as DemoRole] }, bySave: false });
            expect(last.comment).toBe(from === 'signed_off' ? `table reason ${who}` : `table ${who}`);
          } else {
            expect(r.body.code, label).toBe(want.code);
            if (want.code === 'transition_not_allowed') {
              expect(r.body.details).toEqual({ from, to });
              expect(r.body.message).toContain(`from ${REVIEW_STATE_LABELS[from]} to ${REVIEW_STATE_LABELS[to]}`);
            }
            expect(after.state, label).toBe(from);
            expect(after.history, label).toEqual(before.history);
          }
        }
      }
    }, 120_000);
  }

  it('nobody signs off their own work: the creator (admin), and an admin who saved a version, get 403 own_work', async () => {
    // the admin creates and saves; the interpreter sends it; the admin may not sign it off, the reviewer may
    const c = await createBuildup(sectionId, 'admin', 'Marrow Bank');
    expect((await save(c.id, c.version, SMALL_GEOMETRY, 'admin')).status).toBe(200);
    expect((await move(c.id, 'draft', 'out_for_review', 'interpreter')).status).toBe(200);
    const own = await move(c.id, 'out_for_review', 'signed_off', 'admin');
    expect(own.status).toBe(403);
    expect(own.body.code).toBe('own_work');
    expect(await stateOf(c.id)).toBe('out_for_review');

    // the interpreter's buildup, saved once by the admin too: the admin is an author now
    const b = await buildupIn(sectionId, 'draft');
    const s = await save(b.id, b.version, { ...SMALL_GEOMETRY, topIsDrowningSurface: true }, 'admin');
    expect(s.status).toBe(200);
    expect((await move(b.id, 'draft', 'out_for_review', 'interpreter')).status).toBe(200);
    const again = await move(b.id, 'out_for_review', 'signed_off', 'admin');
    expect(again.status).toBe(403);
    expect(again.body.code).toBe('own_work');
    expect((await review(b.id, 'admin')).allowed.map((a: { to: string }) => a.to)).toEqual(['needs_rework']);
    expect((await review(b.id, 'reviewer')).allowed.map((a: { to: string }) => a.to)).toEqual(['needs_rework', 'signed_off']);
    expect((await move(b.id, 'out_for_review', 'signed_off', 'reviewer')).status).toBe(200);
  });

  it('bad bodies: 400 naming the field, nothing written', async () => {
    const b = await buildupIn(sectionId, 'signed_off');
    const before = await review(b.id);
    const cases: [Record<string, unknown>, string][] = [
      [{ from: 'signed_off', to: 'draft' }, 'reason'],
      [{ from: 'signed_off', to: 'draft', reason: '   ' }, 'reason'],
      [{ from: 'signed_off', to: 'draft', comment: 'a comment is not a reason' }, 'reason'],
      [{ from: 'signed_off', to: 'draft', reason: 'x'.repeat(2001) }, 'reason'],
      [{ from: 'signed_off', to: 'draft', reason: 'ok', comment: 'y'.repeat(2001) }, 'comment'],
      [{ from: 'signed_off', to: 'draft', reason: 'bell\u0007' }, 'reason'],
      [{ from: 'signed_off', to: 'finished', reason: 'ok' }, 'to'],
      [{ to: 'draft', reason: 'ok' }, 'from'],
    ];
    for (const [body, field] of cases) {
      const r = await request(t.app).post(`/api/buildups/${b.id}/review`).set(bearer(await t.token('reviewer'))).send(body);
      expect(r.status, JSON.stringify(body)).toBe(400);
      expect(r.body.message, JSON.stringify(r.body)).toMatch(new RegExp(`^${field}: `));
    }
    const after = await review(b.id);
    expect(after).toEqual(before);
    // a reason of 2000 characters and line breaks is fine
    const ok = await move(b.id, 'signed_off', 'draft', 'reviewer', { reason: `Line one\n${'z'.repeat(1990)}` });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
  });

  it('a save returns Out for review and Needs rework to Draft, recorded as a transition by the saver', async () => {
    for (const state of ['out_for_review', 'needs_rework'] as const) {
      const b = await buildupIn(sectionId, state);
      const s = await save(b.id, b.version, { ...SMALL_GEOMETRY, topIsDrowningSurface: true }, 'admin');
      expect(s.status).toBe(200);
      const r = await review(b.id);
      expect(r.state).toBe('draft');
      expect(r.history.at(-1)).toMatchObject({ from: state, to: 'draft', version: s.body.version, by: { id: ids.admin, name: 'Ada Quarry' }, bySave: true, comment: null });
      const list = await request(t.app).get(`/api/sections/${sectionId}/buildups`).set(bearer(await t.token('reviewer')));
      expect(list.body.find((x: { id: number }) => x.id === b.id).reviewState).toBe('draft');
    }
    // a save while Draft writes no transition
    const d = await buildupIn(sectionId, 'draft');
    const before = (await review(d.id)).history.length;
    expect((await save(d.id, d.version, SMALL_GEOMETRY)).status).toBe(200);
    expect((await review(d.id)).history).toHaveLength(before);
  });

  it('history: who, when, comment, in order; list and get carry reviewState', async () => {
    const b = await buildupIn(sectionId, 'draft');
    const t0 = Date.now();
    expect((await move(b.id, 'draft', 'out_for_review', 'interpreter', { comment: 'Ready: both margins pinned' })).status).toBe(200);
    expect((await move(b.id, 'out_for_review', 'needs_rework', 'reviewer', { comment: 'Cycle 1 top crosses the base' })).status).toBe(200);
    const r = await review(b.id, 'interpreter');
    expect(r.history.map((h: { to: string; by: { name: string }; comment: string }) => [h.to, h.by.name, h.comment])).toEqual([
      ['out_for_review', 'Ivo Marlstone', 'Ready: both margins pinned'],
      ['needs_rework', 'Remy Dunlin', 'Cycle 1 top crosses the base'],
    ]);
    for (const h of r.history) expect(Date.parse(h.at)).toBeGreaterThanOrEqual(t0 - 60_000);
    expect(r.authors).toEqual([{ id: ids.interpreter, name: 'Ivo Marlstone' }]);
    expect(r.allowed).toEqual([]); // needs rework: the next save moves it
    const one = await request(t.app).get(`/api/buildups/${b.id}`).set(bearer(await t.token('curator')));
    expect(one.body.reviewState).toBe('needs_rework');
    const audits = await AuditEvent.findAll({ where: { action: 'buildup.review', targetId: String(b.id) }, order: [['id', 'ASC']] });
    expect(audits.map((a) => (a.details as { to: string }).to)).toEqual(['out_for_review', 'needs_rework']);
  });

  it('every transition tells the authors and earlier reviewers (never the actor), a request for review every reviewer of the project, with a link to the buildup', async () => {
    const b = await buildupIn(sectionId, 'draft');
    const told = async (who: DemoRole) =>
      (await Notification.findAll({ where: { recipientId: ids[who], kind: 'review_state' }, order: [['id', 'ASC']] })).filter((n) => n.link === `/sections/${sectionId}/interpret?buildup=${b.id}`);
    const before = { interpreter: (await told('interpreter')).length, reviewer: (await told('reviewer')).length, admin: (await told('admin')).length };
    expect((await move(b.id, 'draft', 'out_for_review', 'interpreter')).status).toBe(200); // the only author acts: the project's reviewers hear of it
    expect((await told('interpreter')).length).toBe(before.interpreter);
    expect((await told('reviewer')).length).toBe(before.reviewer + 1);
    expect((await told('reviewer')).at(-1)!.subject).toContain('Draft → Out for review');
    expect((await told('admin')).length).toBe(before.admin); // admins are not the project's reviewers
    expect((await move(b.id, 'out_for_review', 'needs_rework', 'reviewer', { comment: 'Base too shallow at the left margin' })).status).toBe(200);
    const rework = (await told('interpreter')).at(-1)!;
    expect((await told('interpreter')).length).toBe(before.interpreter + 1);
    expect(rework.subject).toContain('Needs rework');
    expect(rework.text).toBe('Base too shallow at the left margin');
    expect(rework.actorId).toBe(ids.reviewer);
    expect((await save(b.id, b.version, SMALL_GEOMETRY)).status).toBe(200); // back to Draft by the save: the reviewer hears of it
    expect((await told('reviewer')).length).toBe(before.reviewer + 2);
    expect((await told('admin')).length).toBe(before.admin); // neither author nor reviewer of this one
  });

  it('racing transitions: exactly one wins, the other gets 409 state_changed', async () => {
    for (const [a, b] of [
      [{ to: 'signed_off', who: 'reviewer' }, { to: 'needs_rework', who: 'admin' }],
      [{ to: 'signed_off', who: 'reviewer' }, { to: 'signed_off', who: 'admin' }],
    ] as const) {
      const x = await buildupIn(sectionId, 'out_for_review');
      const before = (await review(x.id)).history.length;
      const [ra, rb] = await Promise.all([move(x.id, 'out_for_review', a.to, a.who), move(x.id, 'out_for_review', b.to, b.who)]);
      const statuses = [ra.status, rb.status].sort();
      expect(statuses, JSON.stringify([ra.body, rb.body])).toEqual([200, 409]);
      const loser = ra.status === 409 ? ra : rb;
      const winner = ra.status === 200 ? ra : rb;
      expect(loser.body.code).toBe('state_changed');
      expect(loser.body.details.current).toBe(winner.body.state);
      const after = await review(x.id);
      expect(after.history).toHaveLength(before + 1);
      expect(after.state).toBe(winner.body.state);
    }
  });
});

// ---------------------------------------------------------------------------
// freeze

describe('signed off: frozen until reopened', () => {
  it('geometry, rename, delete and the section velocity answer 409 signed_off naming who signed and how to reopen; nothing written', async () => {
    const sectionId = await makeSection();
    const b = await buildupIn(sectionId, 'signed_off');
    const interp = bearer(await t.token('interpreter'));
    const versionsBefore = (await request(t.app).get(`/api/buildups/${b.id}/versions`).set(interp)).body;
    const velocityBefore = (await request(t.app).get(`/api/sections/${sectionId}/velocity`).set(interp)).body;
    const auditsBefore = await AuditEvent.count();

    const attempts = [
      await save(b.id, b.version, { ...SMALL_GEOMETRY, topIsDrowningSurface: true }),
      await save(b.id, b.version, SMALL_GEOMETRY, 'admin', 'Renamed knoll'),
      await save(b.id, b.version - 1, SMALL_GEOMETRY), // even a stale version hears about the sign-off first
      await request(t.app).delete(`/api/buildups/${b.id}`).set(interp),
      await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(interp).send({ velocity: { kind: 'constant', v: 2400 } }),
    ];
    for (const r of attempts) {
      expect(r.status, JSON.stringify(r.body)).toBe(409);
      expect(r.body.code).toBe('signed_off');
      expect(r.body.message).toContain('Remy Dunlin');
      expect(r.body.message).toContain(`version ${b.version}`);
      expect(r.body.message).toMatch(/reopens it/);
      expect(r.body.details).toMatchObject({ buildupId: b.id, version: b.version, signedOffBy: { id: ids.reviewer, name: 'Remy Dunlin' } });
    }
    expect(await AuditEvent.count()).toBe(auditsBefore);
    const one = await request(t.app).get(`/api/buildups/${b.id}`).set(interp);
    expect(one.body).toMatchObject({ name: 'Kestrel Knoll', version: b.version, geometry: SMALL_GEOMETRY, reviewState: 'signed_off' });
    expect((await request(t.app).get(`/api/buildups/${b.id}/versions`).set(interp)).body).toEqual(versionsBefore);
    expect((await request(t.app).get(`/api/sections/${sectionId}/velocity`).set(interp)).body).toEqual(velocityBefore);
    const r = await review(b.id);
    expect(r.signedOff).toMatchObject({ version: b.version, savedVersion: b.version, by: { id: ids.reviewer, name: 'Remy Dunlin' } });
    expect(r.allowed).toEqual([]); // the curator may do nothing

    // reopened with a reason: edits work again, and the history keeps the sign-off
    expect((await move(b.id, 'signed_off', 'draft', 'reviewer', { reason: 'Base pick revised on TB-14 tie' })).status).toBe(200);
    const saved = await save(b.id, b.version, { ...SMALL_GEOMETRY, topIsDrowningSurface: true });
    expect(saved.status).toBe(200);
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(interp).send({ velocity: { kind: 'constant', v: 2400 } })).status).toBe(200);
    const h = (await review(b.id)).history;
    expect(h.map((x: { to: string }) => x.to)).toEqual(['out_for_review', 'signed_off', 'draft']);
    expect(h[2].comment).toBe('Base pick revised on TB-14 tie');
    const versions = (await request(t.app).get(`/api/buildups/${b.id}/versions`).set(interp)).body;
    expect(versions.find((v: { version: number }) => v.version === b.version).signedOff).toBe(true);
    expect(versions[0]).toMatchObject({ version: saved.body.version, signedOff: false, savedBy: { name: 'Ivo Marlstone' } });
  });

  it('a sign-off after the velocity model changed keeps the same geometry as a new version under the new model, and signs that one off', async () => {
    const sectionId = await makeSection();
    const b = await buildupIn(sectionId, 'out_for_review');
    const interp = bearer(await t.token('interpreter'));
    const velocity = { kind: 'constant', v: 2900 };
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(interp).send({ velocity })).status).toBe(200);
    const live = await request(t.app).get(`/api/buildups/${b.id}/measurements`).set(interp); // what the reviewer looks at
    const signed = await move(b.id, 'out_for_review', 'signed_off', 'reviewer');
    expect(signed.status, JSON.stringify(signed.body)).toBe(200);
    expect(signed.body.version).toBe(b.version + 1);
    expect(signed.body.signedOff.version).toBe(b.version + 1);
    expect(signed.body.signedOff.savedVersion).toBe(b.version); // the save whose geometry the kept version repeats
    expect(signed.body.history.at(-1)).toMatchObject({ to: 'signed_off', version: b.version + 1 });
    expect(signed.body.authors).toEqual([{ id: ids.interpreter, name: 'Ivo Marlstone' }]); // the kept version adds no author
    const kept = (await request(t.app).get(`/api/buildups/${b.id}/versions/${b.version + 1}`).set(interp)).body;
    const saved = (await request(t.app).get(`/api/buildups/${b.id}/versions/${b.version}`).set(interp)).body;
    expect(kept).toMatchObject({ velocity, savedBy: null, signedOff: true, geometry: saved.geometry });
    expect(kept.note).toMatch(/^Kept at sign-off: the section's velocity model changed after version \d+ was saved$/);
    expect(saved).toMatchObject({ velocity: null, signedOff: false, note: null });
    const measured = await request(t.app).get(`/api/buildups/${b.id}/versions/${b.version + 1}/measurements`).set(interp);
    expect(measured.body).toEqual(live.body);
    // no change of context: the version sent is the version signed
    const c = await buildupIn(sectionId, 'signed_off');
    expect((await review(c.id)).signedOff).toMatchObject({ version: c.version, savedVersion: c.version });
  });

  it('a buildup that is not signed off leaves the section velocity editable', async () => {
    const sectionId = await makeSection();
    await buildupIn(sectionId, 'out_for_review');
    const r = await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(bearer(await t.token('interpreter'))).send({ velocity: { kind: 'constant', v: 2500 } });
    expect(r.status).toBe(200);
  });
});

// ---------------------------------------------------------------------------
// versions

/** A random but valid stored geometry (pixel floats, optional fields present or absent, as the server keeps them). */
function randomGeometry(rng: () => number): BuildupGeometry {
  const f = () => Math.round(rng() * 2e6) / 1e4 + rng() * 1e-9; // many digits: the round trip must keep them all
  const pt = (): [number, number] => [f(), f()];
  const line = (n: number) => Array.from({ length: n }, pt);
  const cycles = Array.from({ length: Math.floor(rng() * 4) }, (_, i) => {
    const c: BuildupGeometry['cycles'][number] = {
      index: i + 1,
      top: line(Math.floor(rng() * 6)),
      marginLeft: rng() < 0.7 ? pt() : null,
      marginRight: rng() < 0.7 ? pt() : null,
    };
    if (rng() < 0.5) c.flankLeft = line(1 + Math.floor(rng() * 4));
    if (rng() < 0.5) c.flankRight = line(1 + Math.floor(rng() * 4));
    if (rng() < 0.3) c.ageTopMa = Math.round(rng() * 2000) / 100;
    if (rng() < 0.3) c.systemsTract = rng() < 0.5 ? 'HST' : null;
    return c;
  });
  const kinds = ['onlap', 'downlap', 'toplap', 'truncation'] as const;
  return {
    base: line(Math.floor(rng() * 5)),
    cycles,
    terminations: Array.from({ length: Math.floor(rng() * 3) }, () => ({ type: kinds[Math.floor(rng() * kinds.length)], at: pt() })),
    topIsDrowningSurface: rng() < 0.5,
  };
}

describe('kept versions', () => {
  it('every version of 50 seeded random edit sequences is rebuilt exactly as it was sent', async () => {
    const sectionId = await makeSection();
    const rng = seedrandom('tb-2024-review-versions');
    const interp = bearer(await t.token('interpreter'));
    for (let seq = 0; seq < 50; seq++) {
      const name0 = `Knoll ${seq}`;
      const c = await createBuildup(sectionId, 'interpreter', name0);
      const sent = new Map<number, { name: string; geometry: BuildupGeometry; by: number }>([[0, { name: name0, geometry: { base: [], cycles: [], terminations: [], topIsDrowningSurface: false }, by: ids.interpreter }]]);
      let version = c.version;
      let name = name0;
      const saves = 1 + Math.floor(rng() * 5);
      for (let k = 0; k < saves; k++) {
        const geometry = randomGeometry(rng);
        const who: DemoRole = rng() < 0.2 ? 'admin' : 'interpreter';
        if (rng() < 0.2) name = `Knoll ${seq}.${k}`;
        const r = await save(c.id, version, geometry, who, name);
        expect(r.status, JSON.stringify(r.body)).toBe(200);
        version = r.body.version;
        sent.set(version, { name, geometry, by: ids[who] });
      }
      const list = await request(t.app).get(`/api/buildups/${c.id}/versions`).set(interp);
      expect(list.status).toBe(200);
      expect(list.body.map((v: { version: number }) => v.version)).toEqual([...sent.keys()].sort((a, b) => b - a));
      for (const [v, want] of sent) {
        const got = await request(t.app).get(`/api/buildups/${c.id}/versions/${v}`).set(bearer(await t.token('curator')));
        expect(got.status).toBe(200);
        expect(got.body.geometry, `sequence ${seq} version ${v}`).toEqual(want.geometry);
        expect(got.body).toMatchObject({ version: v, name: want.name, savedBy: { id: want.by }, calibrationVersion: 1, verticalDomain: 'twt_ms', velocity: null });
      }
    }
  }, 240_000);

  it('a version keeps the velocity model and calibration in force when it was saved', async () => {
    const sectionId = await makeSection();
    const interp = bearer(await t.token('interpreter'));
    const c = await createBuildup(sectionId);
    const velocity = { kind: 'constant', v: 2600 };
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(interp).send({ velocity })).status).toBe(200);
    const s = await save(c.id, c.version, SMALL_GEOMETRY);
    const v = await request(t.app).get(`/api/buildups/${c.id}/versions/${s.body.version}`).set(interp);
    expect(v.body).toMatchObject({ velocity, calibrationVersion: 1 });
    expect((await request(t.app).get(`/api/buildups/${c.id}/versions/${c.version}`).set(interp)).body.velocity).toBeNull(); // saved before the model
  });

  it('unknown versions 404, bad version 400, other projects 404', async () => {
    const sectionId = await makeSection();
    const b = await buildupIn(sectionId, 'draft');
    const rv = bearer(await t.token('reviewer'));
    expect((await request(t.app).get(`/api/buildups/${b.id}/versions/99`).set(rv)).status).toBe(404);
    expect((await request(t.app).get(`/api/buildups/${b.id}/versions/99/measurements`).set(rv)).status).toBe(404);
    const bad = await request(t.app).get(`/api/buildups/${b.id}/versions/-1`).set(rv);
    expect(bad.status).toBe(400);
    expect(bad.body.message).toMatch(/^version: /);
    for (const path of ['review', 'versions', `versions/${b.version}`, `versions/${b.version}/measurements`]) {
      expect((await request(t.app).get(`/api/buildups/${b.id}/${path}`).set(bearer(outsiderToken))).status, path).toBe(404);
    }
  });

  it('a signed-off version measures the same after the live buildup is reopened, edited, re-tied and given another velocity model', async () => {
    const sectionId = await makeSection();
    const b = await buildupIn(sectionId, 'signed_off');
    const rv = bearer(await t.token('reviewer'));
    const interp = bearer(await t.token('interpreter'));
    const url = `/api/buildups/${b.id}/versions/${b.version}/measurements`;
    const before = await request(t.app).get(`${url}?draws=20`).set(rv);
    expect(before.status, JSON.stringify(before.body)).toBe(200);
    const liveBefore = await request(t.app).get(`/api/buildups/${b.id}/measurements?draws=20`).set(rv);
    expect(liveBefore.body).toEqual(before.body);

    expect((await move(b.id, 'signed_off', 'draft', 'admin', { reason: 'New well tie on TB-11' })).status).toBe(200);
    const edited = { ...SMALL_GEOMETRY, cycles: [{ ...SMALL_GEOMETRY.cycles[0], top: [[50, 50], [100, 30], [150, 50]] }] };
    expect((await save(b.id, b.version, edited)).status).toBe(200);
    expect((await request(t.app).put(`/api/sections/${sectionId}/velocity`).set(interp).send({ velocity: { kind: 'constant', v: 3100 } })).status).toBe(200);
    const ties = SMALL_TIES.map((x) => ({ px: x.px, world: [x.world[0] * 1.5, x.world[1]] }));
    expect((await request(t.app).put(`/api/sections/${sectionId}/calibration`).set(interp).send({ ties })).status).toBe(201);

    const liveAfter = await request(t.app).get(`/api/buildups/${b.id}/measurements?draws=20`).set(rv);
    expect(liveAfter.status).toBe(200);
    expect(liveAfter.body).not.toEqual(before.body); // the live numbers did change

    const after = await request(t.app).get(`${url}?draws=20`).set(rv);
    expect(after.body).toEqual(before.body);
    // options never asked before: a fresh computation on the pool, equal to the engine on the version's own inputs
    const fresh = await request(t.app).get(`${url}?draws=37`).set(rv);
    expect(fresh.status).toBe(200);
    const input = toInterpretationInput(fromGeometry({ id: b.id, name: 'Kestrel Knoll', version: b.version, geometry: SMALL_GEOMETRY }), {
      calibrationTies: SMALL_TIES as never,
      verticalDomain: 'twt_ms',
      velocity: DEFAULT_VELOCITY as never,
    });
    expect(fresh.body).toEqual(JSON.parse(JSON.stringify(measure(input, { draws: 37 }))));
  }, 60_000);
});
