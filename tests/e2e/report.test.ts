/**
 * The report of a buildup in Chromium: open it from the Interpret page of
 * the invented TB-14 line (Marrow Bank, seeded), look at the title block,
 * the marked-up crop and the plots, prepare the PDF (progress, then ready),
 * and download every format (CSV, JSON, GeoJSON, PNG, SVG, PDF), each read
 * back. Screenshots: tests/e2e/screenshots/report-*.png.
 */
import fs from 'node:fs';
import path from 'node:path';
import { execFileSync } from 'node:child_process';
import Papa from 'papaparse';
import sharp from 'sharp';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';
import { ctx } from '../../server/context';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { seedDemoInterpretation } from '../../server/db/seeders/interpretations';

let t: TestApp;
let b: Browser;
let bankId: number;
let sectionId: number;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
  const seeded = await seedDemoSections(deps, { width: 1600, height: 500 });
  await seedDemoInterpretation(deps);
  const token = await t.token('interpreter');
  for (const id of seeded.seeded) {
    const until = Date.now() + 60_000;
    while ((await request(t.app).get(`/api/sections/${id}`).set(bearer(token))).body.status !== 'ready') {
      if (Date.now() > until) throw new Error('demo section not ready');
      await new Promise((r) => setTimeout(r, 200));
    }
  }
  for (const id of seeded.seeded) {
    const list = (await request(t.app).get(`/api/sections/${id}/buildups`).set(bearer(token))).body;
    if (list.length) {
      bankId = list[0].id;
      sectionId = id;
    }
  }
  b = await openBrowser(t.running.url);
}, 180_000);

afterAll(async () => {
  await b?.close();
  await t?.close();
});

async function download(testId: string): Promise<{ name: string; body: Buffer }> {
  const [dl] = await Promise.all([b.page.waitForEvent('download', { timeout: 30_000 }), b.page.click(`[data-test="${testId}"]`)]);
  const file = await dl.path();
  return { name: dl.suggestedFilename(), body: fs.readFileSync(file!) };
}

describe('buildup report', () => {
  it('opens from the Interpret page, shows the report and downloads every format', async () => {
    const { page } = b;
    await signIn(page, 'reviewer@tessel.example');

    // from the Interpret page: select the buildup in the Ledger, then follow the link
    await page.goto(`/sections/${sectionId}/interpret`);
    await page.getByText('Marrow Bank').first().click();
    await page.waitForSelector('[data-test="open-report"]', { timeout: 30_000 });
    await page.click('[data-test="open-report"]');
    await page.waitForURL(new RegExp(`/buildups/${bankId}/report$`));

    await page.waitForSelector('[data-test="report-title"]');
    await page.waitForSelector('[data-test="report-crop"] svg image');
    await page.waitForSelector('[data-test="report-plots"] svg');
    const title = await page.textContent('[data-test="report-title"]');
    expect(title).toContain('Marrow Bank');
    expect(title).toContain('TB-14');
    expect(title).toContain('Draft');
    expect(await page.textContent('[data-test="report-ve"]')).toMatch(/VE ≈ \d/);
    expect(await page.textContent('[data-test="report-caution"]')).toContain('qualified interpreter');
    expect(await page.locator('[data-test="report-ledger"] tbody tr').count()).toBeGreaterThan(0);
    // no number is broken over two lines at its thin-space thousands separator ("5 / 800.0")
    const broken = await page.evaluate(() =>
      [...document.querySelectorAll('[data-test="report-ledger"] td, [data-test="report-figures"] td + td')]
        .filter((td) => {
          const text = td.firstChild;
          if (!text || !/\d/.test(td.textContent ?? '')) return false;
          const range = document.createRange();
          range.selectNodeContents(td);
          return new Set([...range.getClientRects()].map((r) => Math.round(r.top))).size > 1;
        })
        .map((td) => td.textContent),
    );
    expect(broken).toEqual([]);
    await page.waitForTimeout(300);
    await b.shot('report-01-page');
    await page.locator('[data-test="report-plots"]').scrollIntoViewIfNeeded();
    expect(await page.locator('[data-test="report-plots"] > *').count()).toBeGreaterThanOrEqual(3);
    await page.waitForTimeout(300);
    await b.shot('report-01b-plots');
    await page.evaluate(() => window.scrollTo(0, 0));
    // printed: the toolbar goes, the sheet stays
    await page.emulateMedia({ media: 'print' });
    expect(await page.isVisible('[data-test="report-toolbar"]')).toBe(false);
    expect(await page.isVisible('[data-test="report-title"]')).toBe(true);
    await b.shot('report-01c-print');
    await page.emulateMedia({ media: 'screen' });

    // tables and layers straight away
    const csv = await download('download-csv');
    expect(csv.name).toBe('tb-14-marrow-bank-cycles.csv');
    const rows = Papa.parse<Record<string, string>>(csv.body.toString('utf8').trim(), { header: true });
    expect(rows.errors).toEqual([]);
    expect(Object.keys(rows.data[0])).toContain('Top width (m)');
    const bom = await download('download-csv-bom');
    expect(bom.body.subarray(0, 3)).toEqual(Buffer.from([0xef, 0xbb, 0xbf])); // UTF-8 BOM
    const json = await download('download-json');
    expect(json.name).toBe('tb-14-marrow-bank-measurements.json');
    expect(JSON.parse(json.body.toString('utf8')).format).toBe('cayline.measurements/1');
    const gj = await download('download-geojson');
    expect(gj.name).toBe('tb-14-marrow-bank.geojson');
    expect(JSON.parse(gj.body.toString('utf8')).type).toBe('FeatureCollection');

    // the PDF and the crop come from the report job: progress, then ready
    await page.click('[data-test="report-prepare"]');
    await page.waitForSelector('[data-test="report-ready"]', { timeout: 90_000 });
    await b.shot('report-02-ready');
    const png = await download('download-png');
    expect(png.name).toBe('tb-14-marrow-bank-crop.png');
    expect((await sharp(png.body).metadata()).format).toBe('png');
    fs.writeFileSync(path.join(path.dirname(await b.shot('report-03-after-png')), 'report-04-downloaded-crop.png'), png.body);
    const svg = await download('download-svg');
    expect(svg.name).toBe('tb-14-marrow-bank-crop.svg');
    expect(svg.body.toString('utf8')).toContain('<svg');
    const pdf = await download('download-pdf');
    expect(pdf.name).toMatch(/^tb-14-marrow-bank-report-(a4|letter)\.pdf$/);
    expect(pdf.body.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const tmp = path.join(path.dirname(await b.shot('report-05-end')), 'report-e2e.pdf');
    fs.writeFileSync(tmp, pdf.body);
    const text = execFileSync('pdftotext', [tmp, '-'], { encoding: 'utf8' });
    expect(text).toContain('Marrow Bank');
    expect(text).toContain('Caution');
    execFileSync('pdftoppm', ['-r', '50', '-png', '-f', '1', '-l', '1', tmp, path.join(path.dirname(tmp), 'report-06-pdf-page')]);
    fs.rmSync(tmp);
  }, 240_000);
});
