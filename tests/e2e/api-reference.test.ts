/** The API reference page: from the account menu, areas and operations, a body's fields, the filter. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';
import { routeTable } from '../../server/openapi/route-table';

let t: TestApp;
let b: Browser;
beforeAll(async () => {
  t = await createTestApp({ listen: true });
  b = await openBrowser(t.running.url);
});
afterAll(async () => {
  await b?.close();
  await t?.close();
});

describe('API reference page', () => {
  it('is reached from the account menu and lists every operation with its body fields', async () => {
    const { page } = b;
    await signIn(page, 'reviewer@tessel.example');
    await page.click('[data-test="user-menu"]');
    await page.click('[data-test="nav-api-reference"]');
    await page.waitForURL(/\/api-reference$/);
    const total = routeTable(t.app).length;
    await expect.poll(() => page.locator('[data-test="api-reference-count"]').textContent()).toBe(`${total} operations`);
    expect(await page.locator('[data-test="api-operation"]').count()).toBe(total);

    // open POST /api/projects: its body lists the name field as required
    const projects = page.locator('[data-test="api-tag-projects"]');
    const create = projects.locator('[data-test="api-operation"]', { has: page.locator('code.path', { hasText: /^\/api\/projects$/ }) }).filter({ hasText: 'POST' });
    await create.locator('.n-collapse-item__header').click();
    const body = create.locator('[data-test="api-body"]');
    await body.waitFor();
    expect(await body.textContent()).toMatch(/name\*\s*string/);
    expect(await create.textContent()).toMatch(/admin/);
    await page.waitForTimeout(400); // the opening animation, for the screenshot only
    await b.shot('60-api-reference');

    // an upload is a form body: the file field and the text fields
    await page.fill('[data-test="api-reference-filter"] input', 'post /api/projects/{projectId}/sections');
    await expect.poll(() => page.locator('[data-test="api-operation"]').count()).toBe(1);
    await page.locator('[data-test="api-operation"] .n-collapse-item__header').click();
    const form = page.locator('[data-test="api-body"]');
    await form.waitFor();
    expect(await form.textContent()).toMatch(/multipart\/form-data[\s\S]*image\*\s*string[\s\S]*binary/);
    await page.waitForTimeout(400); // the opening animation, for the screenshot only
    await b.shot('62-api-reference-upload');

    await page.fill('[data-test="api-reference-filter"] input', 'health');
    await expect.poll(() => page.locator('[data-test="api-operation"]').count()).toBe(3);
    expect(await page.locator('[data-test="api-tag-health"]').textContent()).toMatch(/public/);
    await b.shot('61-api-reference-filtered');
  });
});
