// A pharmacologist takes a run from the long-CSV template (filled with simulated data) to
// submitted results; a lead approves them on the Review page; the e-mails are in the fake mailbox.
import { expect } from 'chai';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { LONG_TEMPLATE_CSV } from '../../api/src/domain/raw-data.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { openBrowser, shootFullPage, signIn, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';


async function api(role: 'admin' | 'chemist' | 'pharmacologist') {
  return { Authorization: `Bearer ${await tokenFor(role)}` };
}

/** The long template's header, with its example rows replaced by two simulated agonist curves. */
function filledTemplate(reference: string, partial: string): string {
  const header = LONG_TEMPLATE_CSV.split('\n')[0];
  expect(header.split(',').slice(0, 4)).to.deep.equal(['sample', 'concentration', 'unit', 'response']);
  const cols = header.split(',');
  const row = (values: Record<string, string>) => cols.map((c) => values[c] ?? '').join(',');
  const rows = [header];
  for (const rep of ['1', '2']) {
    rows.push(row({ sample: 'BASAL', response: '1000', replicate: rep }), row({ sample: 'MAX', concentration: '10', unit: 'uM', response: '10000', replicate: rep }));
  }
  for (const [sample, logEC50, fraction] of [[reference, -8, 1], [partial, -7.3, 0.55]] as const) {
    for (let log = -11; log <= -5; log += 0.5) {
      for (const rep of ['1', '2']) {
        const y = 1000 + (9000 * fraction) / (1 + 10 ** (logEC50 - log)) + (rep === '1' ? 60 : -60);
        rows.push(row({ sample, concentration: (10 ** log * 1e9).toPrecision(4), unit: 'nM', response: y.toFixed(1), replicate: rep }));
      }
    }
  }
  return rows.join('\n') + '\n';
}

async function mailbox(): Promise<{ to: string[]; subject: string }[]> {
  const res = await request(testApp()).get('/api/dev/mail').set(await api('admin'));
  return res.body.items;
}

async function waitForMail(email: string, subject: RegExp): Promise<void> {
  for (let i = 0; i < 50; i++) {
    if ((await mailbox()).some((m) => m.to.includes(email) && subject.test(m.subject))) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  expect.fail(`no e-mail to ${email} matching ${subject}`);
}

describe('pages: assay run from upload to approval (Chromium)', function () {
  this.timeout(120_000);
  let session: BrowserSession;
  let dir: string;
  let assayId: number;
  let reference: string;
  let partial: string;
  const pageErrors: string[] = [];

  /** A new page, signed in afresh as `role` (landing on the SAR table or the overview). */
  async function signedIn(role: 'lead' | 'pharmacologist' | 'admin') {
    const page = await session.context.newPage();
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await page.goto(`${session.baseUrl}/sign-in`);
    await page.evaluate(() => localStorage.clear());
    await signIn(page, session.baseUrl, fixtureEmail(role));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    return page;
  }

  before(async () => {
    const target = await request(testApp()).post('/api/targets').set(await api('pharmacologist')).send({ name: 'Browser receptor', geneSymbol: 'BRWS1', family: 'GPCR', species: 'human' });
    const register = async (smiles: string, name: string) => {
      const c = await request(testApp()).post('/api/compounds').set(await api('chemist')).send({ structure: smiles, name });
      expect(c.status, JSON.stringify(c.body)).to.equal(201);
      const b = await request(testApp()).get(`/api/compounds/${c.body.id}/batches`).set(await api('chemist'));
      return { registryNumber: c.body.registryNumber as string, batchNumber: b.body.items[0].batchNumber as string };
    };
    const ref = await register('CN(C)CCc1c[nH]c2ccc(OC)cc12', 'browser reference agonist');
    const part = await register('CN(C)CCc1c[nH]c2ccc(Cl)cc12', 'browser partial agonist');
    reference = ref.batchNumber;
    partial = part.batchNumber;
    const assay = await request(testApp()).post('/api/assays').set(await api('pharmacologist')).send({ code: 'BRWS-AGO', name: 'Browser agonist assay', targetId: target.body.id, kind: 'functional-agonist', readout: 'cAMP', species: 'human', referenceCompound: ref.registryNumber });
    expect(assay.status, JSON.stringify(assay.body)).to.equal(201);
    assayId = assay.body.id;
    dir = mkdtempSync(join(tmpdir(), 'ligandry-run-'));
    session = await openBrowser();
  });
  after(async () => {
    await session?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('a pharmacologist uploads the filled template, sees the fitted curves and submits them', async () => {
    const page = await session.context.newPage();
    page.on('pageerror', (e) => pageErrors.push(e.message));
    await signIn(page, session.baseUrl, fixtureEmail('pharmacologist'));
    await page.waitForURL(/\/(sar|overview)(\?|$)/);
    await page.goto(`${session.baseUrl}/assays/${assayId}`);
    await page.getByRole('heading', { name: /BRWS-AGO/ }).first().waitFor();
    const file = join(dir, 'run.csv');
    writeFileSync(file, filledTemplate(reference, partial));
    await page.getByLabel('Raw data file (long CSV)').setInputFiles(file);
    await shootFullPage(page, 'assays-upload.png');
    await page.getByRole('button', { name: 'Upload run' }).click();
    await page.waitForURL(/\/runs\/\d+$/);
    await page.getByText('Curves', { exact: false }).first().waitFor();
    await page.getByRole('article', { name: new RegExp(reference) }).waitFor();
    await page.locator('canvas').first().waitFor();
    // Cards below the fold render when scrolled into view.
    await page.locator('mat-sidenav-content').evaluate((el) => el.scrollTo(0, el.scrollHeight));
    const card = page.getByRole('article', { name: new RegExp(partial) });
    await card.waitFor();
    expect(await card.getByRole('row', { name: /α/ }).count()).to.equal(1);
    expect(await page.getByText(/qualified pharmacologist/).count()).to.be.greaterThan(0);
    await shootFullPage(page, 'assays-run-page.png');
    await page.getByRole('button', { name: 'Submit all drafts' }).click();
    await page.getByRole('button', { name: 'Submit 2 drafts' }).click();
    await page.getByText('Submitted', { exact: false }).first().waitFor();
    await shootFullPage(page, 'assays-run-submitted.png');
    await page.close();
    await waitForMail(fixtureEmail('lead'), /submitted for review/);
  });

  it('a lead approves the submitted results on the Review page and the pharmacologist is e-mailed', async () => {
    const page = await signedIn('lead');
    await page.getByRole('link', { name: 'Review' }).click();
    await page.waitForURL(/\/review$/);
    // The queue holds other submissions too: keep to this assay.
    await page.getByLabel('Assay').click();
    await page.getByRole('option', { name: /BRWS-AGO/ }).click();
    await page.waitForURL(/\/review\?assay=\d+$/);
    for (const batch of [reference, partial]) {
      const item = page.getByRole('article', { name: new RegExp(batch) });
      await item.waitFor();
      if (batch === reference) await shootFullPage(page, 'assays-review-queue.png');
      await item.getByRole('button', { name: 'Approve' }).click();
      const dialog = page.getByRole('dialog');
      await dialog.getByLabel('Comment (optional)').fill('Curve complete, controls in range.');
      await dialog.getByRole('button', { name: 'Approve' }).click();
      await item.waitFor({ state: 'detached' });
    }
    await waitForMail(fixtureEmail('pharmacologist'), /approved/);
    let statuses: string[] = [];
    for (let i = 0; i < 50 && statuses.join() !== 'approved,approved'; i++) {
      const res = await request(testApp()).get(`/api/results?assayId=${assayId}`).set(await api('pharmacologist'));
      statuses = res.body.items.map((r: { status: string }) => r.status);
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(statuses).to.deep.equal(['approved', 'approved']);
    expect(await page.getByText('Nothing is waiting for review.').count()).to.equal(1);
    await page.close();
  });

  it('a pharmacologist retires the assay after a confirmation: it keeps its runs, takes no new ones, leaves the list until asked for, and is restored', async () => {
    const page = await signedIn('pharmacologist');
    await page.goto(`${session.baseUrl}/assays/${assayId}`);
    await page.getByRole('heading', { name: /BRWS-AGO/ }).first().waitFor();
    await page.getByTestId('retire-assay').click();
    // Cancel first: nothing changes.
    await page.getByRole('dialog').getByRole('button', { name: 'Cancel' }).click();
    await page.getByRole('dialog').waitFor({ state: 'detached' });
    expect(await page.getByTestId('assay-retired').count()).to.equal(0);
    await page.getByTestId('retire-assay').click();
    await page.getByRole('dialog').getByRole('button', { name: 'Retire', exact: true }).click();
    await page.getByTestId('assay-retired').waitFor();
    await page.getByText(/takes no new runs or values until it is restored/).waitFor();
    expect(await page.getByRole('button', { name: 'Upload run' }).count()).to.equal(0);
    expect(await page.getByRole('button', { name: /Enter values measured elsewhere/ }).count()).to.equal(0);
    await shootFullPage(page, 'assays-retired.png');
    // The server agrees: a new entry is refused while retired.
    const refused = await request(testApp()).post('/api/results').set(await api('pharmacologist')).send({ assayId, sample: reference, values: { pEC50: { value: 7 } }, note: 'entered while retired' });
    expect(refused.status, JSON.stringify(refused.body)).to.equal(409);
    await page.goto(`${session.baseUrl}/assays`);
    await page.getByTestId('show-retired').waitFor();
    expect(await page.getByRole('link', { name: 'BRWS-AGO' }).count()).to.equal(0);
    await page.getByTestId('show-retired').locator('input').check();
    await page.getByRole('link', { name: 'BRWS-AGO' }).waitFor();
    await page.goto(`${session.baseUrl}/assays/${assayId}`);
    await page.getByTestId('assay-retired').waitFor();
    await page.getByTestId('retire-assay').click();
    await page.getByRole('button', { name: 'Upload run' }).waitFor();
    expect(await page.getByTestId('assay-retired').count()).to.equal(0);
    const audit = await request(testApp()).get(`/api/assays/${assayId}`).set(await api('pharmacologist'));
    expect(audit.body.retired).to.equal(false);
    await page.close();
  });

  it('an admin reads both e-mails in the development mailbox', async () => {
    const page = await signedIn('admin');
    await page.goto(`${session.baseUrl}/admin/mail`);
    await page.getByText(/submitted for review/).first().waitFor();
    await page.getByText(/: approved/).first().waitFor();
    await shootFullPage(page, 'assays-mailbox.png');
    await page.close();
    expect(pageErrors, 'uncaught page errors').to.deep.equal([]);
  });
});
