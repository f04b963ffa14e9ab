/**
 * A new user's first minutes: open the app, sign in as the interpreter,
 * create a project, find it in the list. Screenshots in tests/e2e/screenshots/.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';

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

describe('foundation journey', () => {
  it('signs in, creates a project and sees it in the list', async () => {
    const { page } = b;
    await page.goto('/');
    await page.waitForURL(/\/sign-in/);
    await page.locator('[data-test="signin-form"]').waitFor();
    await b.shot('01-sign-in');

    // A wrong password first: the error says so without naming which part was wrong.
    await page.fill('[data-test="signin-email"]', 'interpreter@tessel.example');
    await page.fill('[data-test="signin-password"]', 'not-the-password');
    await page.click('[data-test="signin-submit"]');
    await expect.poll(() => page.locator('[data-test="signin-error"]').textContent()).toMatch(/do not match/i);

    await page.fill('[data-test="signin-password"]', 'cayline-demo');
    await page.click('[data-test="signin-submit"]');
    await page.waitForURL(/\/projects$/);
    await page.locator('[data-test="projects-table"]').getByText('Tessel Basin screening').waitFor();
    await b.shot('02-projects');

    await page.click('[data-test="new-project"]');
    await page.locator('[data-test="new-project-modal"]').waitFor();
    await page.click('[data-test="create-project-submit"]');
    // Empty name: the form names the field.
    await expect.poll(() => page.locator('[data-test="new-project-modal"]').textContent()).toMatch(/required/i);
    await page.fill('[data-test="project-name"]', 'Kestrel Knoll margins');
    await page.fill('[data-test="project-description"]', 'Margin backstep on TB-11');
    await b.shot('03-new-project');
    await page.click('[data-test="create-project-submit"]');
    await page.locator('[data-test="project-header"]').getByText('Kestrel Knoll margins').waitFor();
    await b.shot('04-project');

    await page.click('[data-test="nav-projects"]');
    await page.locator('[data-test="projects-table"]').getByText('Kestrel Knoll margins').waitFor();
    await b.shot('05-projects-after');
    const rows = await page.locator('[data-test="projects-table"] tbody tr').count();
    expect(rows).toBeGreaterThanOrEqual(2);
  });

  it('finds a colleague by exact e-mail, adds them and hands the project over', async () => {
    const { page } = b;
    // Someone the interpreter shares no project with: only their complete address finds them.
    const made = await request(t.app)
      .post('/api/users')
      .set(bearer(await t.token('admin')))
      .send({ email: 'wren.holt@tessel.example', name: 'Wren Holt', role: 'interpreter', password: 'long-enough-pw' });
    expect(made.status).toBe(201);

    await page.locator('[data-test="projects-table"]').getByText('Kestrel Knoll margins').click();
    const card = page.locator('[data-test="members-card"]');
    await card.locator('[data-test="member-owner"]').waitFor(); // the creator owns it
    await card.locator('[data-test="add-member-select"]').click();
    await page.keyboard.type('wren.holt@');
    await page.locator('[data-test="add-member-hint"]').waitFor(); // a partial address lists nobody
    await page.keyboard.type('tessel.example');
    await page.locator('.n-base-select-option', { hasText: 'wren.holt@tessel.example' }).click();
    await card.locator('[data-test="add-member-submit"]').click();
    const row = card.locator('li', { hasText: 'Wren Holt' });
    await row.waitFor();
    await b.shot('06-member-added');

    await row.locator('[data-test="make-owner"]').click();
    await page.locator('.n-popconfirm__action button', { hasText: 'Make owner' }).click();
    await row.locator('[data-test="member-owner"]').waitFor();
    await expect.poll(() => card.locator('[data-test="member-owner"]').count()).toBe(1);
    // The former owner may no longer hand the project on.
    await expect.poll(() => card.locator('[data-test="make-owner"]').count()).toBe(0);
    await b.shot('07-owner-moved');
  });
});
