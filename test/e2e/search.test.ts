import { expect } from 'chai';
import type { Page } from 'playwright-core';
import request from 'supertest';
import { searchCompounds } from '../../api/src/services/compound-search.service.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';
import { openBrowser, shootFullPage, signedInPage, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';

// Invented compounds around an unusual core (a thiazole-4-carbonyl on 3,3-difluoroazetidine), so
// the hits are known whatever else the test database holds.
const CORE = 'O=C(c1cscn1)N1CC(F)(F)C1';
const WITH_CORE = [CORE, 'Cc1nc(cs1)C(=O)N1CC(F)(F)C1', 'O=C(c1csc(n1)-c1ccccc1)N1CC(F)(F)C1'];
const WITHOUT_CORE = ['O=C(c1cscn1)N1CCC1', 'O=C(c1ccsc1)N1CC(F)(F)C1'];
/** Heavy atoms of CORE: each hit's depiction highlights this many. */
const CORE_ATOMS = 13;


/** Registry numbers of the rows shown, in order. */
async function shownNumbers(page: Page): Promise<string[]> {
  return page.locator('table[aria-label="Registered compounds"] a[href^="/compounds/"]').allTextContents();
}

describe('pages: structure search (Chromium)', function () {
  this.timeout(90_000);
  let session: BrowserSession;
  let page: Page;
  const numbers = new Map<string, string>();
  const foreign: string[] = [];
  const pageErrors: string[] = [];
  let searchUrl = '';

  before(async () => {
    const token = await tokenFor('chemist');
    for (const smiles of [...WITH_CORE, ...WITHOUT_CORE]) {
      const res = await request(testApp()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: smiles, name: `structure search e2e ${smiles}`, confirm: true });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      numbers.set(smiles, res.body.registryNumber);
    }
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

  it('finds exactly the compounds holding a substructure typed as SMILES, with the match highlighted', async () => {
    const highlighted: string[] = [];
    page.on('request', (r) => {
      if (/\/depiction\.svg\?.*highlight=/.test(r.url())) highlighted.push(r.url());
    });
    const toggle = page.getByRole('button', { name: /Structure search/ });
    expect(await toggle.getAttribute('aria-expanded')).to.equal('false');
    await toggle.click();
    await page.getByLabel('SMILES or SMARTS').fill(CORE);
    await page.getByLabel('SMILES or SMARTS').press('Enter');

    await page.getByTestId('search-total').filter({ hasText: '3 compounds found' }).waitFor();
    expect((await shownNumbers(page)).sort()).to.deep.equal(WITH_CORE.map((s) => numbers.get(s)!).sort());
    expect(await page.getByTestId('search-stats').textContent()).to.match(/^Screen kept \d+ of \d+; checked \d+ atom by atom in [\d,]+ ms\.$/);

    const pictures = page.locator('lg-match-depiction');
    expect(await pictures.count()).to.equal(3);
    for (let i = 0; i < 3; i++) {
      expect(await pictures.nth(i).getAttribute('data-highlighted')).to.equal(String(CORE_ATOMS));
      const img = pictures.nth(i).locator('img');
      await img.waitFor();
      await page.waitForFunction((el) => (el as HTMLImageElement).complete && (el as HTMLImageElement).naturalWidth > 0, await img.elementHandle());
    }
    expect(highlighted).to.have.length(3);
    for (const url of highlighted) expect(decodeURIComponent(url).match(/highlight=([\d,]+)/)![1].split(',')).to.have.length(CORE_ATOMS);

    const url = new URL(page.url());
    expect(url.searchParams.get('sub')).to.equal(CORE);
    expect(url.searchParams.get('mode')).to.equal(null);
    searchUrl = page.url();
    await shootFullPage(page, 'search-substructure.png');
  });

  it('opening the same address restores the search', async () => {
    expect(searchUrl, 'the previous test ran the search').to.contain('sub=');
    await page.goto(searchUrl);
    await page.getByTestId('search-total').filter({ hasText: '3 compounds found' }).waitFor();
    expect((await shownNumbers(page)).sort()).to.deep.equal(WITH_CORE.map((s) => numbers.get(s)!).sort());
    expect(await page.getByRole('button', { name: /Structure search/ }).getAttribute('aria-expanded')).to.equal('true');
    expect(await page.getByLabel('SMILES or SMARTS').inputValue()).to.equal(CORE);
    expect(await page.getByRole('radio', { name: 'Substructure' }).getAttribute('aria-checked')).to.equal('true');
    expect(await page.getByTestId('search-summary').textContent()).to.equal(`Contains ${CORE}`);
  });

  it('shows the first page while the hits are being counted, then the exact total', async () => {
    // Enough hits for a short page to be known before the last candidate is checked: invented fluoro-alkanes.
    const token = await tokenFor('chemist');
    for (let n = 1; n <= 30; n++) {
      const res = await request(testApp()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: `${'C'.repeat(n)}CF`, name: `counting e2e ${n}`, confirm: true });
      expect([201, 409], JSON.stringify(res.body)).to.include(res.status);
    }
    const asked: string[] = [];
    let release: () => void = () => undefined;
    const held = new Promise<void>((r) => (release = r));
    await page.route('**/api/compounds/search', async (route) => {
      const count = (JSON.parse(route.request().postData() ?? '{}') as { count?: string }).count ?? 'exact';
      asked.push(count);
      if (count === 'exact') await held; // hold the total back until the counting state has been seen
      await route.continue();
    });
    await page.goto(`${session.baseUrl}/compounds?sub=CF&size=10`);
    await page.getByTestId('search-total').filter({ hasText: /Counting the hits/ }).waitFor();
    expect(await shownNumbers(page)).to.have.length(10);
    await shootFullPage(page, 'search-counting.png');
    release();
    // The exact total, counted afresh (nothing kept) for comparison.
    const exact = await searchCompounds(testOrm().em.fork(), { substructure: { structure: 'CF' }, page: 1, pageSize: 10, timeLimitMs: 10_000, reuse: false });
    await page.getByTestId('search-total').filter({ hasText: `${exact.total} compounds found` }).waitFor();
    expect(asked).to.deep.equal(['first-page', 'exact']);
    expect(await shownNumbers(page)).to.have.length(10);
  });

  it('finds the query compound itself first, at similarity 1.00', async () => {
    const query = WITH_CORE[2];
    await page.getByRole('button', { name: /Structure search/ }).click();
    await page.getByRole('radio', { name: 'Similarity' }).click();
    await page.getByLabel('SMILES or SMARTS').fill(query);
    await page.getByLabel('Threshold', { exact: true }).fill('0.3');
    await page.getByRole('button', { name: 'Search', exact: true }).click();

    await page.getByTestId('search-total').waitFor();
    await page.waitForURL(/mode=similarity/);
    expect((await shownNumbers(page))[0]).to.equal(numbers.get(query));
    const scores = (await page.getByTestId('similarity').allTextContents()).map((t) => t.trim());
    expect(scores[0]).to.equal('1.00');
    const values = scores.map(Number);
    expect(values).to.deep.equal([...values].sort((a, b) => b - a));
    expect(Math.min(...values)).to.be.at.least(0.3);
    expect(new URL(page.url()).searchParams.get('t')).to.equal('0.3');
    await shootFullPage(page, 'search-similarity.png');
  });

  it('shows why a SMILES cannot be read next to the box, and searches nothing', async () => {
    await page.goto(`${session.baseUrl}/compounds`);
    await page.getByRole('button', { name: /Structure search/ }).click();
    await page.getByLabel('SMILES or SMARTS').fill('C1CC(');
    await page.getByLabel('SMILES or SMARTS').press('Enter');
    const error = page.getByTestId('structure-error');
    await error.waitFor();
    expect(await error.textContent()).to.match(/SMILES could not be read/);
    await page.getByTestId('search-failed').waitFor();
    expect(await page.getByTestId('search-results').count()).to.equal(0);
    await shootFullPage(page, 'search-bad-smiles.png');
  });
});
