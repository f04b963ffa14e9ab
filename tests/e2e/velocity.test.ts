/**
 * The velocity model editor in Chromium at 1440 × 900, on line TB-14 (the
 * demo interpretation): the interpreter opens the editor and changes the
 * seafloor; meanwhile the admin saves another model; the interpreter's save
 * meets it instead of overwriting it (the drawer keeps the typed value and
 * names who saved), loads theirs, changes it and saves. Screenshots velocity-… in
 * tests/e2e/screenshots/.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { seedDemoLines, signIn } from '../helpers/e2e-demo';

let t: TestApp;
let b: Browser;
let tb14 = 0;
let token = '';

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  ({ tb14, token } = await seedDemoLines(t, { width: 1600, height: 500 }));
  b = await openBrowser(t.running.url);
}, 240_000);
afterAll(async () => {
  await b?.close();
  await t?.close();
});

describe('velocity model editor', () => {
  it('a save that meets the admin’s newer model keeps the typed value, names the admin, loads theirs on request, then saves', async () => {
    const page = b.page;
    const url = `/api/sections/${tb14}/velocity`;
    const admin = bearer(await t.token('admin'));
    const adminName: string = (await request(t.app).get('/api/auth/me').set(admin)).body.user.name;
    await signIn(page, 'interpreter@tessel.example');
    await page.goto(`/sections/${tb14}/interpret`);
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
});
