/**
 * Review in the browser: the interpreter sends Kestrel Knoll (traced on the
 * demo line TB-11 through the API, two saves) for review from the review bar;
 * the reviewer, in a second browser, signs it off, reads the history, views
 * the older version read-only and compares the Readings of both versions;
 * the interpreter's page, still showing the state it loaded, makes its next
 * edit and is refused with the server's own "signed off" message on the
 * canvas — nothing is saved. Screenshots in tests/e2e/screenshots/review-*.
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { kestrelKnollFixture, seedDemoLines, signIn } from '../helpers/e2e-demo';

type Pt = [number, number];
const W = 2400;
const H = 750;

const fixture = kestrelKnollFixture();
const sc = (p: Pt): Pt => [(p[0] * W) / fixture.width, (p[1] * H) / fixture.height];
const truth = fixture.pixelGeometry.buildups[0];
function geometry(cycles: number) {
  return {
    base: truth.base.map(sc),
    cycles: truth.cycles.slice(0, cycles).map((c, i) => ({
      index: i + 1,
      top: c.top.map(sc),
      marginLeft: sc(c.marginLeft),
      marginRight: sc(c.marginRight),
      ...(c.flankLeft ? { flankLeft: c.flankLeft.map(sc) } : {}),
      ...(c.flankRight ? { flankRight: c.flankRight.map(sc) } : {}),
    })),
    terminations: [],
    topIsDrowningSurface: false,
  };
}

let t: TestApp;
let b: Browser;
let b2: Browser | null = null;
let tb11 = 0;
let knoll = 0;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const { token, tb11: line } = await seedDemoLines(t, { width: W, height: H });
  tb11 = line;
  // Kestrel Knoll: version 1 with its first cycle, version 2 with all of them
  const c = await request(t.app).post(`/api/sections/${tb11}/buildups`).set(bearer(token)).send({ name: 'Kestrel Knoll' });
  knoll = c.body.id;
  const v1 = await request(t.app).put(`/api/buildups/${knoll}`).set(bearer(token)).send({ version: c.body.version, geometry: geometry(1) });
  expect(v1.status, JSON.stringify(v1.body)).toBe(200);
  const v2 = await request(t.app).put(`/api/buildups/${knoll}`).set(bearer(token)).send({ version: v1.body.version, geometry: geometry(truth.cycles.length) });
  expect(v2.status, JSON.stringify(v2.body)).toBe(200);
  b = await openBrowser(t.running.url);
}, 240_000);
afterAll(async () => {
  await b2?.close();
  await b?.close();
  await t?.close();
});

const stateOf = (page: Page) => page.locator('[data-test="review-bar"] [data-test="review-state"]').getAttribute('data-state');

async function openKnoll(page: Page): Promise<void> {
  await page.goto(`/sections/${tb11}/interpret?buildup=${knoll}`);
  await page.locator('[data-test="review-bar"]').waitFor();
  await expect.poll(() => page.locator('[data-test="ledger-buildup-row"]').count()).toBeGreaterThan(0);
}

async function take(page: Page, to: string, text: string): Promise<void> {
  await page.locator(`[data-test="review-go-${to}"]`).click();
  await page.locator('[data-test="review-dialog"] textarea').fill(text);
  await page.locator('[data-test="review-send"]').click();
  await expect.poll(() => stateOf(page)).toBe(to);
}

describe('review: send, sign off, frozen', () => {
  it('interpreter sends for review, reviewer signs off, the interpreter’s next edit is refused with the clear message', async () => {
    const page = b.page;
    await signIn(page, 'interpreter@tessel.example');
    await openKnoll(page);
    expect(await stateOf(page)).toBe('draft');
    // the interpreter may send it, never sign it off
    expect(await page.locator('[data-test="review-go-out_for_review"]').count()).toBe(1);
    expect(await page.locator('[data-test="review-go-signed_off"]').count()).toBe(0);
    await b.shot('review-01-draft');

    await take(page, 'out_for_review', 'All four cycles traced and pinned; please look at the cycle 2 margins.');
    await b.shot('review-02-sent');

    // From now on this page keeps the state it saw (as an open tab does between refreshes)
    // until the server refuses one of its saves.
    let refused = false;
    page.on('response', (r) => {
      if (r.request().method() === 'PUT' && /\/api\/buildups\/\d+$/.test(r.url()) && r.status() === 409) refused = true;
    });
    await page.route(/\/api\/buildups\/\d+\/review$/, (route) => (route.request().method() === 'GET' && !refused ? route.abort() : route.continue()));

    // The reviewer signs it off in a browser of their own.
    b2 = await openBrowser(t.running.url);
    const rp = b2.page;
    await signIn(rp, 'reviewer@tessel.example');
    await openKnoll(rp);
    expect(await stateOf(rp)).toBe('out_for_review');
    await take(rp, 'signed_off', 'Margins agree with the TB-14 tie. Signed off.');
    const banner = rp.locator('[data-test="review-signed-banner"]');
    await banner.waitFor();
    expect(await banner.textContent()).toMatch(/Signed off · version 2 by Remy Dunlin on \d+ \w+ \d{4}/);
    await b2.shot('review-03-signed-off');

    // History, the older version on the canvas, the Readings of both versions side by side.
    await rp.locator('[data-test="review-open"]').click();
    const history = rp.locator('[data-test="review-history"] li');
    await expect.poll(() => history.count()).toBe(2);
    expect(await history.nth(0).textContent()).toContain('Remy Dunlin');
    expect(await history.nth(0).textContent()).toContain('Margins agree with the TB-14 tie.');
    expect(await history.nth(1).textContent()).toContain('Ivo Marlstone');
    const cmp = rp.locator('[data-test="review-compare"]');
    await cmp.waitFor();
    const cycleRow = cmp.locator('tr[data-key="c2.thickness"]'); // only version 2 has a second cycle
    await expect.poll(() => cycleRow.count()).toBe(1);
    expect(await cycleRow.locator('td').nth(0).textContent()).toBe('—');
    expect(await cycleRow.locator('td').nth(1).textContent()).toMatch(/\d/);
    const heightCells = await cmp.locator('tr[data-key="height"] td').allTextContents();
    expect(heightCells[0]).toMatch(/\d/);
    expect(heightCells[1]).toMatch(/\d/);
    expect(heightCells[3]).toMatch(/%$/);
    await b2.shot('review-04-history-compare');
    await rp.locator('[data-test="review-view-1"]').click();
    await rp.locator('[data-test="review-versions"] li[data-version="1"]').getByText('Back to current').waitFor();
    await rp.locator('.n-drawer .n-base-close').click();
    await rp.locator('[data-test="review-viewing"]').waitFor();
    expect(await rp.locator('[data-test="review-viewing"]').textContent()).toMatch(/Version 1 · saved by Ivo Marlstone/);
    await b2.shot('review-05-older-version');
    await rp.locator('[data-test="review-back"]').click();
    await banner.waitFor();

    // The interpreter's page still shows Out for review: its next edit goes to the server and is refused.
    expect(await stateOf(page)).toBe('out_for_review');
    await page.locator('[data-test="ledger-drowning-switch"]').click();
    const refusal = page.locator('[data-test="review-save-refused"]');
    await refusal.waitFor({ timeout: 15_000 });
    const text = (await refusal.textContent()) ?? '';
    expect(text).toContain('Your last change was not saved');
    expect(text).toContain('"Kestrel Knoll" is signed off (version 2 by Remy Dunlin');
    expect(text).toMatch(/reviewer or an admin of the project reopens it/);
    await expect.poll(() => stateOf(page)).toBe('signed_off');
    expect(await page.locator('[data-test="review-signed-banner"]').textContent()).toContain('version 2 by Remy Dunlin');
    // the canvas is read-only now: the Ledger offers no new cycle
    expect(await page.locator('[data-test="ledger-cycle-add"]').count()).toBe(0);
    await b.shot('review-06-edit-refused');
    // the refused change is put aside: the canvas shows the signed-off copy again
    expect(await page.locator('[data-test="ledger-drowning-switch"]').getAttribute('aria-checked')).toBe('true');
    await page.locator('[data-test="review-restore"]').click();
    await expect.poll(() => page.locator('[data-test="review-save-refused"]').count()).toBe(0);
    expect(await page.locator('[data-test="ledger-drowning-switch"]').getAttribute('aria-checked')).toBe('false');
    await b.shot('review-07-signed-off-copy');

    // nothing was written
    const saved = await request(t.app).get(`/api/buildups/${knoll}`).set(bearer(await t.token('interpreter')));
    expect(saved.body).toMatchObject({ version: 2, reviewState: 'signed_off' });
    expect(saved.body.geometry.topIsDrowningSurface).toBe(false);
  }, 180_000);
});
