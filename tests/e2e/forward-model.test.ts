/**
 * The growth forward model in the browser, on the demo buildup Kestrel Knoll
 * (traced on TB-11 through the API from the generator's true geometry): the
 * interpreter opens the Model drawer, sees a refusal naming its field, runs
 * the tropical reef preset (progress, then the modelled surfaces dashed on
 * the section and the side-by-side Readings), starts a long run and cancels
 * it while the page stays responsive, finds the drowning threshold and sees
 * the sweep plot, saves the run, reloads and finds it again.
 * Screenshots in tests/e2e/screenshots/model-*.
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { kestrelKnollFixture, screenOf, seedDemoLines, signIn } from '../helpers/e2e-demo';

type Pt = [number, number];
const W = 2400;
const H = 750;

const fixture = kestrelKnollFixture();
const sc = (p: Pt): Pt => [(p[0] * W) / fixture.width, (p[1] * H) / fixture.height];
const truth = fixture.pixelGeometry.buildups[0];
const geometry = {
  base: truth.base.map(sc),
  cycles: truth.cycles.map((c, i) => ({
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

let t: TestApp;
let b: Browser;
let tb11 = 0;
let knoll = 0;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const { token, tb11: line } = await seedDemoLines(t, { width: W, height: H });
  tb11 = line;
  const c = await request(t.app).post(`/api/sections/${tb11}/buildups`).set(bearer(token)).send({ name: 'Kestrel Knoll' });
  knoll = c.body.id;
  const s = await request(t.app).put(`/api/buildups/${knoll}`).set(bearer(token)).send({ version: c.body.version, geometry });
  expect(s.status, JSON.stringify(s.body)).toBe(200);
  b = await openBrowser(t.running.url);
}, 240_000);
afterAll(async () => {
  await b?.close();
  await t?.close();
});

async function openModel(page: Page): Promise<void> {
  await page.goto(`/sections/${tb11}/interpret?buildup=${knoll}`);
  await expect.poll(() => page.locator('[data-test="ledger-buildup-row"]').count(), { timeout: 30_000 }).toBeGreaterThan(0);
  await page.locator('[data-test="model-open"]').click();
  await page.locator('[data-test="model-run"]').waitFor();
}

const tab = (page: Page, name: string) => page.locator('.n-tabs-tab', { hasText: name }).first().click();

describe('forward model on the interpret page', () => {
  it('run a preset on Kestrel Knoll, see the overlay and the Readings side by side, cancel a long run, find the drowning threshold, save the run and find it after a reload', async () => {
    const page = b.page;
    await signIn(page, 'interpreter@tessel.example');
    await openModel(page);

    // a bad factor is refused with its field named, before anything runs
    const factors = page.locator('[data-test="model-factors"] input');
    await factors.fill('1, 1.4, 0.25, 0.12');
    await expect.poll(() => page.locator('[data-test="model-err-time"]').textContent()).toContain('cycles.productionFactors[1]: must be ≤ 1');
    await page.locator('[data-test="model-run"]').click();
    expect(await page.locator('[data-test="model-error"]').textContent()).toContain('cycles.productionFactors[1]');
    await factors.fill('1, 0.5, 0.25, 0.12');
    await expect.poll(() => page.locator('[data-test="model-err-time"]').count()).toBe(0);

    // run the tropical reef preset
    await page.locator('[data-test="model-run"]').click();
    await page.locator('[data-test="model-status"]').waitFor({ timeout: 30_000 });
    expect(await page.locator('[data-test="model-drowned"]').textContent()).toMatch(/drowned|kept up/);
    const lines = Number(await page.locator('[data-test="model-overlay-count"]').textContent());
    expect(lines).toBeGreaterThanOrEqual(5); // the base and four cycle tops at least
    await b.shot('model-01-run-overlay');
    // closer: the dashed modelled surfaces over the traced ones
    const crest = await screenOf(page, sc(truth.cycles[0].top[Math.floor(truth.cycles[0].top.length / 2)]));
    await page.mouse.move(crest[0], crest[1]);
    for (let i = 0; i < 6; i++) await page.mouse.wheel(0, -240);
    await page.waitForTimeout(400);
    await b.shot('model-01b-overlay-close');

    // the overlay switch hides and shows the modelled surfaces
    await page.locator('[data-test="model-overlay-toggle"]').click();
    await expect.poll(() => page.locator('[data-test="model-overlay-count"]').textContent()).toBe('0');
    await page.locator('[data-test="model-overlay-toggle"]').click();
    await expect.poll(async () => Number(await page.locator('[data-test="model-overlay-count"]').textContent())).toBe(lines);

    // interpreted and modelled Readings side by side
    await tab(page, 'Readings');
    const table = page.locator('[data-test="model-side-by-side"]');
    await table.waitFor();
    const row = (key: string) => table.locator(`tr[data-key="${key}"] td`);
    await expect.poll(() => row('height').nth(0).textContent()).not.toBe('—');
    expect(await row('height').nth(1).textContent()).not.toBe('—');
    expect(await row('height').nth(2).textContent()).toMatch(/^[+−±]\d/);
    expect(await table.locator('tr[data-key="c4.topWidth"]').count()).toBe(1);
    expect(await row('class').nth(0).textContent()).toBeTruthy();
    await b.shot('model-02-side-by-side');

    // a long run shows its progress, the page keeps answering, Cancel stops it
    await tab(page, 'Parameters');
    const setNumber = async (test: string, v: string) => {
      await page.locator(`[data-test="${test}"] input`).fill(v);
      await page.locator(`[data-test="${test}"] input`).blur();
    };
    await setNumber('model-step', '5');
    await setNumber('model-columns', '2000'); // 80,000 steps × 2,000 columns: seconds of work
    await page.locator('[data-test="model-run"]').click();
    await page.locator('[data-test="model-progress"]').waitFor();
    // the main thread answers while the run goes on in the worker
    expect(await page.evaluate(() => new Promise<number>((res) => setTimeout(() => res(1), 0)))).toBe(1);
    expect(await page.locator('[data-test="model-progress"]').count()).toBe(1);
    await expect.poll(async () => Number((await page.locator('[data-test="model-progress"] span').first().textContent())!.match(/(\d+) %/)![1])).toBeGreaterThan(0);
    await b.shot('model-03-progress');
    await page.locator('[data-test="model-cancel"]').click();
    await expect.poll(() => page.locator('[data-test="model-progress"]').count()).toBe(0);
    expect(await page.locator('[data-test="model-error"]').count()).toBe(0);
    await setNumber('model-step', '100');
    await setNumber('model-columns', '201');

    // the drowning threshold and its sweep plot
    await tab(page, 'Threshold');
    await page.locator('[data-test="model-threshold-run"]').click();
    await page.locator('[data-test="model-sweep-plot"]').waitFor({ timeout: 60_000 });
    expect(await page.locator('[data-test="model-threshold-value"]').textContent()).toMatch(/Drowns below a production factor of \d\.\d+/);
    await b.shot('model-04-threshold');

    // save the run, reload, find it
    await tab(page, 'Saved runs');
    await page.locator('[data-test="model-run-name"] input').fill('Reef preset, four falling factors');
    await page.locator('[data-test="model-save"]').click();
    await expect.poll(() => page.locator('[data-test="model-saved-runs"] li').count()).toBe(1);
    await page.reload();
    await expect.poll(() => page.locator('[data-test="ledger-buildup-row"]').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    await page.keyboard.press('m'); // the Model key opens the drawer
    await page.locator('[data-test="model-run"]').waitFor();
    await tab(page, 'Saved runs');
    const saved = page.locator('[data-test="model-saved-runs"] li');
    await expect.poll(() => saved.count()).toBe(1);
    expect(await saved.first().textContent()).toContain('Reef preset, four falling factors');
    expect(await saved.first().textContent()).toMatch(/threshold \d\.\d+/);
    await saved.first().locator('[data-test="model-open-run"]').click();
    await page.locator('[data-test="model-status"]').waitFor({ timeout: 30_000 });
    await b.shot('model-05-saved-reopened');
  }, 240_000);
});
