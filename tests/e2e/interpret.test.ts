/**
 * The interpretation canvas, as a new interpreter meets it: open the demo
 * backstepping section TB-11 (Kestrel Knoll), create a buildup in the
 * Ledger, trace its base, two cycle tops, four Margin pins and two flanks
 * with the mouse, read the per-cycle numbers and the classification while
 * drawing, flag the drowning surface, undo and redo with the keyboard, find
 * everything saved after a reload; then a second browser (the admin) saves
 * the same buildup and the first gets a conflict instead of overwriting it.
 * Screenshots in tests/e2e/screenshots/ (30-… onwards).
 *
 * The clicks follow the section's true geometry (the generator's fixture at
 * 8000 × 2500 px, scaled to the seeded size), decimated to ~10 clicks per
 * line and placed through the stage's view transform, which the page
 * exposes as data attributes on [data-test="interpret-stage"].
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
const sx = W / fixture.width;
const sy = H / fixture.height;
const scalePt = (p: Pt): Pt => [p[0] * sx, p[1] * sy];
/** ~n evenly spaced vertices including both ends. */
function decimate(pts: Pt[], n: number): Pt[] {
  if (pts.length <= n) return pts.map(scalePt);
  const out: Pt[] = [];
  for (let i = 0; i < n; i++) out.push(scalePt(pts[Math.round((i * (pts.length - 1)) / (n - 1))]));
  return out;
}
const truth = fixture.pixelGeometry.buildups[0];

let t: TestApp;
let b: Browser;
let b2: Browser | null = null;
let tb11 = 0;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  ({ tb11 } = await seedDemoLines(t, { width: W, height: H }));
  b = await openBrowser(t.running.url);
});
afterAll(async () => {
  await b2?.close();
  await b?.close();
  await t?.close();
});

interface ViewAttrs {
  scale: number;
  x: number;
  y: number;
  stretch: number;
}
async function viewOf(page: Page): Promise<ViewAttrs> {
  const d = await page.locator('[data-test="interpret-stage"]').evaluate((el) => ({ ...(el as HTMLElement).dataset }));
  return { scale: Number(d.viewScale), x: Number(d.viewX), y: Number(d.viewY), stretch: Number(d.viewStretch) };
}

/** Image px → page px through the stage's current view. */
async function screenOf(page: Page, pts: Pt[]): Promise<Pt[]> {
  const v = await viewOf(page);
  const box = (await page.locator('[data-test="section-stage"]').boundingBox())!;
  return pts.map((p) => {
    const q: Pt = [box.x + p[0] * v.scale + v.x, box.y + p[1] * v.scale * v.stretch + v.y];
    // Keep clear of the overlays along the stage's edges (tool choices, readout, VE control).
    expect(q[0], `u ${p[0].toFixed(1)} on screen`).toBeGreaterThan(box.x + 120);
    expect(q[0]).toBeLessThan(box.x + box.width - 10);
    expect(q[1], `v ${p[1].toFixed(1)} on screen`).toBeGreaterThan(box.y + 50);
    expect(q[1]).toBeLessThan(box.y + box.height - 60);
    return q;
  });
}

/** Click the vertices of a polyline and double-click the last one. */
async function trace(page: Page, pts: Pt[]): Promise<void> {
  const s = await screenOf(page, pts);
  for (let i = 0; i < s.length - 1; i++) {
    await page.mouse.move(s[i][0], s[i][1]);
    await page.mouse.click(s[i][0], s[i][1]);
  }
  const last = s[s.length - 1];
  await page.mouse.move(last[0], last[1]);
  await page.mouse.dblclick(last[0], last[1]);
}

async function clickImage(page: Page, p: Pt): Promise<void> {
  const [q] = await screenOf(page, [p]);
  await page.mouse.move(q[0], q[1]);
  await page.mouse.click(q[0], q[1]);
}

const partsDone = (page: Page, row: number) =>
  page
    .locator('[data-test="ledger-cycle-row"]')
    .nth(row)
    .locator('[data-done="true"]')
    .evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.part));
const classOf = (page: Page) => page.locator('[data-test="readings-classification"]').getAttribute('data-class');
const saveState = (page: Page) => page.locator('[data-test="save-state"]').getAttribute('data-state');

describe('interpretation canvas', () => {
  it('traces Kestrel Knoll with mouse and keyboard, reads it live, saves, reloads, and meets a conflict', async () => {
    const { page } = b;
    await signIn(page, 'interpreter@tessel.example');

    // From the section page to the canvas.
    await page.goto(`/sections/${tb11}`);
    await page.locator('[data-test="section-interpret"]').click();
    await page.waitForURL(new RegExp(`/sections/${tb11}/interpret$`));
    await page.locator('[data-test="section-stage"] canvas').first().waitFor();
    await expect.poll(() => page.locator('[data-test="interpret-title"]').textContent()).toMatch(/TB-11/);
    await expect.poll(() => saveState(page)).toBe('saved');
    await expect.poll(() => page.locator('[data-test="interpret-velocity"]').textContent()).toMatch(/ranges/);

    // Zoom toward the knoll with the wheel so its lines are far apart on screen.
    const centre: Pt = [((truth.base[0][0] + truth.base[truth.base.length - 1][0]) / 2) * sx, 480 * (H / 750)];
    const [c] = await screenOf(page, [centre]);
    await page.mouse.move(c[0], c[1]);
    for (let i = 0; i < 6; i++) {
      // one wheel notch is one gentle step (×1.15, viewport.ts)
      await page.mouse.wheel(0, -100);
      await page.waitForTimeout(60);
    }
    await expect.poll(async () => (await viewOf(page)).scale, { timeout: 5000 }).toBeGreaterThan(0.7);
    await page.waitForTimeout(400); // let the eased zoom settle
    await b.shot('30-interpret-open');

    // Cursor readout: distance, TWT and depth.
    await page.mouse.move(c[0], c[1]);
    await expect.poll(() => page.locator('[data-test="readout-depth"]').textContent()).toMatch(/m depth/);
    expect(await page.locator('[data-test="readout-twt"]').textContent()).toMatch(/ms TWT/);
    expect(await page.locator('[data-test="ve-readout"]').textContent()).toMatch(/^VE ≈ [\d.]+×$/);

    // 1. A buildup in the Ledger.
    await page.locator('[data-test="ledger-buildup-create"]').click();
    await page.locator('[data-test="ledger-buildup-name-input"]').fill('Kestrel Knoll');
    await page.locator('[data-test="ledger-buildup-create-ok"]').click();
    await expect.poll(() => page.locator('[data-test="ledger-buildup-row"]').count()).toBe(1);

    // 2. Its base with the Trace tool.
    await page.locator('[data-test="tool-trace"]').click();
    await page.locator('[data-test="trace-base"]').click();
    await trace(page, decimate(truth.base, 12));
    await expect.poll(() => page.locator('[data-test="ledger-base-status"]').getAttribute('class')).toMatch(/\bok\b/);

    // 3. Cycle 1: top, two Margin pins, left flank.
    const cyc = truth.cycles;
    async function traceCycle(i: number, flank: 'flankLeft' | 'flankRight'): Promise<void> {
      await page.locator('[data-test="ledger-cycle-add"]').click();
      await expect.poll(() => page.locator('[data-test="ledger-cycle-row"]').count()).toBe(i + 1);
      await page.locator('[data-test="tool-trace"]').click();
      await page.locator('[data-test="trace-top"]').click();
      await trace(page, decimate(cyc[i].top, 11));
      // The Margin pin tool by its key (the stage has the focus after tracing).
      await page.keyboard.press('n');
      await expect.poll(() => page.locator('[data-test="interpret-stage"]').getAttribute('data-tool')).toBe('marginPin');
      await clickImage(page, scalePt(cyc[i].marginLeft));
      await clickImage(page, scalePt(cyc[i].marginRight));
      // The flank: Trace by key, target by digit (3 = left flank, 4 = right flank).
      await page.keyboard.press('l');
      await page.keyboard.press(flank === 'flankLeft' ? '3' : '4');
      await trace(page, decimate(cyc[i][flank]!, 8));
    }
    await traceCycle(0, 'flankLeft');
    await expect.poll(() => partsDone(page, 0)).toEqual(['top', 'marginLeft', 'marginRight', 'flankLeft']);
    await expect.poll(() => page.locator('[data-test="readings-cycle-table"] tbody tr').count()).toBe(1);
    await b.shot('31-cycle-1');

    // 4. Cycle 2: top, two Margin pins, right flank.
    await traceCycle(1, 'flankRight');
    await expect.poll(() => partsDone(page, 1)).toEqual(['top', 'marginLeft', 'marginRight', 'flankRight']);
    expect(await page.locator('[data-test="ledger-cycle-row"]').count()).toBe(2);

    // Readings while drawing: two cycles measured, backstepping with its reasons.
    await expect.poll(() => page.locator('[data-test="readings-cycle-table"] tbody tr').count()).toBe(2);
    // The generator built Kestrel Knoll's cycles to step back (server/synth/demo.ts).
    await expect.poll(() => classOf(page)).toBe('backstepping');
    expect(await page.locator('[data-test="readings-evidence"] li').count()).toBeGreaterThan(0);
    expect(await page.locator('[data-test="readings-evidence"]').textContent()).toMatch(/backstep/i);
    expect(await page.locator('[data-test="readings-caution"]').textContent()).toMatch(/\S/);
    await expect.poll(() => page.locator('[data-test="readings-ranges"]').count(), { timeout: 15_000 }).toBe(1);
    await b.shot('32-two-cycles-backstepping');

    // 5. Flag the drowning surface → drowned, with the reason.
    await page.locator('[data-test="ledger-drowning-switch"]').click();
    await expect.poll(() => classOf(page)).toBe('drowned');
    expect(await page.locator('[data-test="readings-evidence"]').textContent()).toMatch(/drowning surface/);
    await b.shot('33-drowned');

    // 6. Undo and redo from the keyboard; the Ledger and the Readings follow.
    await page.keyboard.press('Control+z');
    await expect.poll(() => classOf(page)).toBe('backstepping');
    expect(await page.locator('[data-test="ledger-drowning-switch"]').getAttribute('class')).not.toMatch(/n-switch--active/);
    await page.keyboard.press('Control+Shift+z');
    await expect.poll(() => classOf(page)).toBe('drowned');
    await expect.poll(() => page.locator('[data-test="ledger-drowning-switch"]').getAttribute('class')).toMatch(/n-switch--active/);
    await page.keyboard.press('Control+z');
    await page.keyboard.press('Control+z'); // the right flank of cycle 2 goes
    await expect.poll(() => partsDone(page, 1)).toEqual(['top', 'marginLeft', 'marginRight']);
    await page.keyboard.press('Control+Shift+z');
    await page.keyboard.press('Control+Shift+z');
    await expect.poll(() => partsDone(page, 1)).toEqual(['top', 'marginLeft', 'marginRight', 'flankRight']);
    await expect.poll(() => classOf(page)).toBe('drowned');

    // 7. Saved, and confirmed by the server's own numbers.
    await expect.poll(() => saveState(page), { timeout: 15_000 }).toBe('saved');
    await expect.poll(() => page.locator('[data-test="readings-server-state"]').getAttribute('data-state'), { timeout: 20_000 }).toBe('confirmed');
    const token = await t.token('interpreter');
    const stored = (await request(t.app).get(`/api/sections/${tb11}/buildups`).set(bearer(token))).body;
    expect(stored).toHaveLength(1);
    expect(stored[0]).toMatchObject({ name: 'Kestrel Knoll', cycleCount: 2, geometry: { topIsDrowningSurface: true } });
    expect(stored[0].geometry.cycles[1].flankRight.length).toBeGreaterThanOrEqual(2);

    // The help overlay with `?`.
    await page.locator('[data-test="section-stage"]').focus();
    await page.keyboard.press('?');
    await page.locator('[data-test="shortcuts-overlay"]').waitFor();
    await b.shot('34-shortcuts');
    await page.keyboard.press('Escape');
    await expect.poll(() => page.locator('[data-test="shortcuts-overlay"]').count()).toBe(0);

    // 8. Reload: everything is there.
    await page.reload();
    await expect.poll(() => page.locator('[data-test="ledger-cycle-row"]').count(), { timeout: 15_000 }).toBe(2);
    await expect.poll(() => classOf(page)).toBe('drowned');
    expect(await partsDone(page, 0)).toEqual(['top', 'marginLeft', 'marginRight', 'flankLeft']);
    await page.waitForTimeout(300);
    await b.shot('35-reloaded');

    // 9. A second browser (the admin) changes the same buildup and saves.
    b2 = await openBrowser(t.running.url);
    const p2 = b2.page;
    await signIn(p2, 'admin@tessel.example');
    await p2.goto(`/sections/${tb11}/interpret`);
    await expect.poll(() => p2.locator('[data-test="ledger-cycle-row"]').count(), { timeout: 15_000 }).toBe(2);
    await p2.locator('[data-test="ledger-drowning-switch"]').click();
    await expect.poll(() => classOf(p2)).toBe('backstepping');
    await expect.poll(() => saveState(p2), { timeout: 15_000 }).toBe('saved');
    const adminSaved = (await request(t.app).get(`/api/sections/${tb11}/buildups`).set(bearer(token))).body[0];
    expect(adminSaved.geometry.topIsDrowningSurface).toBe(false);
    await b2.shot('36-admin-saved');
    // The first browser looks at the review again (every 15 s) and sees the admin's version number: that must not
    // move its copy onto that number (its next save would overwrite the admin's change unseen).
    await page.waitForResponse(
      async (r) => r.request().method() === 'GET' && /\/api\/buildups\/\d+\/review$/.test(new URL(r.url()).pathname) && (await r.json()).version === adminSaved.version,
      { timeout: 30_000 },
    );

    // 10. Back in the first browser: an edit there meets the conflict instead of overwriting.
    const age = page.locator('[data-test="ledger-cycle-age-input"]').first();
    await age.fill('11.5');
    await age.press('Tab');
    await page.locator('[data-test="conflict-load"]').waitFor({ timeout: 15_000 });
    await expect.poll(() => saveState(page)).toBe('conflict');
    expect((await request(t.app).get(`/api/sections/${tb11}/buildups`).set(bearer(token))).body[0].geometry.topIsDrowningSurface).toBe(false);
    await page.waitForTimeout(400); // the dialog's fade-in
    await b.shot('37-conflict');
    expect(await page.locator('[data-test="conflict-differences"]').textContent()).toMatch(/drowning surface\s*noyes/);
    await page.locator('[data-test="conflict-load"]').click();
    await expect.poll(() => classOf(page)).toBe('backstepping');
    await expect.poll(() => page.locator('[data-test="ledger-drowning-switch"]').getAttribute('class')).not.toMatch(/n-switch--active/);
    await expect.poll(() => saveState(page)).toBe('saved');
    await expect.poll(() => page.locator('[data-test="readings-server-state"]').getAttribute('data-state'), { timeout: 20_000 }).toBe('confirmed');
    await b.shot('38-conflict-resolved');
    // Nothing was lost silently: undo brings the local copy (with its age) back as an unsaved edit.
    await page.locator('[data-test="section-stage"]').focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => page.locator('[data-test="ledger-cycle-age-input"]').first().inputValue()).toBe('11.5');
    await expect.poll(() => classOf(page)).toBe('drowned');
    await expect.poll(() => saveState(page), { timeout: 15_000 }).toBe('saved');
  });

  it('shows the canvas read-only to a reviewer member', async () => {
    const p2 = b2!.page;
    await p2.evaluate(() => localStorage.clear());
    await signIn(p2, 'reviewer@tessel.example');
    await p2.goto(`/sections/${tb11}/interpret`);
    await expect.poll(() => p2.locator('[data-test="ledger-cycle-row"]').count(), { timeout: 15_000 }).toBe(2);
    expect(await saveState(p2)).toBe('readonly');
    expect(await p2.locator('[data-test="tool-trace"]').isDisabled()).toBe(true);
    expect(await p2.locator('[data-test="tool-ruler"]').isDisabled()).toBe(false);
    expect(await p2.locator('[data-test="ledger-buildup-create"]').count()).toBe(0);
    expect(await p2.locator('[data-test="ledger-cycle-add"]').count()).toBe(0);
    // Tool letters of the editing tools do nothing; the Ruler's works.
    await p2.locator('[data-test="section-stage"]').focus();
    await p2.keyboard.press('l');
    expect(await p2.locator('[data-test="interpret-stage"]').getAttribute('data-tool')).toBe('select');
    await p2.keyboard.press('u');
    await expect.poll(() => p2.locator('[data-test="interpret-stage"]').getAttribute('data-tool')).toBe('ruler');
    // Readings are there for reading.
    await expect.poll(() => classOf(p2)).toBe('drowned');
    await b2!.shot('39-reviewer-readonly');

    // Vertical stretch: the display doubles vertically, the readout stays in true image pixels.
    const stretchInput = p2.locator('[data-test="ve-stretch-input"]');
    await stretchInput.fill('2');
    await stretchInput.press('Enter');
    await expect.poll(async () => (await viewOf(p2)).stretch).toBe(2);
    const at: Pt = [1300, 470];
    const [q] = await screenOf(p2, [at]);
    await p2.mouse.move(q[0], q[1]);
    const px = (await p2.locator('[data-test="readout-px"]').textContent())!.replace(/(\d),(\d)/g, '$1$2').match(/\d+/g)!.map(Number);
    expect(Math.abs(px[0] - at[0])).toBeLessThanOrEqual(2);
    expect(Math.abs(px[1] - at[1])).toBeLessThanOrEqual(2);
    expect(await p2.locator('[data-test="ve-readout"]').textContent()).toMatch(/^VE ≈ [\d.]+×$/);
    await b2!.shot('40-stretch-2x');
  });
});
