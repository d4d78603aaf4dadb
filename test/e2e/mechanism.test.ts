// A pharmacologist reads a compound's ligand-type call with its evidence and the caution, overrides
// it with a reason, runs the what-if simulation, and reads the Schild plot of an antagonist-mode
// run and the modulation analysis of an allosteric run. Data are simulated with the operational
// model (Black & Leff 1983) and set up through the API; the approvals compute the calls.
import { expect } from 'chai';
import type { Page } from 'playwright-core';
import request from 'supertest';
import type { Role } from '../../api/src/domain/roles.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { openBrowser, shootFullPage, signIn, type BrowserSession } from '../helpers/browser.js';
import { fixtureEmail } from '../helpers/fixtures.js';
import { agonistCsv, approveRun, createAssay, register, uploadOk, type AgonistSim, type Ligand } from '../helpers/mechanism.js';

const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

describe('pages: mechanism — ligand-type calls, override, what-if, Schild and modulation (Chromium)', function () {
  this.timeout(180_000);
  let session: BrowserSession;
  let page: Page;
  let P: Ligand;
  let R: Ligand;
  let A1: Ligand;
  let M: Ligand;
  let schildRun: number;
  let modulationRun: number;
  let campAssay: number;
  const pageErrors: string[] = [];
  const foreign: string[] = [];

  before(async () => {
    const t = await request(testApp()).post('/api/targets').set(await auth('pharmacologist')).send({ name: 'Mechanism page receptor', geneSymbol: 'MECHPG1', family: 'GPCR', species: 'human' });
    expect(t.status, JSON.stringify(t.body)).to.equal(201);
    const targetId = t.body.id;
    R = await register('CCN(CC)CCc1ccc(O)cc1', 'page reference agonist');
    P = await register('CCN(CC)CCc1ccc(Cl)cc1', 'page partial agonist');
    A1 = await register('CCN(CC)CCc1ccc(C)cc1', 'page competitive antagonist');
    const A2 = await register('CCN(CC)CCc1ccc(CC)cc1', 'page allosteric antagonist');
    M = await register('CCN(CC)CCc1ccc(C#N)cc1', 'page PAM');
    campAssay = await createAssay({ code: 'PG-CAMP', name: 'cAMP accumulation', targetId, kind: 'functional-agonist', referenceCompound: R.registryNumber });
    const arrestin = await createAssay({ code: 'PG-ARR', name: 'β-arrestin recruitment', readout: 'β-arrestin', targetId, kind: 'functional-agonist', referenceCompound: R.registryNumber });
    const antagonist = await createAssay({ code: 'PG-SCHILD', name: 'Antagonist mode (Schild), cAMP', targetId, kind: 'functional-antagonist', agonistConcM: 3e-8, agonistEc50M: 1e-8 });
    const modulation = await createAssay({ code: 'PG-ALLO', name: 'Allosteric modulation, cAMP', targetId, kind: 'allosteric-modulation', referenceCompound: R.registryNumber, agonistConcM: 1e-8 });
    const ref: AgonistSim = { sample: R.batchNumber, logKA: -6.5, logTau: 1.5 };
    await approveRun(await uploadOk(campAssay, agonistCsv([ref, { sample: P.batchNumber, logKA: -7, logTau: -0.2 }], { reference: ref, seed: 41 })));
    const refArr = { ...ref, logTau: 1.0 };
    await approveRun(await uploadOk(arrestin, agonistCsv([refArr, { sample: P.batchNumber, logKA: -7, logTau: -0.6 }], { reference: refArr, seed: 42 })));
    // Schild: a competitive antagonist (pKB 8.5) and an allosteric one with α = 0.03 (the shift saturates near 33-fold).
    const sims: AgonistSim[] = [ref];
    for (const b of [1e-8, 1e-7, 1e-6]) sims.push({ ...ref, condition: `antagonist ${A1.batchNumber} ${b * 1e9} nM`, kaFactor: 1 + b / 10 ** -8.5 });
    for (const b of [1e-7, 1e-6, 1e-5, 1e-4]) sims.push({ ...ref, condition: `antagonist ${A2.batchNumber} ${b * 1e6} uM`, kaFactor: (1 + b / 1e-7) / (1 + (0.03 * b) / 1e-7) });
    schildRun = await uploadOk(antagonist, agonistCsv(sims, { reference: ref, seed: 21 }));
    // A PAM with α = 10, KB = 1 µM, inactive alone.
    const msims: AgonistSim[] = [ref, { sample: M.batchNumber, logKA: -6, logTau: -Infinity }];
    for (const b of [1e-7, 1e-6, 1e-5]) msims.push({ ...ref, condition: `modulator ${M.batchNumber} ${b * 1e6} uM`, kaFactor: (1 + b / 1e-6) / (1 + (10 * b) / 1e-6) });
    modulationRun = await uploadOk(modulation, agonistCsv(msims, { reference: ref, seed: 44 }));
    session = await openBrowser();
    page = await session.context.newPage();
    page.on('pageerror', (e) => pageErrors.push(e.message));
    page.on('request', (r) => {
      if (!r.url().startsWith(session.baseUrl) && !r.url().startsWith('data:') && !r.url().startsWith('blob:')) foreign.push(r.url());
    });
    await signIn(page, session.baseUrl, fixtureEmail('pharmacologist'));
    await page.waitForURL(/\/sar(\?|$)/);
  });
  after(async () => {
    await session?.close();
  });

  it('shows the computed call with its rule, evidence and the caution, and the operational-model values', async () => {
    await page.goto(`${session.baseUrl}/compounds/${P.registryNumber}`);
    const calls = page.getByTestId('ligand-calls');
    const call = calls.getByTestId('call').filter({ hasText: 'Mechanism page receptor' });
    await call.waitFor();
    expect(await call.locator('.verdict').textContent()).to.equal('partial agonist');
    expect(await call.getByTestId('call-source').textContent()).to.match(/Computed suggestion/);
    // Evidence: both readouts, each linked to its assay and to the run of its result.
    const evidence = call.getByRole('list', { name: /Evidence/ });
    expect(await evidence.getByRole('link', { name: 'PG-CAMP', exact: true }).count()).to.equal(1);
    expect(await evidence.getByRole('link', { name: 'PG-ARR', exact: true }).count()).to.equal(1);
    expect(await evidence.getByRole('link', { name: /^Run of .* in PG-CAMP$/ }).first().getAttribute('href')).to.match(/\/assays\/runs\/\d+$/);
    expect(await calls.getByTestId('call-caution').textContent()).to.match(/qualified pharmacologist/);
    // Operational model and bias from the two approved readouts.
    const op = page.getByRole('table', { name: 'Operational-model values' });
    await op.waitFor();
    expect(await op.getByRole('row').count()).to.equal(3);
    const bias = page.getByTestId('bias');
    await bias.getByText('Bias factor', { exact: true }).waitFor();
    expect(await bias.textContent()).to.match(/Kenakin/);
    await shootFullPage(page, 'mechanism-compound.png');
  });

  it('overrides the call with a reason and shows it marked as the pharmacologist’s override', async () => {
    const call = page.getByTestId('ligand-calls').getByTestId('call').filter({ hasText: 'Mechanism page receptor' });
    await call.getByRole('button', { name: /Override the call/ }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByRole('combobox', { name: 'Call' }).click();
    await page.getByRole('option', { name: 'neutral antagonist', exact: true }).click();
    // The reason is required.
    await dialog.getByRole('button', { name: 'Save the override' }).click();
    await dialog.getByText(/Say why the computed call is overridden/).waitFor();
    await dialog.getByLabel('Reason').fill('No agonism in native tissue (notebook PH-77)');
    await shootFullPage(page, 'mechanism-override-dialog.png');
    await dialog.getByRole('button', { name: 'Save the override' }).click();
    await dialog.waitFor({ state: 'detached' });
    await call.getByText('Pharmacologist’s override').waitFor();
    expect(await call.locator('.verdict').textContent()).to.equal('neutral antagonist');
    expect(await call.textContent()).to.match(/No agonism in native tissue \(notebook PH-77\)/);
    expect(await call.textContent()).to.match(/The rule computes partial agonist/);
    // The API agrees, and the page says the same after a reload.
    const res = await request(testApp()).get(`/api/calls?compound=${P.registryNumber}`).set(await auth('viewer'));
    expect(res.body.items[0]).to.include({ call: 'neutral antagonist', source: 'manual', computedCall: 'partial agonist' });
    await page.reload();
    await page.getByTestId('call').filter({ hasText: 'Pharmacologist’s override' }).waitFor();
    await shootFullPage(page, 'mechanism-compound-override.png');
  });

  it('goes back to the rule after a confirmation', async () => {
    const call = page.getByTestId('ligand-calls').getByTestId('call').filter({ hasText: 'Mechanism page receptor' });
    await call.getByRole('button', { name: /Back to the rule/ }).click();
    await page.getByRole('dialog').getByRole('button', { name: 'Back to the rule' }).click();
    await call.getByText('Computed suggestion').waitFor();
    expect(await call.locator('.verdict').textContent()).to.equal('partial agonist');
  });

  it('flags an override that a later approved result contradicts', async () => {
    const list = await request(testApp()).get(`/api/calls?compound=${P.registryNumber}`).set(await auth('viewer'));
    const id = list.body.items[0].id;
    const o = await request(testApp()).post(`/api/calls/${id}/override`).set(await auth('pharmacologist')).send({ call: 'neutral antagonist', reason: 'no agonism in native tissue' });
    expect(o.status, JSON.stringify(o.body)).to.equal(200);
    // A second cAMP run of the partial agonist, approved: the rule still reads a partial agonist.
    const ref: AgonistSim = { sample: R.batchNumber, logKA: -6.5, logTau: 1.5 };
    await approveRun(await uploadOk(campAssay, agonistCsv([ref, { sample: P.batchNumber, logKA: -7, logTau: -0.25 }], { reference: ref, seed: 45 })));
    await page.reload();
    const call = page.getByTestId('ligand-calls').getByTestId('call').filter({ hasText: 'Mechanism page receptor' });
    await call.getByTestId('call-contradicted').waitFor();
    expect(await call.getByTestId('call-contradicted').textContent()).to.match(/Contradicted by a later result/);
    await shootFullPage(page, 'mechanism-contradicted.png');
    await call.getByRole('button', { name: /Back to the rule/ }).click();
    await page.getByRole('dialog').getByRole('button', { name: 'Back to the rule' }).click();
    await call.getByText('Computed suggestion').waitFor();
  });

  it('simulates the reference agonist with the partial agonist and draws the curves', async () => {
    const panel = page.getByTestId('what-if');
    await panel.getByRole('button', { name: 'Simulate' }).click();
    const table = panel.getByRole('table', { name: 'Simulated curves' });
    await table.waitFor();
    expect(await panel.locator('canvas').count()).to.equal(1);
    expect(await table.getByRole('row').count()).to.be.greaterThan(2);
    await panel.scrollIntoViewIfNeeded();
    await shootFullPage(page, 'mechanism-what-if.png');
  });

  it('draws the Schild plot of an antagonist-mode run with pA2, the slope and the flags in words', async () => {
    await page.goto(`${session.baseUrl}/assays/runs/${schildRun}`);
    const section = page.getByTestId('schild-analysis');
    const a1 = section.getByRole('article', { name: new RegExp(A1.batchNumber) });
    await a1.waitFor();
    await a1.locator('canvas').first().waitFor();
    expect(await a1.locator('canvas').count()).to.equal(2);
    const text = (await a1.textContent()) ?? '';
    expect(text).to.match(/pA2\s*8\.\d\d \(95 % CI/);
    expect(text).to.match(/Schild slope\s*(0\.[89]|1\.[01])\d/);
    expect(text).to.match(/pKB \(slope held at 1\)\s*8\.\d\d/);
    const flagged = await section.locator('[data-flag="saturating-shift"]').count();
    expect(flagged).to.equal(1);
    await shootFullPage(page, 'mechanism-schild-run.png');
  });

  it('draws the modulation run: agonist curves per modulator concentration, fold-shifts and the PAM classification', async () => {
    await page.goto(`${session.baseUrl}/assays/runs/${modulationRun}`);
    const section = page.getByTestId('allosteric-analysis');
    const m = section.getByRole('article', { name: new RegExp(M.batchNumber) });
    await m.waitFor();
    await m.locator('canvas').first().waitFor();
    expect(await m.getByTestId('modulator-class').textContent()).to.match(/Positive allosteric modulator/);
    expect(await m.getByRole('table', { name: /Shifts caused by/ }).getByRole('row').count()).to.equal(5);
    await shootFullPage(page, 'mechanism-allosteric-run.png');
  });

  it('shows the assay’s call thresholds with the defaults as common practice, and saves a change', async () => {
    await page.goto(`${session.baseUrl}/assays/${campAssay}`);
    const panel = page.getByTestId('call-thresholds');
    await panel.getByText('common practice, not a published standard').waitFor();
    const full = panel.getByLabel('Full agonist at α ≥');
    await full.fill('0.15');
    await panel.getByText(/Must be below the full-agonist threshold/).waitFor();
    expect(await panel.getByRole('button', { name: 'Save and recompute the calls' }).isDisabled()).to.equal(true);
    await full.fill('0.95');
    await panel.getByRole('button', { name: 'Save and recompute the calls' }).click();
    await page.getByText(/Thresholds saved; \d+ ligand-type calls? recomputed/).waitFor();
    await panel.getByText('this assay’s', { exact: true }).waitFor();
    await shootFullPage(page, 'mechanism-thresholds.png');
    await panel.getByRole('button', { name: 'Use the defaults' }).click();
    await page.getByRole('dialog').getByRole('button', { name: 'Use the defaults' }).click();
    await page.getByRole('dialog').waitFor({ state: 'detached' });
    let overrides: Record<string, number> = {};
    for (let i = 0; i < 50; i++) {
      overrides = (await request(testApp()).get(`/api/assays/${campAssay}/call-thresholds`).set(await auth('viewer'))).body.overrides;
      if (!Object.keys(overrides).length) break;
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(overrides).to.deep.equal({});
    expect(pageErrors, 'uncaught page errors').to.deep.equal([]);
    expect(foreign, 'requests to other hosts').to.deep.equal([]);
  });
});
