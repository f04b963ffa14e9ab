/** An admin's round: open Users, search, invite a colleague, deactivate them. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn } from '../helpers/e2e-demo';
import { readSink } from '../../server/mail/sink';
import path from 'node:path';

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

describe('admin users page', () => {
  it('lists, searches, invites and deactivates accounts', async () => {
    const { page } = b;
    await signIn(page, 'admin@tessel.example');
    await page.goto('/admin/users');
    const table = page.locator('[data-test="users-table"]');
    await table.getByText('reviewer@tessel.example').waitFor();
    await expect.poll(() => table.locator('tbody tr').count()).toBe(4);
    await expect.poll(() => table.textContent()).toMatch(/4 accounts/);

    await page.fill('[data-test="users-search"]', 'cora');
    await expect.poll(() => table.locator('tbody tr').count()).toBe(1);
    await page.fill('[data-test="users-search"]', '');

    await page.click('[data-test="new-user"]');
    await page.fill('[data-test="user-name"]', 'Nell Gannet');
    await page.fill('[data-test="user-email"]', 'nell@tessel.example');
    await page.click('[data-test="create-user-submit"]');
    await table.getByText('nell@tessel.example').waitFor();
    await b.shot('50-admin-users');
    await expect.poll(() => readSink(path.join(t.storageDir, 'mail')).some((m) => m.to.includes('nell@tessel.example'))).toBe(true);

    const row = table.locator('tbody tr', { hasText: 'nell@tessel.example' });
    await row.locator('[data-test="user-deactivate"]').click();
    await page.click('[data-test="confirm-ok"]');
    await row.locator('[data-test="user-reactivate"]').waitFor();
  });
});
