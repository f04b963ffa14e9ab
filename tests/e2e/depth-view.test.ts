/**
 * The depth view and the canvas ergonomics in Chromium at 1440 × 900, on
 * line TB-14's "Marrow Bank" (the demo interpretation): switch to the depth
 * view (its job runs and reports progress), the same trace drawn where its
 * depth is and the cursor reading depth there, true scale (VE 1), back to
 * TWT; then the wide Readings showing the whole per-cycle table without
 * sideways scrolling. Screenshots 70-… in tests/e2e/screenshots/.
 *
 * Then the velocity model editor on the same line: the interpreter changes
 * the seafloor while the admin saves another model; the interpreter's save
 * meets it instead of overwriting it (the drawer keeps the typed value and
 * names who saved), loads theirs, changes it and saves; a model the admin
 * saves while the page is open reaches it (the server check disagrees, the
 * page reads the model again, says who changed it and is confirmed again).
 * Screenshots velocity-….
 */
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { marrowBank, screenOf, seedDemoLines, signIn } from '../helpers/e2e-demo';
import { createDepthViewMap } from '../../shared/depth-view/index';
import type { DepthViewState } from '../../shared/schemas/depth-view';

type Pt = [number, number];

let t: TestApp;
let b: Browser;
let tb14 = 0;
let bankId = 0;
let margin: Pt = [0, 0];
let token = '';

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const seeded = await seedDemoLines(t, { width: 1600, height: 500 });
  tb14 = seeded.tb14;
  token = seeded.token;
  ({ id: bankId, margin } = await marrowBank(t, token, tb14));
  b = await openBrowser(t.running.url);
}, 240_000);
afterAll(async () => {
  await b?.close();
  await t?.close();
});

const stage = (page: Page) => page.locator('[data-test="interpret-stage"]');
const readout = async (page: Page) => (await page.locator('[data-test="depth-readout"]').textContent()) ?? '';
/** "z 1,234 m depth" → 1234 */
const depthIn = (text: string) => Number((/z\s*([\d,.\s]+)\s*m depth/.exec(text)?.[1] ?? 'NaN').replace(/[,\s]/g, ''));

describe('depth view and canvas ergonomics', () => {
  it('TWT → depth (job with progress) → the same trace where its depth is → true scale → back; the wide Readings show the whole table', async () => {
    const page = b.page;
    await signIn(page, 'interpreter@tessel.example');
    await page.goto(`/sections/${tb14}/interpret?buildup=${bankId}`);
    await page.locator('[data-test="section-stage"] canvas').first().waitFor();
    await page.locator('[data-test="ledger-panel"]').waitFor();
    await page.waitForTimeout(800);
    await b.shot('70-depth-time-view');

    // the cursor over the right Margin pin in TWT: the readout gives TWT and depth
    const atTwt = await screenOf(page, margin);
    await page.mouse.move(atTwt[0], atTwt[1]);
    await expect.poll(() => readout(page)).toMatch(/ms TWT/);
    const zTwtView = depthIn(await readout(page));

    // switch to the depth view: the job is queued, progress shows, then the depth tiles
    await page.locator('[data-test="view-depth"]').click();
    await expect.poll(() => stage(page).getAttribute('data-depth'), { timeout: 60_000 }).toBe('on');
    const state: DepthViewState = (await request(t.app).get(`/api/sections/${tb14}/depth`).set(bearer(token))).body;
    expect(state.status).toBe('ready');
    const map = createDepthViewMap(state.ready!.basis, state.ready!.axis);
    await page.locator('[data-test="stage-fit"]').click();
    await page.waitForTimeout(900);
    await b.shot('71-depth-view');

    // the same Margin pin, drawn where its depth is: the readout there shows its depth, not TWT
    const atDepth = await screenOf(page, map.toView(margin));
    await page.mouse.move(atDepth[0], atDepth[1]);
    await expect.poll(() => readout(page)).toMatch(/m depth/);
    const text = await readout(page);
    expect(text).not.toMatch(/ms TWT/);
    const zEngine = map.converter.toDepth(margin)[1];
    const metresPerScreenPx = state.ready!.axis.dz / Number(await stage(page).getAttribute('data-view-scale'));
    expect(Math.abs(depthIn(text) - zEngine)).toBeLessThanOrEqual(Math.max(2, 1.5 * metresPerScreenPx));
    // the time view's readout at the pin said the same depth (within the conversion of the traced envelope)
    expect(Math.abs(zTwtView - zEngine)).toBeLessThanOrEqual(Math.max(2, 1.5 * metresPerScreenPx) + 0.02 * zEngine);

    // a click on the drawn pin selects the stored pin (input maps back to image pixels)
    await page.keyboard.press('v');
    await page.mouse.click(atDepth[0], atDepth[1]);
    await page.waitForTimeout(300);
    await b.shot('72-depth-view-pin-selected');

    // true scale: VE 1 in the depth view
    await page.locator('[data-test="ve-true-scale"]').click();
    await expect.poll(() => page.locator('[data-test="ve-readout"]').textContent()).toMatch(/VE ≈ 1\.0×/);
    await page.locator('[data-test="stage-fit"]').click();
    await page.waitForTimeout(900);
    await b.shot('73-depth-view-true-scale');

    // back to TWT with the D key: the zoom stays (another view of the same section is not refitted)
    const scaleInDepth = await stage(page).getAttribute('data-view-scale');
    await page.keyboard.press('d');
    await expect.poll(() => stage(page).getAttribute('data-depth')).toBe('off');
    expect(await stage(page).getAttribute('data-view-scale')).toBe(scaleInDepth);
    await page.locator('[data-test="ve-reset"]').click();
    await page.locator('[data-test="stage-fit"]').click();
    await page.waitForTimeout(600);

    // the wide Readings: the whole per-cycle table at 1440 × 900, no sideways scroll
    await page.locator('[data-test="readings-tab-numbers"]').click();
    const table = page.locator('[data-test="readings-cycle-table"]');
    await table.waitFor({ timeout: 30_000 });
    const overflow = () =>
      table.evaluate((el) => {
        let worst = 0;
        for (const n of [el, ...Array.from(el.querySelectorAll('*'))] as HTMLElement[]) {
          const s = getComputedStyle(n);
          if (/(auto|scroll|hidden)/.test(s.overflowX) && n.clientWidth > 0) worst = Math.max(worst, n.scrollWidth - n.clientWidth);
        }
        return worst;
      });
    expect(await overflow()).toBeGreaterThan(0); // the narrow pane does scroll the table sideways…
    await page.locator('[data-test="readings-widen"]').click();
    await page.waitForTimeout(500);
    expect(await overflow()).toBeLessThanOrEqual(1); // …the wide Readings show all of it
    await table.scrollIntoViewIfNeeded();
    await page.waitForTimeout(200);
    await b.shot('74-readings-wide');
  }, 180_000);
});

describe('velocity model editor', () => {
  it('a save that meets the admin’s newer model keeps the typed value, names the admin, loads theirs on request, then saves', async () => {
    const page = b.page;
    const url = `/api/sections/${tb14}/velocity`;
    const admin = bearer(await t.token('admin'));
    const adminName: string = (await request(t.app).get('/api/auth/me').set(admin)).body.user.name;
    await page.goto(`/sections/${tb14}/interpret`); // still signed in as the interpreter
    await page.locator('[data-test="section-stage"] canvas').first().waitFor();
    await page.locator('[data-test="interpret-velocity"]').click();
    const seafloor = page.locator('[data-test="velocity-input-seafloor"]');
    await seafloor.waitFor();
    const opened = (await request(t.app).get(url).set(bearer(token))).body;
    expect(opened.velocity.kind).toBe('buildup');
    const startMs: number = opened.velocity.water.seafloorMs;
    expect(Number(await seafloor.inputValue())).toBe(startMs);

    // The interpreter types a seafloor 20 ms deeper …
    await seafloor.fill(String(startMs + 20));
    await seafloor.press('Tab');
    // … while the admin saves one 40 ms deeper from the same stored model.
    const theirs = { ...opened.velocity, water: { ...opened.velocity.water, seafloorMs: startMs + 40 } };
    const saved = await request(t.app).put(url).set(admin).send({ velocity: theirs, baseUpdatedAt: opened.updatedAt });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);

    await page.locator('[data-test="velocity-save"]').click();
    const alert = page.locator('[data-test="velocity-conflict"]');
    await alert.waitFor();
    expect(await alert.textContent()).toContain(adminName);
    expect(Number(await seafloor.inputValue())).toBe(startMs + 20); // the typed value stays
    expect((await request(t.app).get(url).set(bearer(token))).body.velocity.water.seafloorMs).toBe(startMs + 40); // nothing overwritten
    await page.waitForTimeout(300);
    await b.shot('velocity-01-conflict');

    await page.locator('[data-test="velocity-conflict-theirs"]').click();
    await expect.poll(async () => Number(await seafloor.inputValue())).toBe(startMs + 40);
    expect(await alert.count()).toBe(0);
    await seafloor.fill(String(startMs + 60));
    await seafloor.press('Tab');
    await page.locator('[data-test="velocity-save"]').click();
    await expect.poll(async () => (await request(t.app).get(url).set(bearer(token))).body.velocity.water.seafloorMs).toBe(startMs + 60);
    await expect.poll(() => page.locator('[data-test="velocity-editor"]').count()).toBe(0); // the drawer closed
    await b.shot('velocity-02-saved');
  });

  it('a model saved elsewhere reaches the open page: the server check disagrees, the page reads the model again, says who changed it and is confirmed again', async () => {
    const page = b.page;
    const url = `/api/sections/${tb14}/velocity`;
    const admin = bearer(await t.token('admin'));
    const adminName: string = (await request(t.app).get('/api/auth/me').set(admin)).body.user.name;
    const serverState = () => page.locator('[data-test="readings-server-state"]').getAttribute('data-state');
    await page.locator('[data-test="readings-tab-numbers"]').click();
    await expect.poll(serverState, { timeout: 20_000 }).toBe('confirmed');
    const height = async () => (await page.locator('[data-test="readings-panel"]').textContent()) ?? '';
    const before = await height();

    const now = (await request(t.app).get(url).set(bearer(token))).body;
    const faster = { ...now.velocity, carbonate: { v: 5200 } }; // a faster buildup: thicker cycles in depth
    expect((await request(t.app).put(url).set(admin).send({ velocity: faster, baseUpdatedAt: now.updatedAt })).status).toBe(200);

    // an edit and its save: the server measures with the new model, the page still with the old one
    const age = page.locator('[data-test="ledger-cycle-age-input"]').first();
    await age.fill('16.2');
    await age.press('Tab');
    await expect.poll(() => page.locator('.n-message').allTextContents(), { timeout: 30_000 }).toContainEqual(expect.stringContaining(`${adminName} changed the velocity model`));
    await expect.poll(serverState, { timeout: 30_000 }).toBe('confirmed');
    expect(await page.locator('[data-test="interpret-velocity"]').textContent()).toMatch(/5200/);
    expect(await height()).not.toBe(before);
    await b.shot('velocity-03-changed-elsewhere');
  });
});
