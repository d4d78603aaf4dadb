// Selectivity review in Chromium: a lead opens the overview, goes to the matrix, compares three
// compounds, records a decision with a rationale, and the chemist's fake mailbox holds the e-mail.
import { expect } from 'chai';
import request from 'supertest';
import { approvedPKi, mailTo, testApp, tokenFor } from '../helpers/api.js';
import { openBrowser, shootFullPage, signIn, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';
import type { Role } from '../../api/src/domain/roles.js';

const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });
type Key = 'A' | 'B' | 'C';

describe('pages: selectivity review (Chromium)', function () {
  this.timeout(120_000);
  let session: BrowserSession;
  const c = {} as Record<Key, { id: number; registryNumber: string }>;

  before(async () => {
    const p = await request(testApp()).post('/api/projects').set(await auth('lead')).send({ code: 'SELE', name: 'Selectivity browser project' });
    expect(p.status, JSON.stringify(p.body)).to.equal(201);
    const s = await request(testApp()).post('/api/series').set(await auth('chemist')).send({ projectId: p.body.id, code: 'SB', name: 'Browser benzamides', core: '[*:1]c1ccc(cc1)C(=O)N[*:2]' });
    const smiles: Record<Key, string> = { A: 'Fc1ccc(cc1)C(=O)NCC1CC1', B: 'Clc1ccc(cc1)C(=O)NCC1CC1', C: 'Brc1ccc(cc1)C(=O)NCC1CC1' };
    for (const [key, smi] of Object.entries(smiles) as [Key, string][]) {
      const res = await request(testApp()).post('/api/compounds').set(await auth('chemist')).send({ structure: smi, seriesId: s.body.id, name: `selectivity browser ${key}` });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      c[key] = { id: res.body.id, registryNumber: res.body.registryNumber };
    }
    const target: Record<string, number> = {};
    const assay: Record<string, number> = {};
    for (const key of ['P', 'X']) {
      const t = await request(testApp()).post('/api/targets').set(await auth('pharmacologist')).send({ name: `Browser selectivity receptor ${key}`, geneSymbol: `SBR${key}`, family: 'GPCR', species: 'human' });
      target[key] = t.body.id;
      const a = await request(testApp()).post('/api/assays').set(await auth('pharmacologist')).send({ code: `SBR${key}-B`, name: `binding ${key}`, targetId: t.body.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
      assay[key] = a.body.id;
    }
    await request(testApp()).put(`/api/projects/${p.body.id}/targets`).set(await auth('pharmacologist')).send({ targets: [{ targetId: target.P, role: 'primary' }, { targetId: target.X, role: 'anti-target' }] }).expect(200);
    for (const [k, cpd, v] of [['P', 'A', 8.2], ['X', 'A', 5.9], ['P', 'B', 7.6], ['X', 'B', 6.4], ['P', 'C', 8.9], ['X', 'C', 6.0]] as [string, Key, number][]) {
      await approvedPKi(assay[k], c[cpd].registryNumber, v);
    }
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
  });

  it('overview → matrix → compare three → a decision with its rationale → the chemist is e-mailed', async () => {
    const page = await session.context.newPage();
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
    await signIn(page, session.baseUrl, fixtureEmail('lead'));
    await page.waitForURL(/\/overview/);
    await page.goto(`${session.baseUrl}/overview?project=SELE`);
    await page.getByRole('heading', { name: 'Best ranked' }).waitFor();
    await page.getByRole('link', { name: c.C.registryNumber }).first().waitFor();
    await shootFullPage(page, 'selectivity-overview.png');

    await page.getByTestId('to-matrix').click();
    await page.waitForURL(/\/selectivity\?project=SELE/);
    const rows = page.locator('[data-testid="sel-matrix"] tbody tr');
    await rows.first().waitFor();
    // Worst margin first: B 1.20 (inside the 100-fold window), A 2.30, C 2.90.
    expect(await rows.evaluateAll((els) => els.map((e) => e.getAttribute('data-compound')))).to.deep.equal([c.B.registryNumber, c.A.registryNumber, c.C.registryNumber]);
    expect(await page.locator('tr.inside').count()).to.equal(1);
    for (const key of ['A', 'B', 'C'] as Key[]) await page.getByRole('checkbox', { name: `Pick ${c[key].registryNumber} to compare` }).check();
    await shootFullPage(page, 'selectivity-matrix.png');
    await page.getByTestId('sel-compare').click();

    await page.waitForURL(/\/selectivity\/compare\?/);
    const card = page.getByRole('article', { name: c.B.registryNumber });
    await card.waitFor();
    expect(await page.getByRole('article').count()).to.equal(3);
    await page.getByRole('table', { name: 'Values at every receptor' }).waitFor();
    await card.getByRole('combobox', { name: 'Decision' }).click();
    await page.getByRole('option', { name: 'hold' }).click();
    await card.getByLabel('Rationale').fill('Margin over SBRX is inside the 100-fold window; make the chloro analogue with a bulkier amide first.');
    const answered = page.waitForResponse((r) => r.url().endsWith('/api/decisions') && r.request().method() === 'POST');
    await card.getByRole('button', { name: 'Record decision' }).click();
    expect((await answered).status()).to.equal(201);
    await card.getByText('Margin over SBRX is inside the 100-fold window').first().waitFor();
    await shootFullPage(page, 'selectivity-compare.png');

    // The chemist who registered it finds the e-mail in the development mailbox.
    const mail = await mailTo(fixtureEmail('chemist'), `${c.B.registryNumber} in SELE: hold`);
    expect(mail.text).to.contain('bulkier amide');
    expect(pageErrors).to.deep.equal([]);
    await page.close();
  });
});
