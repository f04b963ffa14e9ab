/**
 * SEG-Y in the browser: upload an invented 2D line (written by the tests'
 * SEG-Y writer) through the section upload form, see it ready and calibrated
 * from its headers with no Ties placed, open the header viewer (textual,
 * binary, trace headers, warnings), read the true amplitude under the cursor
 * on the interpretation canvas; then upload a small 3D cube and extract an
 * inline. Screenshots in tests/e2e/screenshots/ (segy-…).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { screenOf, signIn } from '../helpers/e2e-demo';
import { writeSegy, type Field } from '../helpers/segy-writer';
import { cube3d } from '../helpers/segy-fixtures';

const TRACES = 360;
const SAMPLES = 500;
const DT_US = 4000;

/** A Ricker-like wavelet (peak 1 at t = 0). */
const ricker = (t: number, f = 0.03) => (1 - 2 * (Math.PI * f * t) ** 2) * Math.exp(-((Math.PI * f * t) ** 2));

/** Layered reflectors draping a mound mid-line (samples in whole numbers, exact in float32). */
function amplitude(i: number, j: number): number {
  const mound = 60 * Math.exp(-(((i - TRACES / 2) / 55) ** 2));
  let v = 0;
  for (const r of [80, 150, 220, 300, 390]) v += ricker(j - (r - (r > 200 ? mound * Math.min(1, (r - 200) / 100) : 0)));
  return Math.round(1000 * v + 40 * Math.sin(i * 0.37 + j * 0.11));
}

function demoLine(): Buffer {
  return writeSegy({
    format: 5,
    text: ['C 1 TESSEL BASIN TB-2024 LINE TB-11 FULL STACK (INVENTED TEST DATA)', 'C 2 SAMPLE INTERVAL 4 MS, CDP SPACING 12.5 M', 'C 3 COORDINATES UTM ZONE 31 NORTH'].map((l) => l.padEnd(80)).join(''),
    sampleInterval: DT_US,
    samplesPerTrace: SAMPLES,
    binary: [[3255, 2, 1]],
    traces: Array.from({ length: TRACES }, (_, i) => ({
      fields: [[21, 4, 2001 + i], [71, 2, 0xfff6], [181, 4, Math.round((430_000 + 12.5 * i) * 10)], [185, 4, 62_000_000 + i * 20]] as Field[],
      samples: Array.from({ length: SAMPLES }, (_, j) => amplitude(i, j)),
    })),
  });
}

let t: TestApp;
let b: Browser;
let dir: string;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-e2e-segy-'));
  fs.writeFileSync(path.join(dir, 'TB-11_full_stack.sgy'), demoLine());
  fs.writeFileSync(path.join(dir, 'TB-14_cube.segy'), cube3d());
  t = await createTestApp({ listen: true });
  b = await openBrowser(t.running.url);
});
afterAll(async () => {
  await b?.close();
  await t?.close();
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

describe('SEG-Y journey', () => {
  it('uploads a 2D line, needs no Ties, shows its headers and the amplitude under the cursor; extracts an inline from a 3D cube', async () => {
    const { page } = b;
    await signIn(page, 'interpreter@tessel.example');
    await page.locator('[data-test="projects-table"]').getByText('Tessel Basin screening').click();
    await page.locator('[data-test="sections-panel"]').waitFor();

    // ---- upload the 2D line ---------------------------------------------------
    await page.click('[data-test="section-upload"]');
    const modal = page.locator('[data-test="section-upload-modal"]');
    await modal.waitFor();
    await page.setInputFiles('[data-test="section-file"]', path.join(dir, 'TB-11_full_stack.sgy'));
    await page.locator('[data-test="segy-options"]').waitFor();
    await page.fill('[data-test="section-title"]', 'TB-11 full stack (SEG-Y)');
    await page.fill('[data-test="section-line"]', 'TB-11');
    await page.fill('[data-test="segy-epsg"]', '32631');
    await b.shot('segy-01-upload-form');
    await page.click('[data-test="section-upload-submit"]');
    await page.locator('[data-test="section-upload-ready"]').waitFor({ timeout: 90_000 });
    expect(await page.locator('[data-test="section-upload-ready"]').textContent()).toMatch(/360 traces × 500 samples, calibrated from its SEG-Y headers: no Ties needed/);
    await b.shot('segy-02-upload-ready');
    await page.click('[data-test="section-upload-open"]');

    // ---- section page: rendered, calibrated, header viewer --------------------------
    await page.waitForURL(/\/sections\/\d+$/);
    const sectionId = Number(page.url().split('/').pop());
    const stage = page.locator('[data-test="section-stage"]');
    await stage.waitFor();
    await expect.poll(() => stage.getAttribute('data-tiles-pending'), { timeout: 20_000 }).toBe('0');
    const panel = page.locator('[data-test="segy-panel"]');
    await panel.waitFor();
    expect(await panel.locator('[data-test="segy-calibrated"]').textContent()).toMatch(/no Ties needed/);
    expect(await page.locator('[data-test="tie-row"]').count()).toBe(0);
    // the Ties panel says where the calibration came from instead of asking for Ties
    expect(await page.locator('[data-test="ties-from-headers"]').textContent()).toMatch(/Calibrated from the SEG-Y trace headers/);
    expect(await page.locator('[data-test="ties-empty"]').count()).toBe(0);
    await expect.poll(() => panel.locator('[data-test="segy-textual"]').textContent()).toContain('TESSEL BASIN TB-2024 LINE TB-11');
    await panel.scrollIntoViewIfNeeded();
    await b.shot('segy-03-section-textual-header');
    await panel.getByText('Binary header', { exact: true }).click();
    await expect.poll(() => panel.locator('[data-test="segy-binary"]').textContent()).toMatch(/3225.*formatCode.*5.*Data sample format code/s);
    await b.shot('segy-04-binary-header');
    await panel.getByText('Trace headers', { exact: true }).click();
    const table = panel.locator('[data-test="segy-trace-headers"]');
    await expect.poll(() => table.textContent()).toContain('4300000'); // cdpX of trace 0 (× 10, scalar −10)
    await panel.locator('.n-pagination-item', { hasText: /^2$/ }).click();
    await expect.poll(() => table.locator('tbody tr').first().textContent()).toMatch(/^20/); // section trace 20 opens page 2
    await b.shot('segy-05-trace-headers');

    // ---- interpretation canvas: amplitude under the cursor --------------------------
    await page.goto(`/sections/${sectionId}/interpret`);
    await page.locator('[data-test="interpret-stage"]').waitFor();
    await expect.poll(() => page.locator('[data-test="section-stage"]').getAttribute('data-tiles-pending'), { timeout: 20_000 }).toBe('0');
    const target: [number, number] = [180.5, 220.5]; // mid-line, near the mound's draped reflector
    const [x, y] = await screenOf(page, target);
    await page.mouse.move(x, y);
    const readout = page.locator('[data-test="readout-amplitude"]');
    await expect.poll(() => readout.getAttribute('data-value'), { timeout: 10_000 }).not.toBeNull();
    const trace = Number(await readout.getAttribute('data-trace'));
    const sample = Number(await readout.getAttribute('data-sample'));
    expect(Math.abs(trace - 180)).toBeLessThanOrEqual(1);
    expect(Math.abs(sample - 220)).toBeLessThanOrEqual(1);
    expect(Number(await readout.getAttribute('data-value'))).toBe(amplitude(trace, sample));
    await b.shot('segy-06-amplitude-readout');

    // ---- 3D cube: ranges, extract an inline ------------------------------------------
    await page.goto('/projects');
    await page.locator('[data-test="projects-table"]').getByText('Tessel Basin screening').click();
    await page.click('[data-test="section-upload"]');
    await modal.waitFor();
    await page.setInputFiles('[data-test="section-file"]', path.join(dir, 'TB-14_cube.segy'));
    await page.fill('[data-test="section-title"]', 'TB-14 cube');
    await page.click('[data-test="section-upload-submit"]');
    const extract = page.locator('[data-test="segy-extract"]');
    await extract.waitFor({ timeout: 60_000 });
    expect(await extract.locator('[data-test="segy-ranges"]').textContent()).toMatch(/inlines 10–13 \(4\).*crosslines 100–104 \(5\)/s);
    await page.fill('[data-test="segy-extract-number"]', '12');
    await page.locator('[data-test="segy-extract-number"]').blur();
    await b.shot('segy-07-cube-ranges');
    await page.click('[data-test="segy-extract-go"]');
    await page.locator('[data-test="section-upload-ready"]').waitFor({ timeout: 60_000 });
    expect(await page.locator('[data-test="section-upload-ready"]').textContent()).toMatch(/5 traces × 50 samples/);
    await b.shot('segy-08-inline-ready');
    // the cube stays listed under the sections, ready for more lines without a new upload
    await page.click('[data-test="section-upload-close"]');
    const cube = page.locator('[data-test="segy-upload-row"]', { hasText: 'TB-14_cube.segy' });
    await expect.poll(() => cube.textContent(), { timeout: 10_000 }).toMatch(/1 section made/);
    await cube.locator('[data-test="segy-upload-extract"]').click();
    await cube.locator('[data-test="segy-extract-crossline"]').click();
    await page.click('[data-test="segy-extract-go"]');
    await page.waitForURL(/\/sections\/\d+$/);
    await page.locator('[data-test="segy-panel"]').waitFor({ timeout: 60_000 });
    await b.shot('segy-09-crossline-section');
  });
});
