/**
 * Note pins end to end in Chromium: on line TB-14 the interpreter's traced
 * "Marrow Bank" is open on the canvas; the reviewer (who cannot change
 * geometry) places a Note pin on its right Margin pin, mentions the
 * interpreter with the @ list and sends; the interpreter opens the
 * Discussion panel, finds the thread under "Mentioning me", sees the pin
 * highlighted and replies with a link and some markup (shown as text).
 * Screenshots in tests/e2e/screenshots/ (70-… onwards).
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { marrowBank, screenOf, seedDemoLines, signIn } from '../helpers/e2e-demo';

type Pt = [number, number];

let t: TestApp;
let b: Browser;
let b2: Browser | null = null;
let tb14 = 0;
let buildupId = 0;
let margin: Pt = [0, 0];
let interpreter = { id: 0, name: '' };

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const { token, tb14: line } = await seedDemoLines(t, { width: 2400, height: 750 });
  tb14 = line;
  ({ id: buildupId, margin } = await marrowBank(t, token, tb14));
  const me = await request(t.app).get('/api/auth/me').set(bearer(token));
  interpreter = { id: me.body.id ?? me.body.user?.id, name: me.body.name ?? me.body.user?.name };
  b = await openBrowser(t.running.url);
});
afterAll(async () => {
  await b2?.close();
  await b?.close();
  await t?.close();
});

async function openCanvas(page: Page, query = ''): Promise<void> {
  await page.goto(`/sections/${tb14}/interpret${query}`);
  await page.locator('[data-test="section-stage"] canvas').first().waitFor();
  await expect.poll(() => page.locator('[data-test="interpret-title"]').textContent()).toMatch(/TB-14/);
}

describe('Note pins and the Discussion panel', () => {
  it('a reviewer pins a note on a Margin pin and mentions the interpreter; the interpreter finds it and replies', async () => {
    const { page } = b;
    await signIn(page, 'reviewer@tessel.example');
    await openCanvas(page);
    await expect.poll(() => page.locator('[data-test="interpret-readonly"]').count()).toBe(1); // a reviewer cannot edit geometry
    await page.waitForTimeout(500);

    // Place a Note pin with K and click the right Margin pin of the youngest cycle.
    await page.keyboard.press('k');
    await page.locator('[data-test="note-placing"]').waitFor();
    const at = await screenOf(page, margin);
    await page.mouse.click(at[0] + 2, at[1] + 1);
    await page.locator('[data-test="note-new"]').waitFor();
    await expect.poll(() => page.locator('[data-test="note-new-anchor"]').textContent()).toMatch(/right Margin pin of cycle \d+ · Marrow Bank/);

    // Type with @ and pick the interpreter from the list.
    const input = page.locator('[data-test="note-new"] textarea');
    await input.click();
    await input.pressSequentially('Is this margin placed on the last clear offlap break? @');
    const first = interpreter.name.split(' ')[0];
    await input.pressSequentially(first.slice(0, 3));
    const option = page.locator('.n-base-select-option', { hasText: interpreter.name });
    await option.first().waitFor();
    await b.shot('70-note-mention-list');
    await option.first().click();
    await expect.poll(() => input.inputValue()).toContain(`@${interpreter.name}`);
    await page.locator('[data-test="note-new"] [data-test="note-send"]').click();
    await page.locator('[data-test="note-thread"]').waitFor();
    await expect.poll(() => page.locator('[data-test="discussion-count"]').textContent(), { timeout: 10_000 }).toBe('1');
    await page.waitForTimeout(300);
    await b.shot('71-note-pinned-by-reviewer');

    // The server holds an object anchor on that Margin pin with the mention.
    const threads = await request(t.app).get(`/api/sections/${tb14}/threads`).set(bearer(await t.token('admin')));
    expect(threads.body).toHaveLength(1);
    const th = threads.body[0];
    expect(th.anchor).toMatchObject({ kind: 'object', buildupId, object: 'marginRight' });
    expect(th.at).toEqual(margin);
    expect(th.messages[0].mentions.map((m: { id: number }) => m.id)).toEqual([interpreter.id]);

    // The interpreter opens the Discussion panel and finds it under "Mentioning me".
    b2 = await openBrowser(t.running.url);
    const p2 = b2.page;
    await signIn(p2, 'interpreter@tessel.example');
    await openCanvas(p2);
    await p2.locator('[data-test="discussion-tab"]').click();
    await p2.locator('[data-test="note-filter-mentions"]').click();
    await p2.locator('[data-test="note-row-1"]').click();
    await p2.locator('[data-test="note-thread"]').waitFor();
    await expect.poll(() => new URL(p2.url()).searchParams.get('thread')).toBe(String(th.id));
    // chosen: the stage is centred on the pin
    const box = (await p2.locator('[data-test="section-stage"]').boundingBox())!;
    const pinOnScreen = await screenOf(p2, margin);
    expect(Math.abs(pinOnScreen[0] - (box.x + box.width / 2))).toBeLessThan(3);
    expect(Math.abs(pinOnScreen[1] - (box.y + box.height / 2))).toBeLessThan(3);
    await expect.poll(() => p2.locator('[data-test="note-message-text"]').first().textContent()).toContain(`@${interpreter.name}`);

    const reply = p2.locator('[data-test="note-thread"] > [data-test="note-composer"] textarea');
    await reply.click();
    await reply.fill('Yes, it sits on the break; the pick follows https://tessel.example/tb-14/notes.\n<script>alert(1)</script><img src=x onerror="alert(2)">');
    await p2.locator('[data-test="note-thread"] > [data-test="note-composer"] [data-test="note-send"]').click();
    await expect.poll(() => p2.locator('[data-test="note-message"]').count(), { timeout: 10_000 }).toBe(2);
    const second = p2.locator('[data-test="note-message-text"]').nth(1);
    await expect.poll(() => second.textContent(), { timeout: 10_000 }).toContain('<script>alert(1)</script><img src=x onerror="alert(2)">');
    expect(await second.locator('script, img').count()).toBe(0);
    const link = second.locator('a');
    expect(await link.getAttribute('href')).toBe('https://tessel.example/tb-14/notes');
    expect(await link.getAttribute('rel')).toBe('noopener noreferrer');
    expect(await link.getAttribute('target')).toBe('_blank');
    await p2.waitForTimeout(300);
    await b2.shot('72-note-reply-by-interpreter');

    // The reviewer's link opens the thread straight away.
    await openCanvas(page, `?thread=${th.id}`);
    await page.locator('[data-test="note-thread"]').waitFor();
    await expect.poll(() => page.locator('[data-test="note-message"]').count(), { timeout: 10_000 }).toBe(2);

    // A second pin close by: fitted to the window the two merge into one mark with the count.
    const near = await request(t.app)
      .post(`/api/sections/${tb14}/threads`)
      .set(bearer(await t.token('curator')))
      .send({ anchor: { kind: 'point', at: [margin[0] + 12, margin[1] - 8] }, body: 'A second look at the same corner.' });
    expect(near.status).toBe(201);
    await openCanvas(page);
    await page.locator('[data-test="discussion-tab"]').click();
    await expect.poll(() => page.locator('[data-test="discussion-count"]').textContent(), { timeout: 10_000 }).toBe('2');
    await page.locator('button', { hasText: 'Fit' }).first().click();
    await page.waitForTimeout(500);
    await b.shot('73-note-pins-clustered');
  });
});
