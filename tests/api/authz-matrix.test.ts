/**
 * Authorization matrix of EVERY API route, generated from the app's own
 * route table (server/openapi/route-table.ts, which the OpenAPI document uses
 * too): the Express 5 router stack is walked (nested routers through
 * `handle.stack`, mount paths from each layer's `rawPath`) and each
 * `METHOD /api/path/:param` must have exactly one row below; a row that names
 * no route fails too. Adding a route means adding one row.
 *
 * Each row is tried three ways:
 * - anonymous → 401 (public routes say what anonymous gets instead);
 * - refused: a role, or a signed-in user who is not a project member, that
 *   must get 403/404 — or, where every signed-in user is allowed, the
 *   explicit `refused: 'none: …'` (no invented refused case);
 * - allowed: a role that must succeed, with its success status.
 *
 * Accounts: the four demo roles, all members of the demo project
 * ("Tessel Basin screening"), and `outsider`, an interpreter who belongs to no
 * project. Sections, Ties and buildups are built through the API
 * (tests/helpers/api-fixtures.ts).
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLE_EMAIL, bearer, createTestApp, type DemoRole, type TestApp } from '../helpers/app';
import { DEMO_PASSWORD } from '../../server/db/seeders/demo';
import { FIELDS, makeImage } from '../helpers/sections';
import { asciiSegyLine, cube3d, matrixSegy, uploadSegyVia } from '../helpers/segy-fixtures';
import { SMALL_GEOMETRY, SMALL_TIES, failedSection, readyCalibratedSection, savedBuildup, signIn } from '../helpers/api-fixtures';
import { routeTable } from '../../server/openapi/route-table';

// ---------------------------------------------------------------------------
// the app's route table (the same walker feeds the OpenAPI document)

export { routeTable };

// ---------------------------------------------------------------------------
// fixtures shared by the rows

/** `session`: a reviewer signed in just for this request (for logout, which ends the session it is sent with). */
type Who = DemoRole | 'outsider' | 'session' | 'anonymous';

interface Fx {
  demoId: number; // all four demo roles are members
  privateId: number; // only the interpreter (its creator and owner)
  section: number; // ready, calibrated, in the demo project
  privateSection: number; // ready, in the private project
  buildup: number; // measurable, on `section`
  spareUserId: number; // an active reviewer account, member of nothing
  outsiderId: number;
}

interface Req {
  path: string;
  body?: unknown;
  /** multipart upload of a small PNG with the usual fields */
  upload?: boolean;
  /** multipart upload of a CSV in the field `file`, with text fields (Analogue library import) */
  csv?: { text: string; fields?: Record<string, string> };
}

interface Probe {
  as: Who;
  status: number;
  /** a different request for this probe (e.g. another project's resource for a non-member) */
  req?: (f: Fx) => Promise<Req> | Req;
}

interface Row {
  /** The request tried by all three probes (built once per row: destructive rows create their own target). */
  req: (f: Fx) => Promise<Req> | Req;
  /** What anonymous gets: 401 unless the route is public. */
  anonymous?: number;
  refused: Probe | `none: ${string}`;
  allowed: Probe;
}

let t: TestApp;
let fx: Fx;
let outsiderToken: string;

async function token(who: Who): Promise<string | null> {
  if (who === 'anonymous') return null;
  if (who === 'outsider') return outsiderToken;
  if (who === 'session') return signIn(t, ROLE_EMAIL.reviewer, DEMO_PASSWORD);
  return t.token(who);
}
const admin = () => t.token('admin');
const interp = () => t.token('interpreter');

async function versionOfSection(id: number) {
  return (await request(t.app).get(`/api/sections/${id}`).set(bearer(await admin()))).body.version as number;
}
async function freshProject(name: string) {
  const r = await request(t.app).post('/api/projects').set(bearer(await interp())).send({ name });
  expect(r.status).toBe(201);
  return r.body.id as number;
}
async function userIdOf(role: DemoRole) {
  const r = await request(t.app).get(`/api/users?q=${encodeURIComponent(ROLE_EMAIL[role])}`).set(bearer(await admin()));
  const u = r.body.items.find((x: { email: string }) => x.email === ROLE_EMAIL[role]);
  expect(u, `no ${role} account`).toBeTruthy();
  return u.id as number;
}
async function addMember(projectId: number, userId: number) {
  const r = await request(t.app).post(`/api/projects/${projectId}/members`).set(bearer(await admin())).send({ userId });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
}
async function freshUser(role = 'reviewer') {
  const r = await request(t.app).post('/api/users').set(bearer(await admin())).send({ email: `m${Math.random().toString(36).slice(2)}@tessel.example`, name: 'Matrix Person', role, password: 'long-enough-pw' });
  expect(r.status).toBe(201);
  return r.body.id as number;
}
/** Invite a fresh account and return the token of the set-password link from its mail (read through the Outbox). */
async function invitationToken() {
  const email = `inv${Math.random().toString(36).slice(2)}@tessel.example`;
  const r = await request(t.app).post('/api/users').set(bearer(await admin())).send({ email, name: 'Matrix Invitee', role: 'reviewer' });
  expect(r.status).toBe(201);
  const list = await request(t.app).get('/api/admin/mail?pageSize=20').set(bearer(await admin()));
  const item = list.body.items.find((m: { recipients: string[] }) => m.recipients.includes(email));
  const mail = await request(t.app).get(`/api/admin/mail/${item.id}`).set(bearer(await admin()));
  return new URL(mail.body.links[0]).searchParams.get('token')!;
}
async function newestMailId() {
  let list = await request(t.app).get('/api/admin/mail?pageSize=1').set(bearer(await admin()));
  if (!list.body.items.length) {
    await invitationToken();
    list = await request(t.app).get('/api/admin/mail?pageSize=1').set(bearer(await admin()));
  }
  return list.body.items[0].id as number;
}
async function uploadedSection() {
  const r = await request(t.app)
    .post(`/api/projects/${fx.demoId}/sections`)
    .set(bearer(await interp()))
    .field(FIELDS)
    .attach('image', await makeImage('png', 64, 32), 'small.png');
  expect(r.status).toBe(202);
  return r.body.id as number;
}

// ---------------------------------------------------------------------------
// the matrix: one row per route

/** Analogue library targets: a hand-entered analogue (curator), a promoted one, a pending request, a list value, a CSV. */
const uniq = () => Math.random().toString(36).slice(2, 8);
async function freshAnalogue(): Promise<{ id: number; version: number }> {
  const r = await request(t.app)
    .post('/api/analogues')
    .set(bearer(await t.token('curator')))
    .send({ name: `Matrix Knoll ${uniq()}`, metrics: { heightM: 120, baseWidthM: 2400 }, basis: 'figure', profile: { base: [[0, 900], [2400, 900]], envelope: [[0, 900], [1200, 780], [2400, 900]] } });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return { id: r.body.id, version: r.body.version };
}
async function promotedAnalogue(f: Fx, as: DemoRole = 'curator'): Promise<number> {
  const r = await request(t.app).post(`/api/buildups/${f.buildup}/promote`).set(bearer(await t.token(as))).send({ name: `Matrix promotion ${uniq()}` });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.id;
}
async function listValue(): Promise<string> {
  const value = `matrix-${uniq()}`;
  const r = await request(t.app).post('/api/analogues/lists/climate').set(bearer(await t.token('curator'))).send({ value, label: 'Matrix climate' });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return value;
}
const matrixCsv = () => ({ text: `name,height_m\nMatrix Import ${uniq()},140\n`, fields: { mapping: JSON.stringify({ columns: { name: 'name', height_m: 'heightM' }, lengthUnit: 'm' }), mode: 'all' } });

/** A Note pin thread on the demo section opened by the interpreter: its id and its first message's id. */
async function noteThread(f: Fx): Promise<{ id: number; messageId: number }> {
  const r = await request(t.app).post(`/api/sections/${f.section}/threads`).set(bearer(await interp())).send({ anchor: { kind: 'point', at: [10, 10] }, body: 'Matrix note' });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return { id: r.body.id, messageId: r.body.messages[0].id };
}

/** A signed-off buildup in the demo project (set in the database: the review workflow has its own rows), made once. */
let signedOffOnce: Promise<void> | null = null;
function signedOffBuildup(f: Fx): Promise<void> {
  signedOffOnce ??= (async () => {
    const b = await savedBuildup(t, await interp(), f.section, 'Batch target');
    const { ctx } = await import('../../server/context');
    await ctx().sequelize.query(`UPDATE buildups SET review_state = 'signed_off', signed_off_at = now() WHERE id = ${Number(b.id)}`);
  })();
  return signedOffOnce;
}
/** A batch of the demo project's signed-off reports, started once; `done` waits until its archive is made. */
let batchOnce: Promise<string> | null = null;
async function reportBatch(f: Fx, done = false): Promise<string> {
  batchOnce ??= (async () => {
    await signedOffBuildup(f);
    const r = await request(t.app).post(`/api/projects/${f.demoId}/buildups/report-batch`).set(bearer(await interp())).send({});
    expect(r.status, JSON.stringify(r.body)).toBe(202);
    return r.body.id as string;
  })();
  const id = await batchOnce;
  for (let i = 0; done && i < 600; i++) {
    const s = await request(t.app).get(`/api/report-batches/${id}`).set(bearer(await admin()));
    if (s.body.state === 'done') break;
    expect(s.body.state, JSON.stringify(s.body)).not.toBe('failed');
    await new Promise((res) => setTimeout(res, 250));
  }
  return id;
}

/** The demo section's depth view, asked for by the interpreter and waited for until its current build is on view; its build number. */
async function depthReady(f: Fx): Promise<number> {
  const ask = await request(t.app).post(`/api/sections/${f.section}/depth`).set(bearer(await interp()));
  expect([200, 202], JSON.stringify(ask.body)).toContain(ask.status);
  for (let i = 0; i < 400; i++) {
    const s = await request(t.app).get(`/api/sections/${f.section}/depth`).set(bearer(await interp()));
    expect(s.body.status, JSON.stringify(s.body)).not.toBe('failed');
    if (s.body.status === 'ready' && !s.body.stale) return s.body.ready.build as number;
    await new Promise((res) => setTimeout(res, 150));
  }
  throw new Error('the depth view was not made in time');
}

/** A saved forward-model run body (small, valid) and a run saved by the interpreter on the matrix buildup. */
const matrixModelRun = () => ({
  name: 'Matrix run',
  params: { profile: [[0, 40], [1000, 20], [2000, 40]], columns: 11, growth: { GmMmPerYr: 12, I0: 2000, Ik: 250, kPerM: 0.1 }, stepYr: 1000, durationYr: 10_000, cycles: { productionFactors: [1] } },
  summary: { crestWaterDepthM: 0, drowningDepthM: 70, drowned: false, steps: 10, classification: null, heightM: null, baseWidthM: null, netBackstepM: null, netAggradationM: null, cycles: [] },
});
async function savedModelRun(f: Fx): Promise<number> {
  const r = await request(t.app).post(`/api/buildups/${f.buildup}/model-runs`).set(bearer(await interp())).send(matrixModelRun());
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.id;
}

const MATRIX: Record<string, Row> = {
  // public
  'GET /api/health': { req: () => ({ path: '/api/health' }), anonymous: 200, refused: 'none: public health check', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/health/live': { req: () => ({ path: '/api/health/live' }), anonymous: 200, refused: 'none: public liveness probe', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/health/ready': { req: () => ({ path: '/api/health/ready' }), anonymous: 200, refused: 'none: public readiness probe', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/openapi.json': { req: () => ({ path: '/api/openapi.json' }), refused: 'none: every signed-in user (the API reference)', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/auth/login': {
    req: () => ({ path: '/api/auth/login', body: { email: 'reviewer@tessel.example', password: 'cayline-demo' } }),
    anonymous: 200,
    refused: { as: 'anonymous', status: 401, req: () => ({ path: '/api/auth/login', body: { email: 'reviewer@tessel.example', password: 'wrong-password' } }) },
    allowed: { as: 'anonymous', status: 200 },
  },

  'POST /api/auth/forgot-password': {
    req: () => ({ path: '/api/auth/forgot-password', body: { email: 'nobody.at.all@tessel.example' } }),
    anonymous: 202,
    refused: 'none: public, and the same 202 whether the address has an account or not',
    allowed: { as: 'anonymous', status: 202 },
  },
  'POST /api/auth/set-password': {
    req: () => ({ path: '/api/auth/set-password', body: { token: 'A'.repeat(43), password: 'matrix-password-1' } }),
    anonymous: 400, // an unknown link
    refused: 'none: public; the mailed single-use token is the credential',
    allowed: { as: 'anonymous', status: 200, req: async () => ({ path: '/api/auth/set-password', body: { token: await invitationToken(), password: 'matrix-password-1' } }) },
  },

  // auth
  'GET /api/auth/me': { req: () => ({ path: '/api/auth/me' }), refused: 'none: every signed-in user', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/auth/logout': { req: () => ({ path: '/api/auth/logout' }), refused: 'none: every signed-in user', allowed: { as: 'session', status: 204 } },

  // users
  'GET /api/users/directory': {
    req: () => ({ path: '/api/users/directory' }),
    refused: 'none: every signed-in user (the answer holds only the people they share a project with; admins see all)',
    allowed: { as: 'reviewer', status: 200 },
  },
  'GET /api/users': { req: () => ({ path: '/api/users' }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'admin', status: 200 } },
  'POST /api/users': {
    req: () => ({ path: '/api/users', body: { email: `u${Math.random().toString(36).slice(2)}@tessel.example`, name: 'U', role: 'reviewer', password: 'long-enough-pw' } }),
    refused: { as: 'curator', status: 403 },
    allowed: { as: 'admin', status: 201 },
  },
  'PATCH /api/users/:id': { req: async () => ({ path: `/api/users/${await freshUser()}`, body: { role: 'curator' } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'admin', status: 200 } },

  // projects
  'GET /api/projects': { req: () => ({ path: '/api/projects' }), refused: 'none: every signed-in user (the list holds only their own projects)', allowed: { as: 'curator', status: 200 } },
  'POST /api/projects': { req: () => ({ path: '/api/projects', body: { name: 'Matrix project' } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 201 } },
  'GET /api/projects/:id': { req: (f) => ({ path: `/api/projects/${f.privateId}` }), refused: { as: 'curator', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'PATCH /api/projects/:id': { req: (f) => ({ path: `/api/projects/${f.demoId}`, body: { description: 'changed by the matrix' } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 200 } },
  'DELETE /api/projects/:id': {
    req: async () => {
      const id = await freshProject('To delete');
      await addMember(id, await userIdOf('curator'));
      return { path: `/api/projects/${id}` };
    },
    refused: { as: 'curator', status: 403 }, // a member who is not the owner
    allowed: { as: 'interpreter', status: 204 }, // the creator, its owner
  },
  'PUT /api/projects/:id/owner': {
    req: async () => {
      const id = await freshProject('Hand over');
      const next = await freshUser('interpreter');
      await addMember(id, next);
      await addMember(id, await userIdOf('curator'));
      return { path: `/api/projects/${id}/owner`, body: { userId: next } };
    },
    refused: { as: 'curator', status: 403 }, // a member who is not the owner
    allowed: { as: 'interpreter', status: 200 }, // the owner hands it over
  },
  'GET /api/projects/:id/members': { req: (f) => ({ path: `/api/projects/${f.privateId}/members` }), refused: { as: 'reviewer', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'POST /api/projects/:id/members': {
    req: async (f) => ({ path: `/api/projects/${f.demoId}/members`, body: { userId: await freshUser() } }),
    refused: { as: 'curator', status: 403 }, // a member without the right to edit
    allowed: { as: 'interpreter', status: 201 },
  },
  'DELETE /api/projects/:id/members/:userId': {
    req: async (f) => {
      const userId = await freshUser();
      expect((await request(t.app).post(`/api/projects/${f.demoId}/members`).set(bearer(await admin())).send({ userId })).status).toBe(201);
      return { path: `/api/projects/${f.demoId}/members/${userId}` };
    },
    refused: { as: 'reviewer', status: 403 },
    allowed: { as: 'interpreter', status: 204 },
  },

  // sections
  'GET /api/projects/:projectId/sections': { req: (f) => ({ path: `/api/projects/${f.privateId}/sections` }), refused: { as: 'curator', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'POST /api/projects/:projectId/sections': { req: (f) => ({ path: `/api/projects/${f.demoId}/sections`, upload: true }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 202 } },
  'GET /api/sections/:id': { req: (f) => ({ path: `/api/sections/${f.privateSection}` }), refused: { as: 'reviewer', status: 404 }, allowed: { as: 'admin', status: 200 } },
  'PATCH /api/sections/:id': {
    req: async (f) => ({ path: `/api/sections/${f.section}`, body: { version: await versionOfSection(f.section), notes: 'edited by the matrix' } }),
    refused: { as: 'reviewer', status: 403 },
    allowed: { as: 'interpreter', status: 200 },
  },
  'DELETE /api/sections/:id': { req: async () => ({ path: `/api/sections/${await uploadedSection()}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'interpreter', status: 204 } },
  'POST /api/sections/:id/retry': { req: async (f) => ({ path: `/api/sections/${await failedSection(t, await interp(), f.demoId)}/retry` }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 202 } },
  'GET /api/sections/:id/tiles/:z/:tile': { req: (f) => ({ path: `/api/sections/${f.section}/tiles/0/0_0.jpg` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/sections/:id/thumbnail': { req: (f) => ({ path: `/api/sections/${f.privateSection}/thumbnail` }), refused: { as: 'curator', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'GET /api/sections/:id/preview': { req: (f) => ({ path: `/api/sections/${f.section}/preview` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'GET /api/sections/:id/calibrations': { req: (f) => ({ path: `/api/sections/${f.section}/calibrations` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'PUT /api/sections/:id/calibration': { req: (f) => ({ path: `/api/sections/${f.section}/calibration`, body: { ties: SMALL_TIES } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 201 } },
  'POST /api/sections/:id/calibration/preview': { req: (f) => ({ path: `/api/sections/${f.section}/calibration/preview`, body: { ties: SMALL_TIES } }), refused: { as: 'curator', status: 403 }, allowed: { as: 'admin', status: 200 } },
  // SEG-Y uploads and sections (tests/helpers/segy-fixtures.ts)
  'POST /api/projects/:projectId/segy': { req: (f) => ({ path: `/api/projects/${f.demoId}/segy`, csv: { text: asciiSegyLine(), fields: { title: 'Matrix SEG-Y' } } }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 202 } },
  'GET /api/projects/:projectId/segy': { req: (f) => ({ path: `/api/projects/${f.privateId}/segy` }), refused: { as: 'curator', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'GET /api/segy-uploads/:id': { req: async (f) => ({ path: `/api/segy-uploads/${(await matrixSegy(t.app, await interp(), f.demoId)).cube}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'DELETE /api/segy-uploads/:id': { req: async (f) => ({ path: `/api/segy-uploads/${(await uploadSegyVia(t.app, await interp(), f.demoId, cube3d())).uploadId}` }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 204 } },
  'POST /api/segy-uploads/:id/sections': { req: async (f) => ({ path: `/api/segy-uploads/${(await matrixSegy(t.app, await interp(), f.demoId)).cube}/sections`, body: { kind: 'inline', number: 11, title: 'Matrix inline' } }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 202 } },
  'GET /api/sections/:id/segy': { req: async (f) => ({ path: `/api/sections/${(await matrixSegy(t.app, await interp(), f.demoId)).section}/segy` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'GET /api/sections/:id/segy/trace-headers': { req: async (f) => ({ path: `/api/sections/${(await matrixSegy(t.app, await interp(), f.demoId)).section}/segy/trace-headers?pageSize=5` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/sections/:id/amplitudes': { req: async (f) => ({ path: `/api/sections/${(await matrixSegy(t.app, await interp(), f.demoId)).section}/amplitudes?trace=0&sample=0&traces=2&samples=3` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'POST /api/sections/:id/render': { req: async (f) => ({ path: `/api/sections/${(await matrixSegy(t.app, await interp(), f.demoId)).section}/render`, body: { ramp: 'diverging' } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 202 } },
  // depth view: members look at and ask for it
  'GET /api/sections/:id/depth': { req: (f) => ({ path: `/api/sections/${f.section}/depth` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'POST /api/sections/:id/depth': { req: async (f) => ({ path: `/api/sections/${await readyCalibratedSection(t, await interp(), f.demoId)}/depth` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 202 } },
  'GET /api/sections/:id/depth/:build/tiles/:z/:tile': { req: async (f) => ({ path: `/api/sections/${f.section}/depth/${await depthReady(f)}/tiles/0/0_0.jpg` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'GET /api/sections/:id/depth/:build/preview': { req: async (f) => ({ path: `/api/sections/${f.section}/depth/${await depthReady(f)}/preview` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },

  // velocity and buildups
  'GET /api/sections/:id/velocity': { req: (f) => ({ path: `/api/sections/${f.section}/velocity` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'PUT /api/sections/:id/velocity': {
    req: (f) => ({ path: `/api/sections/${f.section}/velocity`, body: { velocity: { kind: 'constant', v: 2400 } } }),
    refused: { as: 'reviewer', status: 403 },
    allowed: { as: 'interpreter', status: 200 },
  },
  'GET /api/sections/:sectionId/buildups': { req: (f) => ({ path: `/api/sections/${f.section}/buildups` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'POST /api/sections/:sectionId/buildups': { req: (f) => ({ path: `/api/sections/${f.section}/buildups`, body: { name: 'Marrow Bank' } }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 201 } },
  'GET /api/buildups/:id': { req: (f) => ({ path: `/api/buildups/${f.buildup}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'PUT /api/buildups/:id': {
    req: async (f) => {
      const b = await savedBuildup(t, await interp(), f.section, 'Save target');
      return { path: `/api/buildups/${b.id}`, body: { version: b.version, geometry: SMALL_GEOMETRY } };
    },
    refused: { as: 'reviewer', status: 403 },
    allowed: { as: 'admin', status: 200 },
  },
  'DELETE /api/buildups/:id': { req: async (f) => ({ path: `/api/buildups/${(await savedBuildup(t, await interp(), f.section, 'Delete target')).id}` }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 204 } },
  'GET /api/buildups/:id/measurements': { req: (f) => ({ path: `/api/buildups/${f.buildup}/measurements?draws=20` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  // reports and exports: every member reads and exports (reviewers and curators included)
  'GET /api/buildups/:id/report': { req: (f) => ({ path: `/api/buildups/${f.buildup}/report` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/buildups/:id/export/:format': { req: (f) => ({ path: `/api/buildups/${f.buildup}/export/csv` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'POST /api/buildups/:id/report/pdf': { req: (f) => ({ path: `/api/buildups/${f.buildup}/report/pdf`, body: { paper: 'a4', stretch: 1.25 } }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 202 } },
  'GET /api/reports/:id': {
    req: async (f) => {
      const r = await request(t.app).post(`/api/buildups/${f.buildup}/report/pdf`).set(bearer(await interp())).send({ paper: 'letter' });
      expect([200, 202]).toContain(r.status);
      return { path: `/api/reports/${r.body.id}` };
    },
    refused: { as: 'outsider', status: 404 },
    allowed: { as: 'reviewer', status: 200 },
  },
  // review states and kept versions
  'GET /api/buildups/:id/review': { req: (f) => ({ path: `/api/buildups/${f.buildup}/review` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'POST /api/buildups/:id/review': {
    req: async (f) => ({ path: `/api/buildups/${(await savedBuildup(t, await interp(), f.section, 'Review target')).id}/review`, body: { from: 'draft', to: 'out_for_review' } }),
    refused: { as: 'curator', status: 403 },
    allowed: { as: 'interpreter', status: 200 },
  },
  'GET /api/buildups/:id/versions': { req: (f) => ({ path: `/api/buildups/${f.buildup}/versions` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/buildups/:id/versions/:version': { req: (f) => ({ path: `/api/buildups/${f.buildup}/versions/1` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'GET /api/buildups/:id/versions/:version/measurements': { req: (f) => ({ path: `/api/buildups/${f.buildup}/versions/1/measurements?draws=20` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  // saved forward-model runs: members read, interpreter members and admins write
  'GET /api/buildups/:id/model-runs': { req: (f) => ({ path: `/api/buildups/${f.buildup}/model-runs` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'POST /api/buildups/:id/model-runs': { req: (f) => ({ path: `/api/buildups/${f.buildup}/model-runs`, body: matrixModelRun() }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 201 } },
  'GET /api/model-runs/:id': { req: async (f) => ({ path: `/api/model-runs/${await savedModelRun(f)}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'DELETE /api/model-runs/:id': { req: async (f) => ({ path: `/api/model-runs/${await savedModelRun(f)}` }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 204 } },
  'POST /api/measure': {
    req: () => ({
      path: '/api/measure',
      body: {
        interpretation: { verticalDomain: 'depth_m', buildups: [{ base: [[0, 2000], [4000, 2000]], cycles: [{ index: 1, top: [[1000, 1800], [3000, 1800]], marginLeft: [1000, 1800], marginRight: [3000, 1800] }] }] },
      },
    }),
    refused: 'none: every signed-in user (the engine on posted data, nothing stored)',
    allowed: { as: 'outsider', status: 200 },
  },

  // Note pins and threads (every project member comments; only the author edits or deletes a message)
  'GET /api/sections/:sectionId/threads': { req: (f) => ({ path: `/api/sections/${f.privateSection}/threads` }), refused: { as: 'reviewer', status: 404 }, allowed: { as: 'interpreter', status: 200 } },
  'POST /api/sections/:sectionId/threads': {
    req: (f) => ({ path: `/api/sections/${f.section}/threads`, body: { anchor: { kind: 'point', at: [10, 10] }, body: 'Matrix note' } }),
    refused: { as: 'outsider', status: 404 },
    allowed: { as: 'curator', status: 201 },
  },
  'GET /api/threads/:id': { req: async (f) => ({ path: `/api/threads/${(await noteThread(f)).id}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'PATCH /api/threads/:id': { req: async (f) => ({ path: `/api/threads/${(await noteThread(f)).id}`, body: { resolved: true } }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'POST /api/threads/:id/messages': { req: async (f) => ({ path: `/api/threads/${(await noteThread(f)).id}/messages`, body: { body: 'Matrix reply' } }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 201 } },
  'PATCH /api/messages/:id': { req: async (f) => ({ path: `/api/messages/${(await noteThread(f)).messageId}`, body: { body: 'Matrix edit' } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'interpreter', status: 200 } },
  'DELETE /api/messages/:id': { req: async (f) => ({ path: `/api/messages/${(await noteThread(f)).messageId}` }), refused: { as: 'curator', status: 403 }, allowed: { as: 'interpreter', status: 200 } },

  // project buildup register and its exports (members only; reviewers and curators read and export); one's own display unit
  'GET /api/projects/:id/buildups': { req: (f) => ({ path: `/api/projects/${f.demoId}/buildups?sort=heightM` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/projects/:id/buildups/export.csv': { req: (f) => ({ path: `/api/projects/${f.demoId}/buildups/export.csv?unit=ft` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'curator', status: 200 } },
  'GET /api/projects/:id/buildups/export.geojson': { req: (f) => ({ path: `/api/projects/${f.demoId}/buildups/export.geojson` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'POST /api/projects/:id/buildups/report-batch': {
    req: async (f) => {
      await signedOffBuildup(f);
      return { path: `/api/projects/${f.demoId}/buildups/report-batch`, body: {} };
    },
    refused: { as: 'outsider', status: 404 },
    allowed: { as: 'curator', status: 202 },
  },
  'GET /api/report-batches/:batchId': { req: async (f) => ({ path: `/api/report-batches/${await reportBatch(f)}` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/report-batches/:batchId/file': { req: async (f) => ({ path: `/api/report-batches/${await reportBatch(f, true)}/file` }), refused: { as: 'outsider', status: 404 }, allowed: { as: 'reviewer', status: 200 } },
  'GET /api/me/preferences': { req: () => ({ path: '/api/me/preferences' }), refused: 'none: every signed-in user (their own preferences)', allowed: { as: 'curator', status: 200 } },
  'PUT /api/me/preferences': { req: () => ({ path: '/api/me/preferences', body: { lengthUnit: 'm' } }), refused: 'none: every signed-in user (their own preferences)', allowed: { as: 'reviewer', status: 200 } },

  // Analogue library (everybody signed in reads; curators and admins change it; interpreters ask for promotions)
  'GET /api/analogues': { req: () => ({ path: '/api/analogues?setting=bank&r.heightM=10..500' }), refused: 'none: every signed-in user reads the library', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/analogues/export.csv': { req: () => ({ path: '/api/analogues/export.csv' }), refused: 'none: every signed-in user reads the library', allowed: { as: 'interpreter', status: 200 } },
  'GET /api/analogues/export.geojson': { req: () => ({ path: '/api/analogues/export.geojson' }), refused: 'none: every signed-in user reads the library', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/analogues/ics-chart': { req: () => ({ path: '/api/analogues/ics-chart' }), refused: 'none: every signed-in user (a published chart)', allowed: { as: 'outsider', status: 200 } },
  'GET /api/analogues/lists': { req: () => ({ path: '/api/analogues/lists' }), refused: 'none: every signed-in user reads the lists', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/analogues/lists/:list': { req: () => ({ path: '/api/analogues/lists/setting', body: { value: `matrix-${uniq()}`, label: 'Matrix setting' } }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'curator', status: 201 } },
  'DELETE /api/analogues/lists/:list/:value': { req: async () => ({ path: `/api/analogues/lists/climate/${await listValue()}` }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'admin', status: 204 } },
  'GET /api/analogues/saved-searches': { req: () => ({ path: '/api/analogues/saved-searches' }), refused: 'none: every signed-in user (their own saved searches)', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/analogues/saved-searches': { req: () => ({ path: '/api/analogues/saved-searches', body: { name: 'Matrix search', query: 'setting=bank' } }), refused: 'none: every signed-in user (their own saved searches)', allowed: { as: 'outsider', status: 201 } },
  'DELETE /api/analogues/saved-searches/:id': {
    req: async () => {
      const r = await request(t.app).post('/api/analogues/saved-searches').set(bearer(await interp())).send({ name: 'Matrix search', query: 'q=knoll' });
      return { path: `/api/analogues/saved-searches/${r.body.id}` };
    },
    refused: { as: 'reviewer', status: 404 },
    allowed: { as: 'interpreter', status: 204 },
  },
  'POST /api/analogues/look-alikes': { req: async () => ({ path: '/api/analogues/look-alikes', body: { from: { analogueId: (await freshAnalogue()).id }, mode: 'shape', k: 3 } }), refused: 'none: every signed-in user reads the library', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/analogues/import/preview': { req: () => ({ path: '/api/analogues/import/preview', csv: { text: 'name,height_m\nMatrix Preview,120\n' } }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'curator', status: 200 } },
  'POST /api/analogues/import': { req: () => ({ path: '/api/analogues/import', csv: matrixCsv() }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'admin', status: 201 } },
  'POST /api/analogues': { req: () => ({ path: '/api/analogues', body: { name: `Matrix Entry ${uniq()}`, metrics: { heightM: 80 }, basis: 'depth' } }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'curator', status: 201 } },
  'GET /api/analogues/:id': { req: async () => ({ path: `/api/analogues/${(await freshAnalogue()).id}` }), refused: 'none: every signed-in user reads the library', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/analogues/:id/crop': { req: async (f) => ({ path: `/api/analogues/${await promotedAnalogue(f)}/crop` }), refused: 'none: every signed-in user reads the library', allowed: { as: 'reviewer', status: 200 } },
  'PATCH /api/analogues/:id': {
    req: async () => {
      const a = await freshAnalogue();
      return { path: `/api/analogues/${a.id}`, body: { version: a.version, tags: ['matrix'] } };
    },
    refused: { as: 'interpreter', status: 403 },
    allowed: { as: 'curator', status: 200 },
  },
  'DELETE /api/analogues/:id': { req: async () => ({ path: `/api/analogues/${(await freshAnalogue()).id}` }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'admin', status: 204 } },
  'POST /api/analogues/:id/accept': { req: async (f) => ({ path: `/api/analogues/${await promotedAnalogue(f, 'interpreter')}/accept`, body: {} }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'curator', status: 200 } },
  'POST /api/analogues/:id/decline': {
    req: async (f) => ({ path: `/api/analogues/${await promotedAnalogue(f, 'interpreter')}/decline`, body: { reason: 'Margin pins not on the shelf break' } }),
    refused: { as: 'reviewer', status: 403 },
    allowed: { as: 'admin', status: 200 },
  },
  'POST /api/buildups/:id/promote': { req: (f) => ({ path: `/api/buildups/${f.buildup}/promote`, body: { tags: ['matrix'] } }), refused: { as: 'reviewer', status: 403 }, allowed: { as: 'curator', status: 201 } },

  // admin
  'GET /api/admin/mail': { req: () => ({ path: '/api/admin/mail' }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'admin', status: 200 } },
  'GET /api/admin/mail/:id': { req: async () => ({ path: `/api/admin/mail/${await newestMailId()}` }), refused: { as: 'interpreter', status: 403 }, allowed: { as: 'admin', status: 200 } },

  // notifications and one's own account
  'GET /api/notifications': { req: () => ({ path: '/api/notifications' }), refused: 'none: every signed-in user (their own notifications only)', allowed: { as: 'reviewer', status: 200 } },
  'POST /api/notifications/read': { req: () => ({ path: '/api/notifications/read', body: { all: true } }), refused: 'none: every signed-in user (their own notifications only)', allowed: { as: 'reviewer', status: 200 } },
  'GET /api/account/preferences': { req: () => ({ path: '/api/account/preferences' }), refused: 'none: every signed-in user (their own settings)', allowed: { as: 'curator', status: 200 } },
  'PUT /api/account/preferences': { req: () => ({ path: '/api/account/preferences', body: { notifyMode: 'immediate' } }), refused: 'none: every signed-in user (their own settings)', allowed: { as: 'curator', status: 200 } },
  'POST /api/account/password': {
    // the outsider changes their own password; their current session (the one sending) stays
    req: () => ({ path: '/api/account/password', body: { currentPassword: 'long-enough-pw', newPassword: 'outsider-new-pw-1' } }),
    refused: 'none: every signed-in user (their own password, the current one required)',
    allowed: { as: 'outsider', status: 204 },
  },
};

// ---------------------------------------------------------------------------

beforeAll(async () => {
  t = await createTestApp();
  const adminToken = await admin();
  const interpToken = await interp();
  const projects = await request(t.app).get('/api/projects').set(bearer(adminToken));
  const demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
  const privateId = (await request(t.app).post('/api/projects').set(bearer(interpToken)).send({ name: 'Private look' })).body.id;
  const outsider = await request(t.app).post('/api/users').set(bearer(adminToken)).send({ email: 'outsider@tessel.example', name: 'Outsider', role: 'interpreter', password: 'long-enough-pw' });
  outsiderToken = await signIn(t, 'outsider@tessel.example', 'long-enough-pw');
  const spare = await request(t.app).post('/api/users').set(bearer(adminToken)).send({ email: 'spare@tessel.example', name: 'Spare', role: 'reviewer', password: 'long-enough-pw' });
  const section = await readyCalibratedSection(t, interpToken, demoId);
  const privateSection = await readyCalibratedSection(t, interpToken, privateId);
  const buildup = (await savedBuildup(t, interpToken, section)).id;
  fx = { demoId, privateId, section, privateSection, buildup, spareUserId: spare.body.id, outsiderId: outsider.body.id };
}, 240_000);
afterAll(async () => t?.close());

async function send(method: string, r: Req, who: Who) {
  const m = method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
  let q = request(t.app)[m](r.path);
  const tok = await token(who);
  if (tok) q = q.set(bearer(tok));
  if (r.upload) return q.field(FIELDS).attach('image', await makeImage('png', 64, 32), 'small.png');
  if (r.csv) {
    for (const [k, v] of Object.entries(r.csv.fields ?? {})) q = q.field(k, v);
    return q.attach('file', Buffer.from(r.csv.text), 'analogues.csv');
  }
  return r.body === undefined ? q : q.send(r.body as object);
}

const describeRefused = (r: Row['refused']) => (typeof r === 'string' ? `refused ${r}` : `${r.as} ${r.status}`);

describe('authorization matrix', () => {
  it('has exactly one row per route of the app', () => {
    const routes = routeTable(t.app as never);
    expect(routes.length).toBeGreaterThan(30);
    const rows = Object.keys(MATRIX).sort();
    expect(routes.filter((r) => !rows.includes(r)), 'routes without a row').toEqual([]);
    expect(rows.filter((r) => !routes.includes(r)), 'rows that name no route').toEqual([]);
  });

  it('the route table walker finds nested routers and their mount paths', () => {
    const routes = routeTable(t.app as never);
    expect(routes).toContain('GET /api/health'); // on the app itself
    expect(routes).toContain('POST /api/auth/login'); // router mounted at /api/auth
    expect(routes).toContain('DELETE /api/projects/:id/members/:userId'); // router mounted at /api/projects
    expect(routes).toContain('GET /api/sections/:id/tiles/:z/:tile'); // router mounted at /api
  });

  for (const [key, row] of Object.entries(MATRIX)) {
    const [method] = key.split(' ');
    const anon = row.anonymous ?? 401;
    it(`${key}: anonymous ${anon}, ${describeRefused(row.refused)}, ${row.allowed.as} ${row.allowed.status}`, async () => {
      const r = await row.req(fx);
      const a = await send(method, r, 'anonymous');
      expect(a.status, `anonymous: ${JSON.stringify(a.body)}`).toBe(anon);
      if (anon === 401) expect(a.body.code).toBeTruthy();
      if (typeof row.refused === 'string') {
        expect(row.refused).toMatch(/^none: \S/);
      } else {
        const rr = row.refused.req ? await row.refused.req(fx) : r;
        const res = await send(method, rr, row.refused.as);
        expect(res.status, `${row.refused.as}: ${JSON.stringify(res.body)}`).toBe(row.refused.status);
        expect([401, 403, 404]).toContain(row.refused.status);
      }
      const ar = row.allowed.req ? await row.allowed.req(fx) : r;
      const ok = await send(method, ar, row.allowed.as);
      expect(ok.status, `${row.allowed.as}: ${JSON.stringify(ok.body)}`).toBe(row.allowed.status);
      expect(row.allowed.status).toBeLessThan(300);
    });
  }

  it('DELETE project: the creator may, an admin may, a member who did not create it may not — and it is gone', async () => {
    const id = await freshProject('Gone afterwards');
    expect((await request(t.app).delete(`/api/projects/${id}`).set(bearer(await admin()))).status).toBe(204);
    expect((await request(t.app).get(`/api/projects/${id}`).set(bearer(await interp()))).status).toBe(404);
  });
});
