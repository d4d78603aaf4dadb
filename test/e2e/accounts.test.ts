import { expect } from 'chai';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import request from 'supertest';
import { testApp, tokenFor } from '../helpers/api.js';
import { openBrowser, SCREENSHOTS, type BrowserSession } from '../helpers/browser.js';

/** The path and token of the newest e-mailed link to `path` for `to`. */
async function emailedLink(to: string, path: string): Promise<string> {
  for (let i = 0; i < 100; i++) {
    const msg = testApp().mailer.messages().find((m) => m.to.includes(to) && m.text.includes(path));
    const match = msg && new RegExp(`${path}\\?token=[A-Za-z0-9_-]+`).exec(msg.text.replace(/=\r?\n/g, ''));
    if (match) return match[0];
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no ${path} e-mail to ${to}`);
}

describe('pages: password reset and invitation acceptance (Chromium)', function () {
  this.timeout(60_000);
  this.retries(1);
  let session: BrowserSession;
  let page: Page;

  before(async () => {
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
  });
  beforeEach(async () => {
    page = await session.context.newPage();
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
  });
  afterEach(async function () {
    if (this.currentTest?.state === 'failed') await page.screenshot({ path: join(SCREENSHOTS, `failed-${this.currentTest.title.slice(0, 40).replace(/\W+/g, '-')}.png`) });
    await page.close();
  });

  it('"Forgot your password?" sends a link that sets a new password and signs in', async () => {
    const admin = { Authorization: `Bearer ${await tokenFor('admin')}` };
    await request(testApp()).post('/api/users').set(admin).send({ email: 'page-reset@fixture.test', name: 'Page Reset', role: 'viewer', password: 'first-harbour-lamp-1' });
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    await page.getByRole('heading', { name: 'Forgot your password?' }).waitFor();
    await page.getByLabel('E-mail').fill('page-reset@fixture.test');
    await page.getByRole('button', { name: 'Send the link' }).click();
    await page.getByRole('status').waitFor();
    expect(await page.getByRole('status').textContent()).to.contain('link to reset its password');
    const link = await emailedLink('page-reset@fixture.test', '/reset-password');
    await page.goto(`${session.baseUrl}${link}`);
    await page.getByRole('heading', { name: 'Choose a new password' }).waitFor();
    await page.getByLabel('New password', { exact: true }).fill('Password2024!');
    await page.getByLabel('Repeat the password').fill('Password2024!');
    await page.getByRole('button', { name: 'Save the new password' }).click();
    await page.getByRole('alert').waitFor();
    expect(await page.getByRole('alert').textContent()).to.contain('well-known password');
    await page.getByLabel('New password', { exact: true }).fill('second-harbour-lamp-2');
    await page.getByLabel('Repeat the password').fill('second-harbour-lamp-2');
    await page.screenshot({ path: join(SCREENSHOTS, 'password-reset.png') });
    await page.getByRole('button', { name: 'Save the new password' }).click();
    await page.waitForURL(/\/sar(\?|$)/);
  });

  it('an invitation link creates the account with its password and signs in', async () => {
    const admin = { Authorization: `Bearer ${await tokenFor('admin')}` };
    const res = await request(testApp()).post('/api/users/invitations').set(admin).send({ email: 'page-invitee@fixture.test', name: 'Page Invitee', role: 'chemist' });
    expect(res.status).to.equal(201);
    const link = await emailedLink('page-invitee@fixture.test', '/accept-invitation');
    await page.goto(`${session.baseUrl}${link}`);
    await page.getByRole('heading', { name: 'Welcome to Ligandry' }).waitFor();
    await page.getByLabel('New password', { exact: true }).fill('quiet-harbour-lamp-9');
    await page.getByLabel('Repeat the password').fill('quiet-harbour-lamp-8');
    await page.getByRole('button', { name: 'Create my account' }).click();
    expect(await page.getByText('The two passwords differ').isVisible()).to.equal(true);
    await page.getByLabel('Repeat the password').fill('quiet-harbour-lamp-9');
    await page.screenshot({ path: join(SCREENSHOTS, 'accept-invitation.png') });
    await page.getByRole('button', { name: 'Create my account' }).click();
    await page.waitForURL(/\/sar(\?|$)/);
    const login = await request(testApp()).post('/api/auth/login').send({ email: 'page-invitee@fixture.test', password: 'quiet-harbour-lamp-9' });
    expect(login.status).to.equal(200);
  });
});
