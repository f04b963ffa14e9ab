/**
 * The Analogue library in Chromium. The curator opens Kestrel Knoll (TB-11)
 * on the interpretation page and promotes it from its Readings, tags it on
 * its library page, finds it on the map (also by drawing a box around it)
 * and in a crossplot; the interpreter opens the Look-alikes of Marrow Bank
 * (TB-14) from its Readings, by numbers and by shape, and asks a curator to
 * add it, who accepts. The curator also imports a CSV with bad rows and enters
 * an analogue from a publication. The library holds the
 * ~200 invented demo analogues besides. Screenshots 60-… in tests/e2e/screenshots/.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import type { Page } from 'playwright-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BuildupGeometry } from '../../shared/editor/model';
import { DEMO_SECTIONS, sectionGeometry } from '../../server/synth/demo';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { seedDemoLines, signIn } from '../helpers/e2e-demo';

const W = 2400;
const H = 750;

let t: TestApp;
let curatorBrowser: Browser;
let interpreterBrowser: Browser | null = null;
let tb11 = 0;
let tb14 = 0;
let kestrelBuildupId = 0;
let analogueId = 0;
let settingLabel = '';
let settingValue = '';

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  const { token, ...lines } = await seedDemoLines(t, { width: W, height: H }, { analogues: true });
  ({ tb11, tb14 } = lines);
  expect(tb11).toBeGreaterThan(0);
  expect(tb14).toBeGreaterThan(0);

  // Kestrel Knoll as its interpreter traced it: the synthetic section's true geometry at the seeded size.
  const def = DEMO_SECTIONS.find((d) => d.key === 'tb-11-kestrel-knoll')!;
  const g = sectionGeometry(def, { width: W, height: H });
  const b = g.pixelGeometry.buildups[0] as unknown as BuildupGeometry;
  const geometry: BuildupGeometry = {
    base: b.base,
    cycles: b.cycles.map((c) => ({ ...c, systemsTract: null })),
    terminations: b.terminations,
    topIsDrowningSurface: b.topIsDrowningSurface,
  };
  const created = await request(t.app).post(`/api/sections/${tb11}/buildups`).set(bearer(token)).send({ name: 'Kestrel Knoll' });
  expect(created.status, JSON.stringify(created.body)).toBe(201);
  const saved = await request(t.app).put(`/api/buildups/${created.body.id}`).set(bearer(token)).send({ version: created.body.version, geometry });
  expect(saved.status, JSON.stringify(saved.body)).toBe(200);
  kestrelBuildupId = created.body.id;

  const lists = await request(t.app).get('/api/analogues/lists').set(bearer(await t.token('curator')));
  expect(lists.status).toBe(200);
  const pinnacle = (lists.body.setting as { value: string; label: string }[]).find((i) => i.value === 'pinnacle') ?? lists.body.setting[0];
  settingLabel = pinnacle.label;
  settingValue = pinnacle.value;

  curatorBrowser = await openBrowser(t.running.url);
});

afterAll(async () => {
  await interpreterBrowser?.close();
  await curatorBrowser?.close();
  await t?.close();
});

/** Pick an option of a naive-ui select by its visible label. */
async function choose(page: Page, selectTest: string, label: string): Promise<void> {
  await page.click(`[data-test="${selectTest}"]`);
  await page.locator('.n-base-select-option', { hasText: label }).first().click();
}

describe('Analogue library in the browser', () => {
  it('the curator promotes Kestrel Knoll from its Readings', async () => {
    const page = curatorBrowser.page;
    await signIn(page, 'curator@tessel.example');
    await page.goto(`/sections/${tb11}/interpret`);
    await page.waitForSelector('[data-test="readings-library-actions"]');
    const promote = page.locator('[data-test="readings-promote"]');
    await expect.poll(() => promote.textContent()).toContain('Promote to library');
    await expect.poll(() => promote.isEnabled()).toBe(true);
    await curatorBrowser.shot('60-library-readings-actions');
    await promote.click();
    await page.waitForSelector('[data-test="promote-name"]');
    expect(await page.inputValue('[data-test="promote-name"]')).toBe('Kestrel Knoll');
    await choose(page, 'promote-setting', settingLabel);
    await curatorBrowser.shot('61-library-promote-dialog');
    await page.click('[data-test="promote-submit"]');
    await page.waitForSelector('[data-test="promote-done"]', { timeout: 60_000 });
    await page.click('[data-test="promote-open"]');
    await page.waitForURL(/\/library\/\d+$/);
    analogueId = Number(new URL(page.url()).pathname.split('/').pop());
    await page.waitForSelector('[data-test="analogue-name"]');
    expect(await page.textContent('[data-test="analogue-name"]')).toBe('Kestrel Knoll');
    // The engine classes the synthetic Kestrel Knoll as drowned or backstepping (generator: a backstepping pinnacle that drowned).
    expect(await page.textContent('[data-test="analogue-class"]')).toMatch(/Drowned|Backstepping/);
    expect(await page.textContent('[data-test="tag-setting"]')).toBe(settingLabel);
    expect(await page.locator('[data-test="analogue-numbers"] tr[data-test="metric-heightM"]').count()).toBe(1);
    await page.waitForSelector('[data-test="analogue-profile"] svg');
    await page.waitForSelector('[data-test="analogue-crop"] img', { timeout: 30_000 }).catch(() => undefined);
    await curatorBrowser.shot('62-library-analogue-detail');

    const api = await request(t.app).get(`/api/analogues/${analogueId}`).set(bearer(await t.token('curator')));
    expect(api.body).toMatchObject({ status: 'accepted', source: 'promoted', setting: settingValue, origin: { buildupId: kestrelBuildupId } });
  });

  it('the curator tags it: free tags, a class override with its reason and a location', async () => {
    const page = curatorBrowser.page;
    await page.click('[data-test="analogue-edit"]');
    await page.waitForSelector('[data-test="analogue-edit-form"]');
    // A free tag through the dynamic tag input.
    await page.locator('[data-test="edit-tags"] button').last().click();
    await page.keyboard.type('onlapped-top');
    await page.keyboard.press('Enter');
    // Override without a reason is refused, naming the field.
    await choose(page, 'edit-class', 'Backstepping');
    await page.fill('[data-test="edit-class-reason"]', '');
    await page.click('[data-test="analogue-edit-save"]');
    await page.waitForSelector('[data-test="analogue-edit-error"]');
    expect(await page.textContent('[data-test="analogue-edit-error"]')).toContain('classOverrideReason');
    await page.fill('[data-test="edit-class-reason"]', 'The youngest cycle still builds up on a narrower top; the onlap may be a later lowstand.');
    await page.fill('[data-test="edit-lat"] input', '-27.85');
    await page.fill('[data-test="edit-lon"] input', '63.49');
    await page.locator('[data-test="edit-lon"] input').press('Tab');
    await page.click('[data-test="analogue-edit-save"]');
    await page.waitForSelector('[data-test="analogue-edit-form"]', { state: 'detached' });
    await expect.poll(() => page.textContent('[data-test="tag-free"]')).toContain('#onlapped-top');
    expect(await page.textContent('[data-test="tag-class-reason"]')).toContain('still builds up on a narrower top');
    expect(await page.textContent('[data-test="analogue-class"]')).toContain('Backstepping');
    await curatorBrowser.shot('63-library-analogue-tagged');

    const api = await request(t.app).get(`/api/analogues/${analogueId}`).set(bearer(await t.token('curator')));
    expect(api.body).toMatchObject({ tags: ['onlapped-top'], classOverride: 'backstepping', class: 'backstepping', latitude: -27.85, longitude: 63.49 });
  });

  it('finds it in the search, on the map and by a box drawn around it', async () => {
    const page = curatorBrowser.page;
    await page.click('[data-test="nav-library"]');
    await page.waitForURL(/\/library$/);
    await page.waitForSelector('[data-test="library-rows"]');
    const all = Number((await page.textContent('[data-test="library-total"]'))!.replace(/\D/g, ''));
    expect(all).toBeGreaterThan(150); // the demo analogues and Kestrel Knoll
    // The facet count of the tag is 1 and ticking it narrows the list to Kestrel Knoll; the URL carries it.
    await page.waitForSelector('[data-test="facet-tags"] li');
    if (await page.locator('[data-test="facet-tags-more"]').count()) await page.click('[data-test="facet-tags-more"]');
    await page.waitForSelector('[data-test="facet-tags-onlapped-top"]');
    const tagCount = page.locator('[data-test="facet-tags"] li', { has: page.locator('[data-test="facet-tags-onlapped-top"]') }).locator('.count');
    expect(await tagCount.textContent()).toBe('1');
    await page.click('[data-test="facet-tags-onlapped-top"]');
    await page.waitForURL(/tags=onlapped-top/);
    await expect.poll(() => page.textContent('[data-test="library-total"]')).toMatch(/^1 analogue$/);
    expect(await page.locator(`[data-test="library-row-${analogueId}"]`).count()).toBe(1);
    await curatorBrowser.shot('64-library-search-tag');

    // The search exports as CSV with the same filters.
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-test="export-csv"]')]);
    const csvText = fs.readFileSync((await download.path())!, 'utf8');
    const csvLines = csvText.trim().split(/\r?\n/);
    expect(csvLines).toHaveLength(2); // header and Kestrel Knoll only
    expect(csvLines[1]).toContain('Kestrel Knoll');

    // Saved as a named search, it comes back from the list of saved searches.
    await page.click('[data-test="saved-searches"]');
    await page.fill('[data-test="saved-search-name"]', 'Onlapped tops');
    await page.click('[data-test="saved-search-save"]');
    await page.locator('[data-test="saved-searches-panel"] li', { hasText: 'Onlapped tops' }).waitFor();
    await page.click('[data-test="saved-searches"]'); // closes the panel
    await page.waitForSelector('[data-test="saved-searches-panel"]', { state: 'hidden' });

    // Map of the same search.
    await page.click('[data-test="view-map"]');
    await page.waitForURL(/view=map/);
    const point = page.locator(`[data-test="map-point"][data-id="${analogueId}"]`);
    await point.waitFor();
    await curatorBrowser.shot('65-library-map-tagged');

    // The whole library on the map, then a box drawn around Kestrel Knoll leaves it (and nothing from the far Pacific demo set).
    await page.goto('/library?view=map');
    await page.waitForSelector('[data-test="map-cluster"]');
    await point.waitFor();
    await curatorBrowser.shot('65-library-map-all');
    const at = (await point.boundingBox())!;
    const cx = at.x + at.width / 2;
    const cy = at.y + at.height / 2;
    await page.click('[data-test="map-mode-box"]');
    await page.mouse.move(cx - 40, cy - 30);
    await page.mouse.down();
    await page.mouse.move(cx, cy, { steps: 4 });
    await page.mouse.move(cx + 40, cy + 30, { steps: 4 });
    await page.mouse.up();
    await page.waitForURL(/bbox=/);
    await page.waitForSelector('[data-test="map-area"]');
    await expect.poll(() => page.locator('[data-test="map-point"]').count()).toBe(1);
    await point.waitFor();
    const bbox = new URL(page.url()).searchParams.get('bbox')!.split(',').map(Number);
    expect(bbox[0]).toBeLessThan(63.49);
    expect(bbox[2]).toBeGreaterThan(63.49);
    expect(bbox[1]).toBeLessThan(-27.85);
    expect(bbox[3]).toBeGreaterThan(-27.85);
    await curatorBrowser.shot('66-library-map-box');
    await page.click('[data-test="view-list"]');
    await expect.poll(() => page.textContent('[data-test="library-total"]')).toMatch(/^1 analogue$/);

    // The map's point opens the analogue.
    await page.click('[data-test="view-map"]');
    await point.click();
    await page.waitForURL(new RegExp(`/library/${analogueId}$`));
  });

  it('says so on its page when the live interpretation changes after the promotion', async () => {
    const page = curatorBrowser.page;
    const token = await t.token('interpreter');
    const live = await request(t.app).get(`/api/buildups/${kestrelBuildupId}`).set(bearer(token));
    expect(live.status, JSON.stringify(live.body)).toBe(200);
    const geometry = live.body.geometry as BuildupGeometry;
    const moved = { ...geometry, base: geometry.base.map(([x, y]) => [x, y + 2] as [number, number]) };
    const saved = await request(t.app).put(`/api/buildups/${kestrelBuildupId}`).set(bearer(token)).send({ version: live.body.version, geometry: moved });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    await page.goto(`/library/${analogueId}`);
    await page.waitForSelector('[data-test="analogue-live-changed"]');
    expect(await page.textContent('[data-test="analogue-live-changed"]')).toContain('has changed since');
  });

  it('finds it in a crossplot, highlighted among the library', async () => {
    const page = curatorBrowser.page;
    await page.goto(`/library?view=plots&x=areaM2&y=heightM&color=setting&mark=${analogueId}`);
    const chart = page.locator('[data-test="crossplot-chart"]');
    await chart.waitFor();
    await expect.poll(() => chart.getAttribute('data-marked')).toBe('Kestrel Knoll');
    expect(Number(await chart.getAttribute('data-plotted'))).toBeGreaterThan(150);
    expect(await page.textContent('[data-test="crossplot-note"]')).toContain('Log scale'); // areas span more than two decades
    await page.waitForTimeout(400); // let ECharts draw before the picture
    await curatorBrowser.shot('67-library-crossplot');
  });

  it('the curator imports a CSV: the report names the bad rows and only the good ones go in', async () => {
    const page = curatorBrowser.page;
    await page.goto('/library');
    await page.click('[data-test="saved-searches"]');
    await page.locator('[data-test="saved-searches-panel"] a', { hasText: 'Onlapped tops' }).click();
    await page.waitForURL(/tags=onlapped-top/);
    await page.waitForSelector('[data-test="saved-searches-panel"]', { state: 'hidden' });

    await page.click('[data-test="library-import"]');
    await page.waitForURL(/\/library\/import$/);
    // Invented rows: one good, then a word for a number, an unknown setting and feet in a metre column.
    const csv = [
      'Name,Setting,Height (m),Base width (m),Latitude,Longitude,Tags',
      'Harl Tor TB-X1,pinnacle,210,3400,-31.2,70.1,csv-batch',
      'Vessick Mound TB-X2,bank,tall,5200,-31.5,70.4,csv-batch',
      'Orrin Rise TB-X3,lagoon-shelf,150,2100,-31.8,70.9,csv-batch',
      'Tamsel Bank TB-X4,bank,95 ft,2600,-32.0,71.2,csv-batch',
    ].join('\n');
    await page.setInputFiles('[data-test="import-file-input"]', { name: 'tessel-analogues.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
    await page.waitForSelector('[data-test="import-mapping"]');
    await page.click('[data-test="import-check"]');
    await page.waitForSelector('[data-test="import-report"]');
    expect(await page.textContent('[data-test="import-good"]')).toContain('1 good');
    expect(await page.textContent('[data-test="import-bad"]')).toContain('3 bad');
    const problems = await page.locator('[data-test="import-problems"] tbody tr').allTextContents();
    expect(problems.join('\n')).toMatch(/not a number/);
    expect(problems.join('\n')).toMatch(/unknown tag/);
    expect(problems.join('\n')).toMatch(/wrong unit/);
    expect(await page.locator('[data-test="import-all"]').isDisabled()).toBe(true);
    await curatorBrowser.shot('67b-library-import-report');
    await page.click('[data-test="import-good-only"]');
    await page.waitForSelector('[data-test="import-result"]');
    expect(await page.textContent('[data-test="import-result"]')).toContain('1 analogue added');
    const found = await request(t.app).get('/api/analogues?tags=csv-batch').set(bearer(await t.token('curator')));
    expect(found.body.items.map((a: { name: string }) => a.name)).toEqual(['Harl Tor TB-X1']);
  });

  it('the curator enters an analogue from a publication; a missing field is named', async () => {
    const page = curatorBrowser.page;
    await page.goto('/library');
    await page.waitForSelector('[data-test="signin-email"], [data-test="library-total"]');
    if (page.url().includes('/sign-in')) await signIn(page, 'curator@tessel.example'); // when run alone (-t)
    await page.goto('/library');
    await page.click('[data-test="library-new"]');
    await page.waitForURL(/\/library\/new$/);
    await page.fill('[data-test="hand-name"]', 'Quillon Bank TB-P1');
    await page.fill('[data-test="hand-authors"]', 'Arvane, T.; Selk, M.');
    await page.fill('[data-test="hand-title"]', 'Seismic expression of drowned banks in the Tessel Basin');
    await page.fill('[data-test="hand-metric-heightM"] input', '820');
    await page.fill('[data-test="hand-metric-baseWidthM"] input', '9800');
    await page.click('[data-test="hand-save"]');
    await page.waitForSelector('[data-test="hand-entry-error"]');
    expect(await page.textContent('[data-test="hand-entry-error"]')).toContain('citation.year');
    await page.fill('[data-test="hand-year"] input', '2019');
    await page.locator('[data-test="hand-basis"] label', { hasText: 'in time' }).click();
    await page.click('[data-test="hand-save"]');
    await page.waitForSelector('[data-test="hand-entry-error"]');
    expect(await page.textContent('[data-test="hand-entry-error"]')).toContain('basisVelocityMs');
    await page.fill('[data-test="hand-velocity"] input', '4200');
    await page.locator('[data-test="hand-velocity"] input').press('Tab');

    // The profile traced on the publication's figure: an invented 600 × 300 px drawing of a mound on a flat base,
    // distance scale 0–3000 m between u = 100 and u = 500, depth scale 1000–1400 m between v = 50 and v = 250.
    const figure = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'cay-fig-')), 'quillon-figure.png');
    await sharp(
      Buffer.from(
        `<svg xmlns="http://www.w3.org/2000/svg" width="600" height="300"><rect width="600" height="300" fill="#fff"/>` +
          `<path d="M100 250 L500 250" stroke="#000" stroke-width="3"/><path d="M150 250 L300 110 L450 250" stroke="#444" stroke-width="3" fill="none"/>` +
          `<path d="M100 290 v-10 M500 290 v-10 M10 50 h10 M10 250 h10" stroke="#000" stroke-width="2"/></svg>`,
      ),
    )
      .png()
      .toFile(figure);
    await page.setInputFiles('[data-test="figure-file"]', figure);
    const stage = page.locator('[data-test="figure-stage"] .konvajs-content');
    await stage.waitFor();
    // the figure is fitted into the 900 × 460 stage: scale 1.5, centred vertically (5 px margin)
    const at = async (u: number, v: number) => {
      await stage.scrollIntoViewIfNeeded();
      const box = (await stage.boundingBox())!;
      await page.mouse.click(box.x + u * 1.5, box.y + 5 + v * 1.5);
    };
    await at(100, 285);
    await at(500, 285);
    await page.fill('[data-test="figure-x1"] input', '0');
    await page.fill('[data-test="figure-x2"] input', '3000');
    await page.click('[data-test="figure-target-scale-z"]');
    await at(15, 50);
    await at(15, 250);
    await page.fill('[data-test="figure-z1"] input', '1000');
    await page.fill('[data-test="figure-z2"] input', '1400');
    await page.click('[data-test="figure-target-base"]');
    await at(100, 250);
    await at(500, 250);
    await page.click('[data-test="figure-add-top"]');
    await at(150, 250);
    await at(300, 110);
    await at(300, 60); // a slip of the mouse, undone by keyboard
    await page.keyboard.press('Control+z');
    await at(450, 250);
    await page.waitForSelector('[data-test="figure-profile-ready"]');
    // crest at v = 110 → 1000 + 60/200 × 400 = 1120 m over a base at 1400 m: 280 m high, 3000 m across
    expect(await page.textContent('[data-test="figure-profile-ready"]')).toContain('3\u2009000 m across');
    await page.locator('[data-test="figure-profile-ready"]').scrollIntoViewIfNeeded();
    await curatorBrowser.shot('68-library-hand-entry');
    await page.click('[data-test="hand-save"]');
    await page.waitForURL(/\/library\/\d+$/);
    expect(await page.textContent('[data-test="analogue-name"]')).toBe('Quillon Bank TB-P1');
    expect(await page.textContent('[data-test="analogue-profile"]')).toContain('1 cycle top');
    expect(await page.textContent('[data-test="analogue-citation"]')).toContain('Arvane, T.; Selk, M. (2019)');
    expect(await page.textContent('[data-test="metric-heightM"]')).toContain('820');
  });

  it('the interpreter opens the Look-alikes of Marrow Bank from its Readings', async () => {
    interpreterBrowser = await openBrowser(t.running.url);
    const page = interpreterBrowser.page;
    await signIn(page, 'interpreter@tessel.example');
    await page.goto(`/sections/${tb14}/interpret`);
    const look = page.locator('[data-test="readings-look-alikes"]');
    await look.waitFor();
    await expect.poll(() => look.isEnabled()).toBe(true);
    // Interpreters ask a curator instead of promoting.
    expect(await page.textContent('[data-test="readings-promote"]')).toContain('Ask a curator');
    await look.click();
    await page.waitForURL(/\/library\/look-alikes\?buildup=\d+/);
    const matches = page.locator('[data-test="look-alikes-matches"] > li');
    await expect.poll(() => matches.count(), { timeout: 60_000 }).toBe(10);
    expect(await page.textContent('h1')).toContain('Marrow Bank');
    // Every match lists its per-metric differences and the two profiles overlaid.
    expect(await matches.first().locator('table.diffs tbody tr').count()).toBe(5);
    expect(await matches.first().locator('svg polyline').count()).toBe(2);
    const distances = await page.locator('[data-test="look-alikes-matches"] .dist').allTextContents();
    const values = distances.map((d) => Number(d.replace(/[^\d.]/g, '')));
    expect([...values].sort((a, b) => a - b)).toEqual(values); // nearest first
    await page.waitForSelector('[data-test="look-alikes-crossplot"]');
    await page.waitForTimeout(400);
    await interpreterBrowser.shot('69-look-alikes-metrics');

    // By shape, five of them.
    await page.click('[data-test="mode-shape"]');
    await page.fill('[data-test="look-alikes-k"] input', '5');
    await page.click('[data-test="look-alikes-find"]');
    await page.waitForURL(/mode=shape/);
    await expect.poll(() => matches.count(), { timeout: 60_000 }).toBe(5);
    expect(await page.textContent('[data-test="look-alikes-method"]')).toMatch(/L2|shape/i);
    expect(await matches.first().locator('svg polyline').count()).toBe(2);
    await interpreterBrowser.shot('70-look-alikes-shape');
  });

  it('the interpreter asks a curator to add Marrow Bank; the curator accepts it', async () => {
    const page = interpreterBrowser!.page;
    await page.goto(`/sections/${tb14}/interpret`);
    const ask = page.locator('[data-test="readings-promote"]');
    await ask.waitFor();
    await expect.poll(() => ask.isEnabled()).toBe(true);
    await ask.click();
    await page.click('[data-test="promote-submit"]');
    await page.waitForSelector('[data-test="promote-done"]', { timeout: 60_000 });
    expect(await page.textContent('[data-test="promote-done"]')).toContain('A curator will accept or decline');
    await page.click('[data-test="promote-open"]');
    await page.waitForURL(/\/library\/\d+$/);
    const id = Number(new URL(page.url()).pathname.split('/').pop());
    expect(await page.textContent('[data-test="analogue-pending"]')).toContain('A curator will accept or decline it');
    expect(await page.locator('[data-test="analogue-accept"]').count()).toBe(0);

    const curator = curatorBrowser.page;
    await curator.goto('/library?status=pending');
    await curator.locator(`[data-test="library-row-${id}"]`).waitFor();
    await curator.click(`[data-test="library-row-${id}"] a`);
    await curator.click('[data-test="analogue-accept"]');
    await curator.waitForSelector('[data-test="analogue-pending"]', { state: 'detached' });
    await curatorBrowser.shot('71-library-request-accepted');
    const api = await request(t.app).get(`/api/analogues/${id}`).set(bearer(await t.token('curator')));
    expect(api.body).toMatchObject({ name: 'Marrow Bank', status: 'accepted', requestedBy: { name: 'Ivo Marlstone' } });
  });
});
