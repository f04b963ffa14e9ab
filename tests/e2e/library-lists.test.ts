/**
 * The library's tag lists and shape Look-alikes in Chromium. The curator
 * opens the tag lists from the library's header, is told which field is wrong
 * in a bad value, adds "Ramp margin" to the settings, is told a value in use
 * cannot go, and removes the new one; an interpreter sees the lists read-only.
 * Shape Look-alikes of a demo analogue show each match's per-metric
 * differences, computed in the browser. Screenshots 79-84 in tests/e2e/screenshots/.
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ctx } from '../../server/context';
import { seedDemoAnalogues } from '../../server/db/seeders/analogues';
import type { AnalogueDetail, AnalogueSearchResponse, LookAlikesResponse } from '../../shared/schemas/analogues';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';

let t: TestApp;
let curatorBrowser: Browser;
let interpreterBrowser: Browser | null = null;
let curatorToken = '';

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  await seedDemoAnalogues(ctx().sequelize);
  curatorToken = await t.token('curator');
  curatorBrowser = await openBrowser(t.running.url);
});

afterAll(async () => {
  await interpreterBrowser?.close();
  await curatorBrowser?.close();
  await t?.close();
});

async function settingValues(): Promise<string[]> {
  const res = await request(t.app).get('/api/analogues/lists').set(bearer(curatorToken));
  expect(res.status).toBe(200);
  return (res.body.setting as { value: string }[]).map((i) => i.value);
}

describe('Tag lists and shape Look-alikes in the browser', () => {
  it('the curator adds a setting (after a bad value is named), cannot remove one in use, and removes the new one', async () => {
    const page = curatorBrowser.page;
    await signIn(page, 'curator@tessel.example');
    await page.goto('/library');
    await page.waitForSelector('[data-test="library-total"]');
    await curatorBrowser.shot('79-library-header-curator');
    await page.click('[data-test="library-lists"]');
    await page.waitForURL(/\/library\/lists$/);
    await page.waitForSelector('[data-test="list-setting"] [data-test^="list-item-setting-"]');
    // the usage counts come in
    await expect.poll(() => page.textContent('[data-test="list-uses-setting-pinnacle"]')).toMatch(/\d+ in use/);
    const pinnacleUses = Number((await page.textContent('[data-test="list-uses-setting-pinnacle"]'))!.match(/\d+/)![0]);
    expect(pinnacleUses).toBeGreaterThan(0);

    // A value with capitals and a space: refused in the browser, naming the field.
    await page.fill('[data-test="list-label-setting"]', 'Ramp margin');
    expect(await page.inputValue('[data-test="list-value-setting"]')).toBe('ramp-margin'); // suggested from the label
    await page.fill('[data-test="list-value-setting"]', 'Ramp Margin');
    await page.click('[data-test="list-add-submit-setting"]');
    expect(await page.textContent('[data-test="list-value-error-setting"]')).toBe('value: must be lower-case letters, digits and hyphens');
    await curatorBrowser.shot('80-library-lists-bad-value');
    expect(await settingValues()).not.toContain('Ramp Margin');

    await page.fill('[data-test="list-value-setting"]', 'ramp-margin');
    await page.click('[data-test="list-add-submit-setting"]');
    await page.waitForSelector('[data-test="list-item-setting-ramp-margin"]');
    expect(await settingValues()).toContain('ramp-margin');
    expect(await page.textContent('[data-test="list-uses-setting-ramp-margin"]')).toContain('0 in use');

    // A value analogues carry: the page says why it stays, and nothing is removed.
    await page.click('[data-test="list-remove-setting-pinnacle"]');
    await page.waitForSelector('.n-dialog');
    expect(await page.textContent('.n-dialog')).toContain(`${pinnacleUses} analogues carry this setting`);
    await page.waitForTimeout(400); // the dialog's opening transition
    await curatorBrowser.shot('81-library-lists-in-use');
    expect(await settingValues()).toContain('pinnacle');
    // "Show them" opens the search of every analogue carrying it, whatever its status.
    await page.click('[data-test="list-in-use-show"]');
    await page.waitForURL(/\/library\?.*setting=pinnacle/);
    expect(new URL(page.url()).searchParams.get('status')).toBe('any');
    await expect.poll(() => page.textContent('[data-test="library-total"]')).toBe(`${pinnacleUses} analogues`);
    await page.goBack();
    await page.waitForSelector('[data-test="list-item-setting-ramp-margin"]');

    // The new, unused value goes after a confirmation.
    await page.click('[data-test="list-remove-setting-ramp-margin"]');
    await page.waitForSelector('[data-test="confirm-ok"]');
    expect(await page.textContent('.n-dialog')).toContain('No analogue carries it');
    await page.click('[data-test="confirm-ok"]');
    await page.waitForSelector('[data-test="list-item-setting-ramp-margin"]', { state: 'detached' });
    expect(await settingValues()).not.toContain('ramp-margin');
    await page.waitForSelector('.n-dialog', { state: 'detached' });
    await curatorBrowser.shot('82-library-lists');
  });

  it('an interpreter reads the lists without controls to change them', async () => {
    interpreterBrowser = await openBrowser(t.running.url);
    const page = interpreterBrowser.page;
    await signIn(page, 'interpreter@tessel.example');
    await page.goto('/library');
    await page.waitForSelector('[data-test="library-total"]');
    expect(await page.locator('[data-test="library-lists"]').count()).toBe(0);
    await page.goto('/library/lists');
    await page.waitForSelector('[data-test="lists-read-only"]');
    await page.waitForSelector('[data-test="list-item-setting-pinnacle"]');
    expect(await page.locator('[data-test^="list-remove-"]').count()).toBe(0);
    expect(await page.locator('[data-test^="list-add-"]').count()).toBe(0);
    await interpreterBrowser.shot('83-library-lists-read-only');
  });

  it('shape Look-alikes of an analogue list each match’s per-metric differences', async () => {
    // A demo analogue with a profile and a height.
    const found = await request(t.app).get('/api/analogues').query({ pageSize: '50', facets: '0' }).set(bearer(curatorToken));
    expect(found.status).toBe(200);
    let from: AnalogueDetail | null = null;
    for (const a of (found.body as AnalogueSearchResponse).items) {
      const d = (await request(t.app).get(`/api/analogues/${a.id}`).set(bearer(curatorToken))).body as AnalogueDetail;
      if (d.shape && d.metrics.heightM && d.metrics.baseWidthM) {
        from = d;
        break;
      }
    }
    expect(from).not.toBeNull();
    // The server's answer for the same request, and the library's SD of the height (metrics mode).
    const shape = (await request(t.app).post('/api/analogues/look-alikes').set(bearer(curatorToken)).send({ from: { analogueId: from!.id }, mode: 'shape', k: 5 }))
      .body as LookAlikesResponse;
    expect(shape.matches[0].differences).toEqual([]); // the API leaves them to the browser in this mode
    const sds = (await request(t.app).post('/api/analogues/look-alikes').set(bearer(curatorToken)).send({ from: { analogueId: from!.id }, mode: 'metrics', k: 1, metrics: [{ key: 'heightM' }] }))
      .body as LookAlikesResponse;
    const sdHeight = sds.metrics[0].sd;
    expect(sdHeight).toBeGreaterThan(0);

    const page = interpreterBrowser!.page;
    await page.goto(`/library/look-alikes?analogue=${from!.id}&mode=shape&k=5`);
    const matches = page.locator('[data-test="look-alikes-matches"] > li');
    await expect.poll(() => matches.count(), { timeout: 60_000 }).toBe(5);
    const first = matches.first();
    await first.locator('[data-test="look-alike-differences"]').waitFor();
    const heightRow = first.locator('tbody tr', { hasText: 'Height (m)' });
    expect(await heightRow.count()).toBe(1);
    // the SD column fills once the library's spread has arrived
    await expect.poll(async () => (await heightRow.locator('td').nth(4).textContent())?.trim()).toMatch(/\d/);
    const cells = (await heightRow.locator('td').allTextContents()).map((c) => Number(c.replace(/[^\d.eE+-]/g, '').replace(/^\+/, '')));
    const q = from!.metrics.heightM!;
    const m = shape.matches[0].analogue.metrics.heightM!;
    // shown to 3 significant figures
    expect(cells[1]).toBeCloseTo(q, -Math.floor(Math.log10(Math.abs(q))) + 2 - 1);
    expect(cells[2]).toBeCloseTo(m, -Math.floor(Math.log10(Math.abs(m))) + 2 - 1);
    const z = (Math.log10(m) - Math.log10(q)) / sdHeight;
    expect(Math.abs(cells[4] - z)).toBeLessThanOrEqual(Math.max(0.01, Math.abs(z) * 0.01));
    expect(await first.locator('svg polyline').count()).toBe(2);
    await interpreterBrowser!.shot('84-look-alikes-shape-differences');
  });
});
