/**
 * The project buildup register in Chromium: open it from the project page,
 * sort by height, switch lengths to feet in the user menu and see every
 * header change, download the register CSV (read back with papaparse), open a
 * buildup's report from its row, download the ZIP of signed-off reports. Screenshots 90-… in tests/e2e/screenshots/.
 *
 * Scenario (invented): project "Tessel register" with one TB-11 section and
 * three buildups (Kestrel Knoll, Marrow Bank, Tessel Spur) traced through the API.
 */
import fs from 'node:fs';
import Papa from 'papaparse';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';
import { readyCalibratedSection } from '../helpers/api-fixtures';
import { FOOT_M } from '../../shared/units';

let t: TestApp;
let b: Browser;
let projectId: number;
const heights: Record<string, number> = {};

function geometry(l: number, r: number, crest: number) {
  return {
    base: [[5, 90], [195, 90]],
    cycles: [{ index: 1, top: [[l, 60], [(l + r) / 2, crest], [r, 60]], marginLeft: [l, 60], marginRight: [r, 60] }],
    terminations: [],
    topIsDrowningSurface: false,
  };
}

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const interp = await t.token('interpreter');
  projectId = (await request(t.app).post('/api/projects').set(bearer(interp)).send({ name: 'Tessel register' })).body.id;
  const section = await readyCalibratedSection(t, interp, projectId);
  for (const [name, g] of [
    ['Kestrel Knoll', geometry(50, 150, 40)],
    ['Marrow Bank', geometry(30, 110, 20)],
    ['Tessel Spur', geometry(120, 180, 50)],
  ] as const) {
    const c = await request(t.app).post(`/api/sections/${section}/buildups`).set(bearer(interp)).send({ name });
    const s = await request(t.app).put(`/api/buildups/${c.body.id}`).set(bearer(interp)).send({ version: c.body.version, geometry: g });
    expect(s.status).toBe(200);
  }
  // the figures come from the summary jobs; wait until all three are measured
  const until = Date.now() + 60_000;
  for (;;) {
    const r = await request(t.app).get(`/api/projects/${projectId}/buildups?pageSize=50`).set(bearer(interp));
    if (r.body.pending === 0 && r.body.items.every((x: { status: string }) => x.status === 'ok')) {
      for (const x of r.body.items) heights[x.name] = x.heightM;
      break;
    }
    if (Date.now() > until) throw new Error(`summaries not ready: ${JSON.stringify(r.body)}`);
    await new Promise((res) => setTimeout(res, 300));
  }
  b = await openBrowser(t.running.url);
}, 180_000);
afterAll(async () => {
  await b?.close();
  await t?.close();
});

/** A length as the table shows it: one decimal below 1 000, whole units above. */
function expectShown(shown: number, exact: number) {
  expect(Math.abs(shown - exact)).toBeLessThanOrEqual(Math.abs(exact) < 1000 ? 0.05 + 1e-9 : 0.5 + 1e-9);
}

const rowNames = () => b.page.$$eval('[data-test="register-table"] tbody tr td:nth-child(2) a', (as) => as.map((a) => a.textContent?.trim() ?? ''));

describe('project buildup register', () => {
  it('opens, sorts by height, switches to feet, downloads the CSV, opens a report and gets the signed-off batch', async () => {
    const { page } = b;
    await signIn(page, 'interpreter@tessel.example');

    // from the project page
    await page.goto(`/projects/${projectId}`);
    await page.click('[data-test="project-register"]');
    await page.waitForURL(new RegExp(`/projects/${projectId}/buildups$`));
    await page.waitForSelector('[data-test="register-table"] tbody tr td:nth-child(2) a');
    expect((await rowNames()).sort()).toEqual(['Kestrel Knoll', 'Marrow Bank', 'Tessel Spur']);
    await expect.poll(() => page.textContent('[data-test="register-table"] thead')).toContain('Height (m)');
    await b.shot('90-register-metres');

    // sort by height: ascending, then descending
    const byHeight = Object.keys(heights).sort((a, z) => heights[a] - heights[z]);
    // the table's header cycles tallest-first, then lowest-first
    await page.click('[data-test="register-table"] thead th:has-text("Height (m)")');
    await expect.poll(rowNames).toEqual([...byHeight].reverse());
    await page.click('[data-test="register-table"] thead th:has-text("Height (m)")');
    await expect.poll(rowNames).toEqual(byHeight);
    await page.click('[data-test="register-table"] thead th:has-text("Height (m)")');
    await page.click('[data-test="register-table"] thead th:has-text("Height (m)")');
    await expect.poll(rowNames).toEqual([...byHeight].reverse());
    await b.shot('91-register-sorted-by-height');

    // the tallest buildup's height as shown, in metres
    const cellText = () => page.textContent('[data-test="register-table"] tbody tr:first-child td:nth-child(4)');
    const shownM = Number((await cellText())!.replace(/[\u2009\s,]/g, ''));
    expectShown(shownM, heights[byHeight[2]]);

    // switch to feet in the user menu: headers, numbers and the axis names change
    await page.click('[data-test="user-menu"]');
    await page.waitForSelector('[data-test="user-menu-panel"]', { state: 'visible' });
    await page.click('[data-test="unit-ft"]');
    await expect.poll(() => page.getAttribute('[data-test="unit-ft"]', 'class'), { timeout: 10_000 }).toContain('checked');
    await page.waitForTimeout(600); // let the buttons' colour transition finish before the screenshot
    await b.shot('92a-user-menu-feet');
    await expect.poll(() => page.textContent('[data-test="register-table"] thead')).toContain('Height (ft)');
    const head = (await page.textContent('[data-test="register-table"] thead'))!;
    for (const h of ['Base width (ft)', 'Area (ft²)', 'Volume P50 (ft³)', 'Net trajectory (°)']) expect(head).toContain(h);
    expect(head).not.toContain('(m)');
    await page.keyboard.press('Escape');
    await page.mouse.click(5, 300);
    const shownFt = Number((await cellText())!.replace(/[\u2009\s,]/g, ''));
    expectShown(shownFt, heights[byHeight[2]] / FOOT_M); // international foot, 0.3048 m
    // the crossplot draws on a canvas with the measured buildups (no "nothing to plot" note)
    await page.waitForSelector('[data-test="register-crossplot"] canvas');
    expect(await page.$('[data-test="register-crossplot"] .empty')).toBeNull();
    await b.shot('92-register-feet');
    // the choice is kept on the server
    const prefs = await request(t.app).get('/api/me/preferences').set(bearer(await t.token('interpreter')));
    expect(prefs.body).toEqual({ lengthUnit: 'ft' });

    // download the register CSV: feet in the headers, the numbers as shown
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-test="register-export-csv"]')]);
    expect(download.suggestedFilename()).toBe('tessel-register-buildups-ft.csv');
    const file = await download.path();
    const text = fs.readFileSync(file!, 'utf8');
    const parsed = Papa.parse<Record<string, string>>(text.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toContain('Height (ft)');
    expect(parsed.data.map((d) => d.Buildup)).toEqual([...byHeight].reverse()); // the order shown
    for (const d of parsed.data) expect(Number(d['Height (ft)'])).toBeCloseTo(heights[d.Buildup] / FOOT_M, 6);

    // open the report of the first row
    const firstId = await page.$eval('[data-test="register-table"] tbody tr:first-child [data-test="register-report-link"]', (a) => (a as HTMLAnchorElement).getAttribute('href'));
    await page.click('[data-test="register-table"] tbody tr:first-child [data-test="register-report-link"]');
    await page.waitForURL(/\/buildups\/\d+\/report$/);
    expect(new URL(page.url()).pathname).toBe(firstId);
    await page.waitForLoadState('networkidle');
    await page.waitForTimeout(800);
    await b.shot('93-register-report-link');

    // the batch of signed-off reports: one job with progress, one ZIP archive downloaded at the end
    const { ctx } = await import('../../server/context');
    await ctx().sequelize.query(`UPDATE buildups SET review_state = 'signed_off', signed_off_at = now() WHERE name = 'Marrow Bank'`);
    await page.goto(`/projects/${projectId}/buildups`);
    await page.waitForSelector('[data-test="register-table"] tbody tr td:nth-child(2) a');
    const [zip] = await Promise.all([page.waitForEvent('download', { timeout: 150_000 }), page.click('[data-test="register-batch"]')]);
    expect(zip.suggestedFilename()).toBe('tessel-register-signed-off-reports-a4-ft.zip');
    const bytes = fs.readFileSync((await zip.path())!);
    expect(bytes.subarray(0, 4).toString('latin1')).toBe('PK\u0003\u0004'); // ZIP local file header signature
    await expect.poll(() => page.textContent('[data-test="register-batch-progress"]')).toContain('1 of 1');
    await page.waitForSelector('[data-test="register-batch"]:not(.n-button--loading)', { timeout: 5000 });
    await b.shot('94-register-batch-done');

    // back to metres for whoever uses this account next
    await request(t.app).put('/api/me/preferences').set(bearer(await t.token('interpreter'))).send({ lengthUnit: 'm' });
  }, 300_000);
});
