/**
 * The whole review round in Chromium, two people in two browsers, on line
 * TB-14's "Marrow Bank" (the demo interpretation, traced by the interpreter):
 * the reviewer pins a note on its right Margin pin and mentions the
 * interpreter; the interpreter sees the bell count and the admin reads the
 * mention mail in the Outbox; the interpreter follows the bell to the thread,
 * answers and sends the buildup for review; the reviewer signs it off; the
 * interpreter's open page makes its next edit and is refused with the clear
 * signed-off message, and nothing is saved. Screenshots 90-… in
 * tests/e2e/screenshots/.
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mailSettled } from '../../server/services/notify.service';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { marrowBank, screenOf, seedDemoLines, signIn, signOut } from '../helpers/e2e-demo';

type Pt = [number, number];

let t: TestApp;
let rev: Browser; // the reviewer (and, for the Outbox, the admin)
let int: Browser | null = null; // the interpreter
let tb14 = 0;
let bankId = 0;
let margin: Pt = [0, 0];

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const { token, tb14: line } = await seedDemoLines(t, { width: 2400, height: 750 });
  tb14 = line;
  ({ id: bankId, margin } = await marrowBank(t, token, tb14));
  rev = await openBrowser(t.running.url);
}, 240_000);
afterAll(async () => {
  await int?.close();
  await rev?.close();
  await t?.close();
});

async function openBank(page: Page, query = `?buildup=${bankId}`): Promise<void> {
  await page.goto(`/sections/${tb14}/interpret${query}`);
  await page.locator('[data-test="section-stage"] canvas').first().waitFor();
  await page.locator('[data-test="review-bar"]').waitFor();
}
const stateOf = (page: Page) => page.locator('[data-test="review-bar"] [data-test="review-state"]').getAttribute('data-state');
async function take(page: Page, to: string, text: string): Promise<void> {
  await page.locator(`[data-test="review-go-${to}"]`).click();
  await page.locator('[data-test="review-dialog"] textarea').fill(text);
  await page.locator('[data-test="review-send"]').click();
  await expect.poll(() => stateOf(page)).toBe(to);
}
async function outboxTo(email: string) {
  await mailSettled();
  const admin = await t.token('admin');
  const list = await request(t.app).get('/api/admin/mail?pageSize=100').set(bearer(admin));
  return (list.body.items as { id: number; subject: string; recipients: string[] }[]).filter((m) => m.recipients.includes(email));
}

describe('review journey', () => {
  it('note with a mention → bell and mail → answer → sent for review → signed off → next edit refused', async () => {
    // 1. The reviewer pins a note on the right Margin pin and mentions the interpreter.
    const rp = rev.page;
    await signIn(rp, 'reviewer@tessel.example');
    await openBank(rp);
    await rp.waitForTimeout(500);
    await rp.keyboard.press('k');
    await rp.locator('[data-test="note-placing"]').waitFor();
    const at = await screenOf(rp, margin);
    await rp.mouse.click(at[0] + 2, at[1] + 1);
    await rp.locator('[data-test="note-new"]').waitFor();
    await expect.poll(() => rp.locator('[data-test="note-new-anchor"]').textContent()).toMatch(/right Margin pin of cycle \d+ · Marrow Bank/);
    const input = rp.locator('[data-test="note-new"] textarea');
    await input.click();
    await input.pressSequentially('Is this margin on the last clear offlap break? @Ivo');
    const option = rp.locator('.n-base-select-option', { hasText: 'Ivo Marlstone' });
    await option.first().waitFor();
    await option.first().click();
    await rp.locator('[data-test="note-new"] [data-test="note-send"]').click();
    await rp.locator('[data-test="note-thread"]').waitFor();
    await rp.waitForTimeout(300);
    await rev.shot('90-journey-note-pinned');
    const threads = await request(t.app).get(`/api/sections/${tb14}/threads`).set(bearer(await t.token('reviewer')));
    const thread = threads.body[0];
    expect(thread.anchor).toMatchObject({ kind: 'object', buildupId: bankId, object: 'marginRight' });

    // 2. The interpreter signs in: the bell counts the mention.
    int = await openBrowser(t.running.url);
    const ip = int.page;
    await signIn(ip, 'interpreter@tessel.example');
    await expect.poll(() => ip.locator('[data-test="bell-count"]').textContent(), { timeout: 30_000 }).toBe('1');
    await ip.click('[data-test="bell"]');
    const item = ip.locator('[data-test="bell-item"]').first();
    await item.waitFor();
    expect(await item.textContent()).toMatch(/Remy Dunlin mentioned you in Note 1 on/);
    await ip.waitForTimeout(400);
    await int.shot('91-journey-bell');

    // 3. The mention mail, read in the Outbox (signed in as the admin).
    await signOut(rp);
    await signIn(rp, 'admin@tessel.example');
    await rp.goto('/admin/outbox');
    await rp.locator('[data-test="outbox-row"]', { hasText: 'mentioned you in Note 1' }).first().click();
    await expect.poll(() => rp.locator('[data-test="outbox-to"]').textContent()).toBe('interpreter@tessel.example');
    expect(await rp.locator('[data-test="outbox-text"]').textContent()).toContain('> Is this margin on the last clear offlap break? @Ivo Marlstone');
    const links = await rp.locator('[data-test="outbox-link"]').evaluateAll((as) => as.map((a) => a.getAttribute('href')));
    expect(links).toContain(`${t.running.url}/sections/${tb14}/interpret?thread=${thread.id}`);
    await rev.shot('92-journey-outbox-mention');

    // 4. The interpreter follows the bell to the thread and answers.
    await item.click();
    await ip.waitForURL(new RegExp(`/sections/${tb14}/interpret\\?thread=${thread.id}`));
    await ip.locator('[data-test="note-thread"]').waitFor();
    await expect.poll(() => ip.locator('[data-test="bell-count"]').count()).toBe(0); // read now
    const reply = ip.locator('[data-test="note-thread"] > [data-test="note-composer"] textarea');
    await reply.click();
    await reply.fill('Yes: it sits on the break; the toe of the slope is two traces further out.');
    await ip.locator('[data-test="note-thread"] > [data-test="note-composer"] [data-test="note-send"]').click();
    await expect.poll(() => ip.locator('[data-test="note-message"]').count(), { timeout: 10_000 }).toBe(2);
    await int.shot('93-journey-answer');

    // 5. … and sends Marrow Bank for review.
    await openBank(ip);
    expect(await stateOf(ip)).toBe('draft');
    await take(ip, 'out_for_review', 'Margin checked against the note; ready for a look.');
    await int.shot('94-journey-sent');
    // from here on the interpreter's tab keeps the state it saw, as an open tab does, until a save is refused
    let refused = false;
    ip.on('response', (r) => {
      if (r.request().method() === 'PUT' && /\/api\/buildups\/\d+$/.test(r.url()) && r.status() === 409) refused = true;
    });
    await ip.route(/\/api\/buildups\/\d+\/review$/, (route) => (route.request().method() === 'GET' && !refused ? route.abort() : route.continue()));

    // 6. The reviewer (a reviewer of the project) hears of the request and of the answer, and signs it off.
    await signOut(rp);
    await signIn(rp, 'reviewer@tessel.example');
    await expect.poll(() => rp.locator('[data-test="bell-count"]').textContent(), { timeout: 30_000 }).toBe('2');
    await rp.click('[data-test="bell"]');
    await expect.poll(() => rp.locator('[data-test="bell-item"]').first().textContent()).toMatch(/Marrow Bank \(Draft → Out for review/);
    await expect.poll(() => rp.locator('[data-test="bell-item"]').nth(1).textContent()).toMatch(/Ivo Marlstone replied in Note 1/);
    await rp.keyboard.press('Escape');
    await openBank(rp);
    expect(await stateOf(rp)).toBe('out_for_review');
    await take(rp, 'signed_off', 'Margins agree with the note. Signed off.');
    await rp.locator('[data-test="review-signed-banner"]').waitFor();
    await rev.shot('95-journey-signed-off');
    expect((await outboxTo('interpreter@tessel.example')).map((m) => m.subject)).toEqual(
      expect.arrayContaining([expect.stringMatching(/^Remy Dunlin .*Marrow Bank \(Out for review → Signed off/)]),
    );

    // 7. The interpreter's next edit is refused with a clear message; nothing is saved.
    const before = (await request(t.app).get(`/api/buildups/${bankId}`).set(bearer(await t.token('interpreter')))).body;
    expect(await stateOf(ip)).toBe('out_for_review');
    await ip.locator('[data-test="ledger-drowning-switch"]').click();
    const refusal = ip.locator('[data-test="review-save-refused"]');
    await refusal.waitFor({ timeout: 15_000 });
    const text = (await refusal.textContent()) ?? '';
    expect(text).toContain('Your last change was not saved');
    expect(text).toContain('"Marrow Bank" is signed off');
    await expect.poll(() => stateOf(ip)).toBe('signed_off');
    await ip.waitForTimeout(300);
    await int.shot('96-journey-edit-refused');
    const after = (await request(t.app).get(`/api/buildups/${bankId}`).set(bearer(await t.token('interpreter')))).body;
    expect(after).toMatchObject({ version: before.version, reviewState: 'signed_off' });
    expect(after.geometry.topIsDrowningSurface).toBe(before.geometry.topIsDrowningSurface);
  }, 240_000);
});
