// The SAR table in Chromium: a chemist opens it, adds a receptor, filters by substructure, sorts
// by selectivity, saves the view, reloads and gets the same table back.
import { expect } from 'chai';
import type { Page } from 'playwright-core';
import request from 'supertest';
import { approvedPKi, testApp, tokenFor } from '../helpers/api.js';
import { openBrowser, shootFullPage, signIn, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';
import type { Role } from '../../api/src/domain/roles.js';

const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

/** Registry numbers of the rows shown, top to bottom. */
async function shownNumbers(page: Page): Promise<string[]> {
  const rows = page.locator('.ag-row[row-index]');
  const entries = await rows.evaluateAll((els) =>
    els.map((el) => [Number(el.getAttribute('row-index')), el.querySelector('[col-id="registryNumber"] a')?.textContent?.trim() ?? ''] as [number, string]),
  );
  return entries.sort((a, b) => a[0] - b[0]).map((e) => e[1]);
}

async function waitForRows(page: Page, n: number): Promise<void> {
  await page.getByTestId('sar-count').filter({ hasText: new RegExp(`^${n} of ${n} compounds$`) }).waitFor();
  await page.waitForFunction((count) => document.querySelectorAll('.ag-row[row-index]').length === count, n);
}

describe('pages: SAR table (Chromium)', function () {
  this.timeout(120_000);
  let session: BrowserSession;
  const pageErrors: string[] = [];
  const numbers: Record<'A' | 'B' | 'C' | 'D', string> = { A: '', B: '', C: '', D: '' };

  before(async () => {
    const p = await request(testApp()).post('/api/projects').set(await auth('lead')).send({ code: 'SARE', name: 'SAR browser project' });
    expect(p.status, JSON.stringify(p.body)).to.equal(201);
    const s = await request(testApp()).post('/api/series').set(await auth('chemist')).send({ projectId: p.body.id, code: 'SE', name: 'Browser sulfonamides', core: '[*:1]c1ccc(cc1)S(=O)(=O)N[*:2]' });
    expect(s.status, JSON.stringify(s.body)).to.equal(201);
    const smiles = { A: 'Brc1ccc(cc1)S(=O)(=O)NCC=C', B: 'Clc1ccc(cc1)S(=O)(=O)NCC#C', C: 'Ic1ccc(cc1)S(=O)(=O)NC1CC1', D: 'O=C(NCC=C)c1cccnc1' };
    for (const [key, smi] of Object.entries(smiles) as ['A' | 'B' | 'C' | 'D', string][]) {
      const res = await request(testApp()).post('/api/compounds').set(await auth('chemist')).send({ structure: smi, seriesId: s.body.id, name: `sar browser ${key}` });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      numbers[key] = res.body.registryNumber;
    }
    const target: Record<string, number> = {};
    const assay: Record<string, number> = {};
    for (const key of ['EP', 'EX', 'EZ']) {
      const t = await request(testApp()).post('/api/targets').set(await auth('pharmacologist')).send({ name: `Browser receptor ${key}`, geneSymbol: `SAR${key}`, family: 'GPCR', species: 'human' });
      expect(t.status, JSON.stringify(t.body)).to.equal(201);
      target[key] = t.body.id;
      const a = await request(testApp()).post('/api/assays').set(await auth('pharmacologist')).send({ code: `SAR${key}-BIND`, name: `binding ${key}`, targetId: t.body.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
      expect(a.status, JSON.stringify(a.body)).to.equal(201);
      assay[key] = a.body.id;
    }
    const panel = await request(testApp()).put(`/api/projects/${p.body.id}/targets`).set(await auth('pharmacologist')).send({ targets: [{ targetId: target.EP, role: 'primary' }, { targetId: target.EX, role: 'anti-target' }] });
    expect(panel.status, JSON.stringify(panel.body)).to.equal(200);
    // Worst margins over SAREX: A 7.3 − 5.0 = 2.3, B 8.0 − 6.5 = 1.5, C 6.0 − 6.2 = −0.2.
    const values: [string, 'A' | 'B' | 'C' | 'D', number][] = [
      ['EP', 'A', 7.3], ['EX', 'A', 5.0], ['EP', 'B', 8.0], ['EX', 'B', 6.5], ['EP', 'C', 6.0], ['EX', 'C', 6.2], ['EZ', 'A', 6.6], ['EP', 'D', 5.5],
    ];
    for (const [key, cpd, pKi] of values) await approvedPKi(assay[key], numbers[cpd], pKi);
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
  });

  it('adds a receptor, filters by substructure, sorts by selectivity, saves the view and gets it back after a reload', async () => {
    const page = await session.context.newPage();
    // Wide enough that the grid draws every column (it draws only the columns in view).
    await page.setViewportSize({ width: 2800, height: 900 });
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
    await signIn(page, session.baseUrl, fixtureEmail('chemist'));
    await page.waitForURL(/\/sar(\?|$)/);
    await page.getByRole('heading', { name: 'SAR table', exact: true }).waitFor();
    await page.goto(`${session.baseUrl}/sar?project=SARE`);
    await waitForRows(page, 4);
    expect(await page.locator('.ag-header-group-cell', { hasText: 'SAREZ' }).count()).to.equal(0);

    // Add the receptor outside the panel.
    await page.getByTestId('sar-targets').click();
    await page.getByRole('option', { name: /SAREZ/ }).click();
    await page.keyboard.press('Escape');
    await page.locator('.ag-header-group-cell', { hasText: 'SAREZ' }).first().waitFor();
    await page.waitForURL(/targets=/);

    // Substructure: the sulfonamide core keeps A, B and C, not D.
    await page.getByTestId('sar-substructure').fill('c1ccc(cc1)S(=O)(=O)N');
    await page.getByTestId('sar-substructure-apply').click();
    await page.getByTestId('sar-count').filter({ hasText: /^3 of 3 compounds$/ }).waitFor();
    await page.waitForFunction(() => document.querySelectorAll('.ag-row[row-index]').length === 3);
    expect((await shownNumbers(page)).sort()).to.deep.equal([numbers.A, numbers.B, numbers.C].sort());
    await page.locator('lg-match-depiction img').first().waitFor();

    // Sort by the worst selectivity margin, smallest first.
    await page.locator('.ag-header-cell[col-id="worstMargin"] .ag-header-cell-label').click();
    await page.waitForFunction(() => document.querySelector('.ag-header-cell[col-id="worstMargin"]')?.getAttribute('aria-sort') === 'ascending');
    expect(await shownNumbers(page)).to.deep.equal([numbers.C, numbers.B, numbers.A]);
    // C's margin is inside the 100-fold window and marked as such.
    expect(await page.locator('.ag-row[row-index] .lg-inside-window[col-id="worstMargin"]').count()).to.equal(2);
    await shootFullPage(page, 'sar-table.png');

    // Save the view, reload, and get the same table back.
    await page.getByTestId('sar-view-menu').click();
    await page.getByTestId('sar-save-as').click();
    const dialog = page.getByRole('dialog');
    await dialog.getByLabel('Name').fill('e2e margin view');
    await dialog.getByRole('button', { name: 'Save view' }).click();
    await page.waitForURL(/view=\d+/);
    await page.reload();
    await waitForRows(page, 3);
    await page.locator('.ag-header-group-cell', { hasText: 'SAREZ' }).first().waitFor();
    await page.waitForFunction(() => document.querySelector('.ag-header-cell[col-id="worstMargin"]')?.getAttribute('aria-sort') === 'ascending');
    expect(await shownNumbers(page)).to.deep.equal([numbers.C, numbers.B, numbers.A]);
    expect(await page.getByTestId('sar-view').textContent()).to.contain('e2e margin view');
    expect(await page.getByTestId('sar-substructure').inputValue()).to.equal('c1ccc(cc1)S(=O)(=O)N');
    expect(pageErrors).to.deep.equal([]);
    await page.close();
  });

  it('shows a cell\'s individual results in its tooltip and its curves on click', async () => {
    const page = await session.context.newPage();
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
    await signIn(page, session.baseUrl, fixtureEmail('viewer'));
    await page.waitForURL(/\/sar(\?|$)/);
    await page.goto(`${session.baseUrl}/sar?project=SARE&parameters=pKi`);
    await waitForRows(page, 4);
    const cell = page.locator('.ag-row[row-index] .ag-cell[col-id^="t:"]').filter({ hasText: '7.30 (1)' }).first();
    await cell.hover();
    const tip = page.locator('lg-sar-cell-tooltip');
    await tip.getByText('SAREP-BIND').waitFor();
    await cell.click();
    const dialog = page.getByRole('dialog');
    await dialog.getByText('Entered by hand: no curve.').waitFor();
    expect(await dialog.getByRole('heading').textContent()).to.contain(numbers.A);
    expect(pageErrors).to.deep.equal([]);
    await page.close();
  });
});
