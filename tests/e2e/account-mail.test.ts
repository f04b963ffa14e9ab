/**
 * Account e-mails and the bell in a browser: an admin invites a colleague and
 * reads the invitation in the Outbox; the colleague follows the link, chooses
 * a password and signs in; the bell counts a new notification without a page
 * reload and leads to its place; the account page switches to a daily digest
 * and changes the password; "forgot password" answers from the sign-in page.
 * Screenshots in tests/e2e/screenshots/ (80-… onwards).
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ctx } from '../../server/context';
import { notify } from '../../server/services/notify.service';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { openBrowser, type Browser } from '../helpers/browser';
import { signIn, signOut } from '../helpers/e2e-demo';

let t: TestApp;
let b: Browser;
let demoId: number;

beforeAll(async () => {
  t = await createTestApp({ listen: true });
  b = await openBrowser(t.running.url);
  const projects = await request(t.app).get('/api/projects').set(bearer(await t.token('admin')));
  demoId = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening').id;
}, 120_000);
afterAll(async () => {
  await b?.close();
  await t?.close();
});


describe('account e-mails and the bell', () => {
  it('invitation read in the Outbox → set password → sign in; bell; account settings; forgot password', async () => {
    const { page } = b;
    await signIn(page, 'admin@tessel.example', 'cayline-demo');
    await page.goto('/admin/users');
    await page.click('[data-test="new-user"]');
    await page.fill('[data-test="user-name"]', 'Nell Gannet');
    await page.fill('[data-test="user-email"]', 'nell@tessel.example');
    await page.click('[data-test="create-user-submit"]');
    await page.locator('[data-test="users-table"]').getByText('nell@tessel.example').waitFor();

    // the Outbox lists it; reading it shows the link and no password
    await page.click('[data-test="nav-admin-outbox"]');
    await page.waitForURL(/\/admin\/outbox$/);
    const row = page.locator('[data-test="outbox-row"]', { hasText: 'You are invited to Cayline' });
    await row.first().click();
    await expect.poll(() => page.locator('[data-test="outbox-to"]').textContent()).toBe('nell@tessel.example');
    const text = (await page.locator('[data-test="outbox-text"]').textContent()) ?? '';
    expect(text).toContain('Choose your own password here');
    expect(text).not.toMatch(/password is/i);
    const link = await page.locator('[data-test="outbox-link"]').first().getAttribute('href');
    expect(link).toMatch(new RegExp(`^${t.running.url}/set-password\\?token=`));
    await b.shot('80-outbox-invitation');
    await signOut(page);

    // the colleague follows the link
    await page.goto(link!);
    await page.locator('[data-test="set-password-form"]').waitFor();
    await page.fill('[data-test="new-password"]', 'gannet-nest-42');
    await page.fill('[data-test="repeat-password"]', 'gannet-nest-4');
    await page.click('[data-test="set-password-submit"]');
    await page.getByText('does not match the new password').waitFor();
    await page.fill('[data-test="repeat-password"]', 'gannet-nest-42');
    await b.shot('81-set-password');
    await page.click('[data-test="set-password-submit"]');
    await page.waitForURL(/\/sign-in\?email=/);
    expect(await page.inputValue('[data-test="signin-email"]')).toBe('nell@tessel.example');
    // the same link a second time: refused, with a way to ask for a new one
    await page.goto(link!);
    await page.locator('[data-test="set-password-form"]').waitFor();
    await page.fill('[data-test="new-password"]', 'gannet-nest-43');
    await page.fill('[data-test="repeat-password"]', 'gannet-nest-43');
    await page.click('[data-test="set-password-submit"]');
    await expect.poll(() => page.locator('[data-test="set-password-problem"]').textContent()).toMatch(/already been used/);
    await b.shot('82-set-password-used');

    // signed in, the bell is empty; a mention arrives and the count shows up without a reload
    const nell = (await request(t.app).get('/api/users?q=nell').set(bearer(await t.token('admin')))).body.items[0].id as number;
    await request(t.app).post(`/api/projects/${demoId}/members`).set(bearer(await t.token('admin'))).send({ userId: nell });
    await signIn(page, 'nell@tessel.example', 'gannet-nest-42');
    await page.locator('[data-test="bell"]').waitFor();
    expect(await page.locator('[data-test="bell-count"]').count()).toBe(0);
    const reviewer = (await request(t.app).get('/api/auth/me').set(bearer(await t.token('reviewer')))).body.user.id as number;
    await ctx().sequelize.transaction((tx) =>
      notify({ kind: 'mention', recipientIds: [nell], actorId: reviewer, projectId: demoId, subject: 'Remy Dunlin mentioned you on Kestrel Knoll', text: 'Is the second cycle top on the right reflector?', link: `/projects/${demoId}` }, tx),
    );
    await page.locator('[data-test="bell-count"]').waitFor({ timeout: 30_000 }); // the bell polls every 20 s
    expect(await page.locator('[data-test="bell-count"]').textContent()).toBe('1');
    await page.click('[data-test="bell"]');
    await page.locator('[data-test="bell-item"]').first().waitFor();
    await page.waitForTimeout(400); // the popover's fade-in, for the picture only
    await b.shot('83-bell-open');
    await page.locator('[data-test="bell-item"]').first().click();
    await page.waitForURL(new RegExp(`/projects/${demoId}$`));
    await expect.poll(() => page.locator('[data-test="bell-count"]').count()).toBe(0);

    // account settings: daily digest, then a password change
    await page.goto('/account');
    await page.click('[data-test="notify-digest"]');
    const other = (await request(t.app).post('/api/auth/login').send({ email: 'nell@tessel.example', password: 'gannet-nest-42' })).body.token as string;
    await expect
      .poll(async () => (await request(t.app).get('/api/account/preferences').set(bearer(other))).body.notifyMode)
      .toBe('digest');
    await page.fill('[data-test="current-password"]', 'wrong-one-entirely');
    await page.fill('[data-test="change-new-password"]', 'gannet-flight-7');
    await page.fill('[data-test="change-repeat-password"]', 'gannet-flight-7');
    await page.click('[data-test="change-password-submit"]');
    await page.getByText('is not your current password').waitFor();
    await page.fill('[data-test="current-password"]', 'gannet-nest-42');
    await page.click('[data-test="change-password-submit"]');
    await page.locator('[data-test="password-changed"]').waitFor();
    await b.shot('84-account-settings');
    expect((await request(t.app).get('/api/auth/me').set(bearer(other))).status).toBe(401); // the other session ended
    expect((await page.evaluate(() => fetch('/api/auth/me', { headers: { Authorization: `Bearer ${JSON.parse(localStorage.getItem('cayline.session')!).token}` } }).then((r) => r.status)))).toBe(200);
    await signOut(page);

    // forgot password from the sign-in page
    await page.click('[data-test="forgot-link"]');
    await page.waitForURL(/\/forgot-password$/);
    await page.fill('[data-test="forgot-email"]', 'nell@tessel.example');
    await page.click('[data-test="forgot-submit"]');
    await page.locator('[data-test="forgot-sent"]').waitFor();
    expect(await page.locator('[data-test="forgot-sent"]').textContent()).toMatch(/If an active account uses this address/);
    await b.shot('85-forgot-password');
  }, 120_000);
});
