import { expect } from 'chai';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { openBrowser, SCREENSHOTS, signIn, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';

describe('pages: sign-in and the app shell (Chromium)', function () {
  this.timeout(60_000);
  // A browser test may be retried once for timing (each test opens its own page); a real fault
  // fails both attempts. A failed attempt leaves a screenshot in test-output/screenshots.
  this.retries(1);
  let session: BrowserSession;
  let page: Page;
  const failedRequests: string[] = [];

  before(async () => {
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
  });
  beforeEach(async () => {
    await session.context.clearCookies();
    page = await session.context.newPage();
    page.on('requestfailed', (r) => failedRequests.push(r.url()));
    page.on('request', (r) => {
      if (!r.url().startsWith(session.baseUrl) && !r.url().startsWith('data:')) failedRequests.push(`foreign: ${r.url()}`);
    });
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
  });
  afterEach(async function () {
    if (this.currentTest?.state === 'failed') await page.screenshot({ path: join(SCREENSHOTS, `failed-${this.currentTest.title.slice(0, 40).replace(/\W+/g, '-')}.png`) });
    await page.close();
  });

  it('sends a visitor to sign-in and loads nothing from another host', async () => {
    await page.goto(`${session.baseUrl}/admin`);
    await page.waitForURL(/\/sign-in\?returnUrl=%2Fadmin/);
    await page.getByRole('button', { name: 'Sign in' }).waitFor();
    await page.evaluate(() => document.fonts.ready);
    const roboto = await page.evaluate(() => document.fonts.check('16px Roboto'));
    expect(roboto).to.equal(true);
    await page.screenshot({ path: join(SCREENSHOTS, 'sign-in.png') });
    expect(failedRequests.filter((u) => u.startsWith('foreign'))).to.deep.equal([]);
  });

  it('shows a clear message for a wrong password', async () => {
    await signIn(page, session.baseUrl, fixtureEmail('chemist'), 'wrong-password-0');
    const alert = page.getByRole('alert');
    await alert.waitFor();
    expect(await alert.textContent()).to.contain('E-mail or password is incorrect.');
  });

  it('signs the chemist in to the shell, on the SAR table, with every section but Review and Admin', async () => {
    await signIn(page, session.baseUrl, fixtureEmail('chemist'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await page.getByRole('heading', { name: 'SAR table', exact: true }).waitFor();
    const nav = await page.locator('nav [data-nav]').evaluateAll((els) => els.map((e) => e.getAttribute('data-nav')));
    expect(nav).to.deep.equal(['compounds', 'assays', 'sar', 'overview', 'selectivity']);
    expect(await page.getByRole('button', { name: 'Account menu' }).textContent()).to.contain('Fixture Chemist');
    await page.screenshot({ path: join(SCREENSHOTS, 'shell-chemist.png') });
  });

  it('gives the viewer no Admin entry, and the Admin address shows "not available"', async () => {
    await signIn(page, session.baseUrl, fixtureEmail('viewer'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await page.locator('nav [data-nav]').first().waitFor();
    expect(await page.locator('nav [data-nav="admin"]').count()).to.equal(0);
    await page.goto(`${session.baseUrl}/admin`);
    await page.getByRole('heading', { name: 'Not available to your role' }).waitFor();
  });

  it('lets the admin see users, and sign out returns to sign-in', async () => {
    await signIn(page, session.baseUrl, fixtureEmail('admin'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await page.locator('nav [data-nav="admin"]').click();
    await page.getByRole('heading', { name: 'Users and roles' }).waitFor();
    await page.getByRole('cell', { name: 'chemist@fixture.test', exact: true }).waitFor();
    await page.screenshot({ path: join(SCREENSHOTS, 'admin-users.png') });
    await page.getByRole('button', { name: 'Account menu' }).click();
    await page.getByRole('menuitem', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in/);
    await page.goto(`${session.baseUrl}/compounds`);
    await page.waitForURL(/\/sign-in/);
  });

  it('lets the admin create a user from the dialog and shows server errors in the form', async () => {
    await signIn(page, session.baseUrl, fixtureEmail('admin'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await page.goto(`${session.baseUrl}/admin`);
    await page.getByRole('button', { name: 'New user' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByLabel('Name').waitFor();
    await dialog.getByLabel('Name').fill('Browser Made');
    await dialog.getByLabel('E-mail').fill('chemist@fixture.test');
    await dialog.getByLabel('Initial password').fill('estuary-heron-2026');
    expect(await dialog.getByLabel('Name').inputValue()).to.equal('Browser Made');
    expect(await dialog.getByLabel('E-mail').inputValue()).to.equal('chemist@fixture.test');
    const answered = page.waitForResponse((r) => r.url().endsWith('/api/users') && r.request().method() === 'POST');
    await dialog.getByRole('button', { name: 'Create user' }).click();
    expect((await answered).status()).to.equal(409);
    await dialog.getByRole('alert').waitFor();
    expect(await dialog.getByRole('alert').textContent()).to.contain('already exists');
    const email = `browser.made.${Date.now()}@fixture.test`;
    await dialog.getByLabel('E-mail').fill(email);
    await dialog.getByRole('button', { name: 'Create user' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page.getByRole('cell', { name: email, exact: true }).waitFor();
  });

  it('sends the user back to sign-in when the session is no longer valid', async () => {
    const refreshed = page.waitForResponse((r) => r.url().endsWith('/api/auth/me'));
    await signIn(page, session.baseUrl, fixtureEmail('lead'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await refreshed; // the shell re-reads the user once; tamper only after it stored the session
    await page.evaluate(() => {
      const s = JSON.parse(localStorage.getItem('ligandry.session')!);
      const [head, payload, sig] = s.token.split('.');
      s.token = `${head}.${payload}.${sig.slice(0, 10)}${sig[10] === 'A' ? 'B' : 'A'}${sig.slice(11)}`;
      localStorage.setItem('ligandry.session', JSON.stringify(s));
    });
    await page.reload();
    await page.waitForURL(/\/sign-in\?.*reason=expired/);
    await page.getByText('Your session ended.').waitFor();
  });
});
