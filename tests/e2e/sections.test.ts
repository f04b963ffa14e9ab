/**
 * An interpreter's first section: upload a generated PNG into the demo
 * project, watch the transfer and tiling progress, open it, zoom with the
 * wheel, place three Ties, read residuals and RMS, save the calibration.
 * Screenshots in tests/e2e/screenshots/ (10-… onwards).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fitCalibration, type Tie } from '../../shared/measure/calibration';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';

const W = 4000;
const H = 1200;
const TILE = 512; // the server's tile size (tiles.service.ts)

let t: TestApp;
let b: Browser;
let dir: string;
let pngPath: string;

/**
 * A synthetic greyscale section: flat reflectors that drape over a mound in
 * the middle (a buildup-like shape), a little deterministic noise, and tick
 * marks along the top edge every 400 px.
 */
async function makeSection(file: string): Promise<void> {
  const px = Buffer.alloc(W * H);
  let seed = 12345;
  const noise = () => {
    seed = (seed * 1103515245 + 12345) & 0x7fffffff;
    return seed / 0x7fffffff - 0.5;
  };
  for (let u = 0; u < W; u++) {
    const mound = 220 * Math.exp(-(((u - 2000) / 520) ** 2));
    for (let v = 0; v < H; v++) {
      const depth = v + (v > 300 && v < 900 ? mound * Math.min(1, (v - 300) / 200) : 0);
      const wave = Math.sin((2 * Math.PI * depth) / 28) * Math.exp(-((((depth % 140) - 70) / 60) ** 2));
      const g = 128 + 105 * wave + 22 * noise();
      px[v * W + u] = Math.max(0, Math.min(255, Math.round(g)));
    }
    if (u % 400 === 0) for (let v = 0; v < 24; v++) for (let k = -1; k <= 1; k++) if (u + k >= 0) px[v * W + u + k] = 255;
  }
  await sharp(px, { raw: { width: W, height: H, channels: 1 } }).png({ compressionLevel: 6 }).toFile(file);
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-e2e-sections-'));
  pngPath = path.join(dir, 'TB-11_full_stack.png');
  await makeSection(pngPath);
  t = await createTestApp({ listen: true });
  b = await openBrowser(t.running.url);
});
afterAll(async () => {
  await b?.close();
  await t?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

/** Numbers in a readout text like "u 1,234 v 567 px" (locale grouping removed). */
function numbers(text: string | null): number[] {
  return (text ?? '').replace(/(\d),(\d)/g, '$1$2').match(/-?\d+(\.\d+)?/g)?.map(Number) ?? [];
}

describe('sections journey', () => {
  it('uploads, tiles, zooms, ties and saves a calibration', async () => {
    const { page } = b;
    const tileRequests: string[] = [];
    page.on('request', (r) => {
      if (r.url().includes('/tiles/')) tileRequests.push(new URL(r.url()).pathname);
    });

    await signIn(page, 'interpreter@tessel.example');
    await page.locator('[data-test="projects-table"]').getByText('Tessel Basin screening').click();
    await page.locator('[data-test="sections-panel"]').waitFor();
    await b.shot('10-project-sections');

    // ---- upload form --------------------------------------------------------
    await page.click('[data-test="section-upload"]');
    const modal = page.locator('[data-test="section-upload-modal"]');
    await modal.waitFor();
    // Nothing chosen: the file and the (empty) title are named beside their fields.
    await page.click('[data-test="section-upload-submit"]');
    await expect.poll(() => modal.textContent()).toMatch(/Choose a PNG, JPEG or TIFF image/);
    await expect.poll(() => modal.textContent()).toMatch(/Title is required/);

    await page.setInputFiles('[data-test="section-file"]', pngPath);
    await expect.poll(() => page.locator('[data-test="section-file-name"]').textContent()).toContain('TB-11_full_stack.png');
    await page.fill('[data-test="section-title"]', 'TB-11 full stack, test upload');
    await page.fill('[data-test="section-line"]', 'TB-11');
    await page.fill('[data-test="section-survey"]', 'TB-2024');
    // One coordinate alone: the shared schema wants all four, and says so beside each missing one.
    await page.click('[data-test="section-coords-toggle"]');
    await page.fill('[data-test="section-start-lon"]', '63.0'); // invented line in open ocean
    await page.click('[data-test="section-upload-submit"]');
    await expect.poll(() => modal.textContent()).toMatch(/give all four line end coordinates or none/i);
    await b.shot('11-upload-form-errors');
    await page.fill('[data-test="section-start-lat"]', '-28.0');
    await page.fill('[data-test="section-end-lon"]', '63.06');
    await page.fill('[data-test="section-end-lat"]', '-28.0');

    await page.click('[data-test="section-upload-submit"]');
    // Both bars appear: the transfer first, then the tiling one fed by polling.
    await page.locator('[data-test="section-transfer-progress"]').waitFor();
    await page.locator('[data-test="section-processing-progress"]').waitFor({ timeout: 60_000 });
    await page.locator('[data-test="section-upload-ready"]').waitFor({ timeout: 90_000 });
    expect(await page.locator('[data-test="section-transfer-progress"]').getAttribute('aria-valuenow')).toBe('100');
    expect(await page.locator('[data-test="section-processing-progress"]').getAttribute('aria-valuenow')).toBe('100');
    expect(await page.locator('[data-test="section-upload-ready"]').textContent()).toMatch(/4,000 × 1,200 px/);
    await b.shot('12-upload-progress-done');

    // The table row reaches "ready" with its size and uploader.
    await page.click('[data-test="section-upload-close"]');
    await modal.waitFor({ state: 'detached' });
    const row = page.locator('[data-test="section-row"]', { hasText: 'TB-11 full stack, test upload' });
    await row.and(page.locator('[data-status="ready"]')).waitFor({ timeout: 30_000 });
    expect(await row.textContent()).toMatch(/4,000 × 1,200/);
    expect(await row.textContent()).toMatch(/Ivo Marlstone/);
    await expect.poll(() => row.locator('[data-test="section-thumb"]').getAttribute('class')).toMatch(/shown/);
    await b.shot('13-sections-table');

    // ---- the section page ---------------------------------------------------
    await row.click();
    await page.waitForURL(/\/sections\/\d+$/);
    const sectionId = Number(page.url().split('/').pop());
    const stage = page.locator('[data-test="section-stage"]');
    await stage.waitFor();
    await expect.poll(() => page.locator('[data-test="section-header"]').textContent()).toMatch(/TB-11.*TB-2024.*Two-way time/s);
    // Fitted: all tiles of the chosen level drawn, nothing pending.
    await expect.poll(async () => Number(await stage.getAttribute('data-tiles-drawn')), { timeout: 20_000 }).toBeGreaterThan(0);
    await expect.poll(() => stage.getAttribute('data-tiles-pending'), { timeout: 20_000 }).toBe('0');
    const fitScale = Number(await stage.getAttribute('data-scale'));
    const fitLevel = Number(await stage.getAttribute('data-level'));
    expect(fitScale).toBeLessThan(0.5); // 4000 px in a stage well under 2000 px wide
    await b.shot('14-section-fitted');

    // ---- wheel zoom about the cursor -----------------------------------------
    const box = (await stage.boundingBox())!;
    const cursor = { x: box.x + box.width * 0.55, y: box.y + box.height * 0.45 };
    await page.mouse.move(cursor.x, cursor.y);
    const before = numbers(await page.locator('[data-test="readout-px"]').textContent());
    for (let i = 0; i < 11; i++) {
      // one wheel notch is one gentle step (×1.15, viewport.ts): 11 notches ≈ ×4.7
      await page.mouse.wheel(0, -200);
      await page.waitForTimeout(60);
    }
    // Let the eased zoom settle.
    let last = '';
    await expect
      .poll(async () => {
        const s = await stage.getAttribute('data-scale');
        const same = s === last;
        last = s ?? '';
        return same;
      }, { interval: 250, timeout: 10_000 })
      .toBe(true);
    const zoomScale = Number(await stage.getAttribute('data-scale'));
    expect(zoomScale).toBeGreaterThan(fitScale * 4);
    expect(Number(await stage.getAttribute('data-level'))).toBeGreaterThan(fitLevel);
    // The image point under the cursor stayed there (within a screen pixel).
    await page.mouse.move(cursor.x + 1, cursor.y);
    await page.mouse.move(cursor.x, cursor.y);
    const after = numbers(await page.locator('[data-test="readout-px"]').textContent());
    expect(Math.abs(after[0] - before[0])).toBeLessThanOrEqual(1 / fitScale + 1); // the first reading is only as fine as one screen pixel at the fit scale
    expect(Math.abs(after[1] - before[1])).toBeLessThanOrEqual(1 / fitScale + 1); // the first reading is only as fine as one screen pixel at the fit scale
    await expect.poll(() => stage.getAttribute('data-tiles-pending'), { timeout: 20_000 }).toBe('0');
    // Only the tiles around the view were fetched at full resolution, not the whole level.
    const maxLevel = Math.ceil(Math.log2(W));
    const fullRes = new Set(tileRequests.filter((p) => p.includes(`/tiles/${maxLevel}/`)));
    const fullResTotal = Math.ceil(W / TILE) * Math.ceil(H / TILE);
    if (Number(await stage.getAttribute('data-level')) === maxLevel) {
      expect(fullRes.size).toBeGreaterThan(0);
      expect(fullRes.size).toBeLessThan(fullResTotal);
    }
    expect(Number(await stage.getAttribute('data-tiles-visible'))).toBeLessThan(fullResTotal);
    await b.shot('15-section-zoomed');

    // ---- three Ties ---------------------------------------------------------------
    // A true map x = 2.5 m/px · u, y = 1000 ms + 2 ms/px · v; the third Tie is typed 30 m off in x.
    await page.click('[data-test="tie-place"]');
    await page.locator('[data-test="placing-banner"]').waitFor();
    const spots = [
      { dx: -0.3, dy: -0.3, off: 0 },
      { dx: 0.25, dy: -0.2, off: 0 },
      { dx: 0.05, dy: 0.3, off: 30 },
    ];
    const placed: Tie[] = [];
    for (const [i, s] of spots.entries()) {
      await page.mouse.click(box.x + box.width * (0.5 + s.dx), box.y + box.height * (0.5 + s.dy));
      const pop = page.locator('[data-test="tie-popover"]');
      await pop.waitFor();
      const u = Number(await pop.getAttribute('data-u'));
      const v = Number(await pop.getAttribute('data-v'));
      expect(u).toBeGreaterThan(0);
      expect(v).toBeGreaterThan(0);
      const x = Math.round(2.5 * u + s.off);
      const y = Math.round(1000 + 2 * v);
      if (i === 0) {
        // Without values the popover says what is missing.
        await page.click('[data-test="tie-world-ok"]');
        await page.locator('[data-test="tie-popover-error"]').waitFor();
      }
      await page.fill('[data-test="tie-world-x"]', String(x));
      await page.fill('[data-test="tie-world-y"]', String(y));
      if (i === 2) await b.shot('16-tie-popover');
      await page.click('[data-test="tie-world-ok"]');
      await pop.waitFor({ state: 'detached' });
      placed.push({ px: [u, v], world: [x, y] });
    }
    await page.keyboard.press('Escape');
    const rows = page.locator('[data-test="tie-row"]');
    await expect.poll(() => rows.count()).toBe(3);

    // Affine with exactly three Ties passes through all of them: residuals 0.
    const rms = page.locator('[data-test="ties-rms-px"]');
    await expect.poll(() => rms.textContent()).toBe('0.00 px');
    // Axes mode (x from u, y from v) cannot absorb the 30 m error: it shows up in the residuals.
    await page.click('[data-test="mode-axes"]');
    const expected = fitCalibration(placed, 'axes');
    await expect.poll(async () => numbers(await rms.textContent())[0]).toBeCloseTo(expected.rmsPx, 2);
    expect(expected.rmsPx).toBeGreaterThan(1);
    const residualTexts = await page.locator('[data-test="tie-residual-px"]').allTextContents();
    expect(residualTexts).toHaveLength(3);
    residualTexts.forEach((text, i) => expect(Math.abs(numbers(text)[0] - expected.residuals[i].residualPx)).toBeLessThan(0.006));
    expect(numbers(await page.locator('[data-test="ties-rms-x"]').textContent())[0]).toBeCloseTo(expected.rmsWorld.x, 2);
    // The line (0.06° of longitude at 28° S, about 5.9 km) is far shorter than the calibrated 10 km: coral warning.
    await page.locator('[data-test="length-mismatch"]').waitFor();
    await page.mouse.move(box.x + box.width * 0.8, box.y + box.height * 0.8);
    await b.shot('17-ties-residuals');

    // The readout now gives metres and ms under the cursor.
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
    await expect.poll(() => page.locator('[data-test="readout-y"]').textContent()).toMatch(/ms TWT/);
    const pxNow = numbers(await page.locator('[data-test="readout-px"]').textContent());
    const xNow = numbers(await page.locator('[data-test="readout-x"]').textContent())[0];
    // x ≈ 2.5 m/px · u (the fitted slope is near 2.5 with the 30 m error spread over three Ties)
    expect(Math.abs(xNow - 2.5 * pxNow[0])).toBeLessThan(40);

    // ---- save ------------------------------------------------------------------
    // Another tab saves a first calibration meanwhile: this save meets it and keeps the list; saving again replaces it.
    const token = await t.token('interpreter');
    const otherTab = await request(t.app)
      .put(`/api/sections/${sectionId}/calibration`)
      .set(bearer(token))
      .send({ baseVersion: 0, mode: 'affine', ties: [{ px: [0, 0], world: [0, 0] }, { px: [4000, 0], world: [10000, 0] }, { px: [0, 1200], world: [0, 3000] }] });
    expect(otherTab.status, JSON.stringify(otherTab.body)).toBe(201);
    await page.click('[data-test="calibration-save"]');
    await expect.poll(() => page.locator('.n-message').allTextContents()).toContainEqual(expect.stringMatching(/Someone saved a newer calibration meanwhile/));
    expect(await page.locator('[data-test="tie-residual-px"]').count()).toBe(3); // the list is kept
    await expect.poll(() => page.locator('[data-test="calibration-dirty"]').count()).toBe(1);
    await page.click('[data-test="calibration-save"]');
    await expect.poll(() => page.locator('[data-test="calibration-version"]').textContent()).toMatch(/Calibration v2/);
    await expect.poll(() => page.locator('[data-test="calibration-dirty"]').count()).toBe(0);
    const saved = await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(token));
    expect(saved.status).toBe(200);
    expect(saved.body.calibration).toMatchObject({ version: 2, mode: 'axes' });
    expect(saved.body.calibration.ties).toHaveLength(3);
    expect(saved.body.calibration.fit.rmsPx).toBeCloseTo(expected.rmsPx, 6);
    expect(saved.body.calibration.lengthMismatch).not.toBeNull();
    await b.shot('18-calibration-saved');

    // Fit to window from the button, then the keyboard: zoom in with +, fit with F.
    await page.click('[data-test="stage-fit"]');
    await expect.poll(async () => Number(await stage.getAttribute('data-scale'))).toBeCloseTo(fitScale, 3);
    await stage.focus();
    await page.keyboard.press('+');
    await expect.poll(async () => Number(await stage.getAttribute('data-scale'))).toBeGreaterThan(fitScale * 1.2);
    await page.keyboard.press('f');
    await expect.poll(async () => Number(await stage.getAttribute('data-scale'))).toBeCloseTo(fitScale, 3);

    // ---- details: a save that meets someone else's newer copy overwrites nothing ----------
    await page.click('[data-test="section-edit"]');
    const title = page.locator('[data-test="meta-title"]');
    await title.waitFor();
    const meta = (await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(token))).body;
    expect(await title.inputValue()).toBe(meta.title);
    await title.fill(`${meta.title} (reviewed)`);
    // meanwhile, from another tab: the survey name
    const other = await request(t.app).patch(`/api/sections/${sectionId}`).set(bearer(token)).send({ version: meta.version, survey: 'Tessel 2D-26' });
    expect(other.status, JSON.stringify(other.body)).toBe(200);
    await page.click('[data-test="section-meta-save"]');
    await page.locator('[data-test="section-meta-conflict"]').waitFor();
    expect((await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(token))).body).toMatchObject({ title: meta.title, survey: 'Tessel 2D-26' });
    await page.waitForTimeout(300);
    await b.shot('18a-section-details-conflict');
    await page.click('[data-test="section-meta-load-newer"]');
    await expect.poll(() => page.locator('[data-test="meta-survey"]').inputValue()).toBe('Tessel 2D-26');
    expect(await title.inputValue()).toBe(meta.title);
    expect(await page.locator('[data-test="section-meta-conflict"]').count()).toBe(0);
    await title.fill(`${meta.title} (reviewed)`);
    await page.click('[data-test="section-meta-save"]');
    await expect
      .poll(async () => (await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(token))).body)
      .toMatchObject({ title: `${meta.title} (reviewed)`, survey: 'Tessel 2D-26' });
    await expect.poll(() => page.locator('[data-test="meta-title"]').count()).toBe(0); // the drawer closed

    // ---- back to the project: delete with confirmation, empty state ---------------
    await page.click('[data-test="section-project-link"]');
    const row2 = page.locator('[data-test="section-row"]', { hasText: 'TB-11 full stack, test upload' });
    await row2.waitFor();
    await row2.locator('[data-test="section-delete"]').click();
    await page.click('[data-test="confirm-cancel"]');
    expect(await row2.count()).toBe(1); // cancelled: still there
    await row2.locator('[data-test="section-delete"]').click();
    await page.locator('[data-test="confirm-ok"]').waitFor();
    await page.waitForTimeout(400); // let the dialog finish its entrance for the screenshot
    await b.shot('19-delete-confirm');
    await page.click('[data-test="confirm-ok"]');
    await page.locator('[data-test="sections-empty"]').waitFor();
    expect((await request(t.app).get(`/api/sections/${sectionId}`).set(bearer(token))).status).toBe(404);
  });
});
