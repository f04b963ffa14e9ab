/**
 * Steps the end-to-end tests share: signing in and out through the page, and
 * the invented demo scenario (lines TB-11 and TB-14 seeded with the demo
 * interpretation, Marrow Bank traced on TB-14) set up through the API.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Page } from 'playwright-core';
import request from 'supertest';
import { ROOT_DIR } from '../../server/config';
import { ctx } from '../../server/context';
import { seedDemoAnalogues } from '../../server/db/seeders/analogues';
import { seedDemoInterpretation } from '../../server/db/seeders/interpretations';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { bearer, type TestApp } from './app';
import { waitForStatus } from './sections';

type Pt = [number, number];

export interface FixtureCycle {
  top: Pt[];
  marginLeft: Pt;
  marginRight: Pt;
  flankLeft?: Pt[];
  flankRight?: Pt[];
}
/** The generator's fixture of TB-11 (Kestrel Knoll): its true geometry in the fixture's own pixel size. */
export interface KestrelFixture {
  width: number;
  height: number;
  pixelGeometry: { buildups: { base: Pt[]; cycles: FixtureCycle[] }[] };
}
export function kestrelKnollFixture(): KestrelFixture {
  return JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'tests/fixtures/synthetic/tb-11-kestrel-knoll.json'), 'utf8')) as KestrelFixture;
}

/** The password every demo account is seeded with. */
export const DEMO_PASSWORD = 'cayline-demo';

/** Sign in on the sign-in page and wait for the projects list. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto('/sign-in');
  await page.fill('[data-test="signin-email"]', email);
  await page.fill('[data-test="signin-password"]', password);
  await page.click('[data-test="signin-submit"]');
  await page.waitForURL(/\/projects/);
}

/**
 * Sign out from the user menu and wait for the sign-in page. On a loaded
 * machine a click can land while the menu's popover is still opening or
 * closing and be lost, so the menu is opened and the item clicked again (at
 * most three times) until the sign-in page shows.
 */
export async function signOut(page: Page): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    const item = page.locator('[data-test="sign-out"]');
    if (!(await item.isVisible())) await page.click('[data-test="user-menu"]');
    await item.click();
    try {
      await page.waitForURL(/\/sign-in/, { timeout: 15_000 });
      return;
    } catch (e) {
      if (attempt >= 3) throw e;
    }
  }
}

export interface DemoLines {
  /** The interpreter's token the set-up used. */
  token: string;
  tb11: number;
  tb14: number;
}

/**
 * Seeds the demo sections at the given size and the demo interpretation
 * (with the demo analogues when asked), waits until every section is ready
 * and finds lines TB-11 and TB-14 (0 when a line is not seeded).
 */
export async function seedDemoLines(t: TestApp, size: { width: number; height: number }, opts: { analogues?: boolean } = {}): Promise<DemoLines> {
  const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
  const { seeded } = await seedDemoSections(deps, size);
  await seedDemoInterpretation(deps);
  if (opts.analogues) await seedDemoAnalogues(ctx().sequelize);
  const token = await t.token('interpreter');
  for (const id of seeded) await waitForStatus(t, token, id);
  const out: DemoLines = { token, tb11: 0, tb14: 0 };
  for (const id of seeded) {
    const s = await request(t.app).get(`/api/sections/${id}`).set(bearer(token));
    if (s.body.lineName === 'TB-11') out.tb11 = id;
    if (s.body.lineName === 'TB-14') out.tb14 = id;
  }
  return out;
}

/** The demo interpretation's Marrow Bank on TB-14: its id and the right Margin pin of its youngest cycle. */
export async function marrowBank(t: TestApp, token: string, tb14: number): Promise<{ id: number; margin: Pt }> {
  const list = await request(t.app).get(`/api/sections/${tb14}/buildups`).set(bearer(token));
  const bank = list.body.find((x: { name: string }) => x.name === 'Marrow Bank');
  const cycles = bank.geometry.cycles as { marginRight: Pt }[];
  return { id: bank.id, margin: cycles[cycles.length - 1].marginRight };
}

/** Image px → page px through the interpretation stage's current view (exposed as data attributes). */
export async function screenOf(page: Page, p: Pt): Promise<Pt> {
  const d = await page.locator('[data-test="interpret-stage"]').evaluate((el) => ({ ...(el as HTMLElement).dataset }));
  const box = (await page.locator('[data-test="section-stage"]').boundingBox())!;
  return [box.x + p[0] * Number(d.viewScale) + Number(d.viewX), box.y + p[1] * Number(d.viewScale) * Number(d.viewStretch) + Number(d.viewY)];
}
