import { expect } from 'chai';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { openBrowser, shootFullPage, signedInPage, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';

// An invented, unusual molecule (new to the test database) and another spelling of its parent as a hydrochloride.
const SMILES = 'O=C(NC1CCN(Cc2ccc(F)cc2)CC1)c1ccc2[nH]ccc2c1';
const SAME_PARENT_AS_HCL = 'Fc1ccc(CN2CCC(NC(=O)c3ccc4[nH]ccc4c3)CC2)cc1.Cl';


describe('pages: compound registry (Chromium)', function () {
  this.timeout(90_000);
  let session: BrowserSession;
  let page: Page;
  let registered = '';
  const foreign: string[] = [];
  const pageErrors: string[] = [];

  before(async () => {
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
  });
  beforeEach(async () => {
    page = await signedInPage(session, fixtureEmail('chemist'), foreign, pageErrors);
  });
  afterEach(async () => {
    await page.close();
    expect(foreign, 'requests to other hosts').to.deep.equal([]);
    expect(pageErrors, 'uncaught page errors').to.deep.equal([]);
  });

  it('registers a pasted SMILES after a live preview and opens the new compound', async () => {
    await page.getByRole('link', { name: 'Register compound' }).click();
    await page.waitForURL(/\/compounds\/register$/);
    await page.getByLabel('SMILES or molfile').fill(SMILES);
    const formula = page.getByTestId('formula');
    await formula.waitFor();
    expect(await formula.textContent()).to.equal('C21H22FN3O');
    expect(await page.getByTestId('salt').textContent()).to.contain('parent (no salt or solvate)');
    await page.getByLabel('Name').fill('Indole carboxamide, browser test');
    await page.getByLabel('Aliases').fill('E2E-1, IND-F');
    await page.getByLabel('Purity').fill('97.5');
    await shootFullPage(page, 'registry-register-preview.png');

    await page.getByRole('button', { name: 'Register', exact: true }).click();
    await page.waitForURL(/\/compounds\/[A-Z]+-\d{6}$/);
    registered = decodeURIComponent(page.url().split('/').pop()!);
    const heading = page.getByTestId('registry-number');
    await heading.waitFor();
    expect(await heading.textContent()).to.equal(registered);
    await page.getByText(`Registered ${registered}`, { exact: true }).waitFor();
    expect(await page.getByText('Indole carboxamide, browser test').count()).to.equal(1);
    expect(await page.getByTestId('batches').getByRole('row').count()).to.equal(2); // header + first batch
    await page.getByRole('img', { name: `Structure of ${registered}` }).locator('svg').waitFor();
    await shootFullPage(page, 'registry-compound-page.png');
  });

  it('shows the duplicate banner for another spelling of the same parent, linking to the existing compound', async () => {
    expect(registered, 'the previous test registers the compound').to.match(/-\d{6}$/);
    await page.goto(`${session.baseUrl}/compounds/register`);
    await page.getByLabel('SMILES or molfile').fill(SAME_PARENT_AS_HCL);
    const banner = page.getByTestId('duplicate-banner');
    await banner.waitFor();
    expect(await banner.textContent()).to.contain(`Already registered as ${registered}`);
    expect(await page.getByTestId('salt').textContent()).to.contain('hydrochloride');
    expect(await page.getByRole('button', { name: 'Register', exact: true }).isDisabled()).to.equal(true);
    await shootFullPage(page, 'registry-duplicate.png');

    await banner.getByRole('link', { name: registered }).click();
    await page.waitForURL(new RegExp(`/compounds/${registered}$`));
    await page.getByTestId('registry-number').waitFor();
    expect(await page.getByTestId('registry-number').textContent()).to.equal(registered);
  });

  it('adds the hydrochloride as a batch of the existing compound instead', async () => {
    await page.goto(`${session.baseUrl}/compounds/register`);
    await page.getByLabel('SMILES or molfile').fill(SAME_PARENT_AS_HCL);
    await page.getByTestId('duplicate-banner').waitFor();
    await page.getByRole('button', { name: `Add a batch to ${registered} instead` }).click();
    const dialog = page.getByRole('dialog');
    await dialog.waitFor();
    expect(await dialog.getByLabel('Structure of this batch (optional)').inputValue()).to.equal(SAME_PARENT_AS_HCL);
    await dialog.getByLabel('Amount').fill('25');
    await dialog.getByRole('button', { name: 'Add batch' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page.locator('mat-snack-bar-container').getByText(`Added batch ${registered}-02 (hydrochloride)`).waitFor();
    await page.getByTestId('batches').getByRole('cell', { name: 'hydrochloride', exact: true }).waitFor();
    await page.getByTestId('history').getByText(`Added batch ${registered}-02 (hydrochloride)`).waitFor();
  });

  it('imports a small CSV and reports two registered records and one error', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'ligandry-import-'));
    const file = join(dir, 'three-rows.csv');
    writeFileSync(
      file,
      [
        'smiles,name,alias',
        'CC(C)(C)c1ccc(cc1)C(=O)N1CCC(CC1)n1cncn1,Triazolyl piperidine amide,E2E-IMP-1',
        'N#Cc1ccc(OCC2CCN(CC2)S(C)(=O)=O)cc1,Sulfonyl piperidine ether,E2E-IMP-2',
        'C1CC(N,Broken ring,E2E-IMP-3',
        '',
      ].join('\n'),
    );
    try {
      await page.getByRole('link', { name: 'Import file' }).click();
      await page.waitForURL(/\/compounds\/import$/);
      await page.getByTestId('import-file').setInputFiles(file);
      const count = page.getByTestId('record-count');
      await count.waitFor();
      expect(await count.textContent()).to.contain('with 3 records');
      await shootFullPage(page, 'registry-import-mapping.png');

      await page.getByRole('button', { name: 'Start import' }).click();
      const counts = page.getByTestId('import-counts');
      await counts.waitFor({ timeout: 60_000 });
      const text = (await counts.textContent())!.replace(/\s+/g, ' ');
      expect(text).to.contain('2 registered');
      expect(text).to.contain('0 already registered');
      expect(text).to.contain('1 with errors');
      const report = page.getByTestId('import-report');
      expect(await report.getByRole('row').count()).to.equal(4); // header + 3 records
      expect(await report.getByRole('cell', { name: 'Error', exact: true }).count()).to.equal(1);
      expect(await report.getByRole('link', { name: /-\d{6}$/ }).count()).to.equal(2);
      expect(await page.getByTestId('import-progress').textContent()).to.contain('Processed 3 of 3');
      await shootFullPage(page, 'registry-import-report.png');

      await report.getByRole('link', { name: /-\d{6}$/ }).first().click();
      await page.waitForURL(/\/compounds\/[A-Z]+-\d{6}$/);
      await page.getByTestId('registry-number').waitFor();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('keeps the search in the address: typing updates it, and opening the address restores it', async () => {
    await page.getByLabel('Search compounds').fill('nothing-like-this');
    await page.waitForURL(/\/compounds\?q=nothing-like-this$/);
    await page.getByText('Nothing matches “nothing-like-this”.').waitFor();
    await page.goto(`${session.baseUrl}/compounds?q=zz-none&sort=mw&dir=asc`);
    await page.getByText('Nothing matches “zz-none”.').waitFor();
    expect(await page.getByLabel('Search compounds').inputValue()).to.equal('zz-none');
  });
});
