// Mechanism through real HTTP on the real database: operational-model values on a fitted agonist
// run (Black & Leff 1983), ligand-type calls with their evidence, overrides and thresholds, Schild
// analysis (Arunlakshana & Schild 1959) and allosteric modulation (ATCM, Ehlert 1988) from
// uploaded simulated raw data, bias (Kenakin et al. 2012) and the what-if simulation.
import { expect } from 'chai';
import request from 'supertest';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';
import { agonistCsv, approveRun, createAssay, LOGS, register, runResults, upload, uploadOk, type AgonistSim, type Ligand } from '../helpers/mechanism.js';
import type { Role } from '../../api/src/domain/roles.js';
import { callsFor } from '../../api/src/services/call.service.js';

const app = () => testApp();
const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

function bindingCsv(samples: { sample: string; ic50: number }[]): string {
  const rows = ['sample,concentration,unit,response,replicate', 'BASAL,,,5000,1', 'BASAL,,,5000,2', 'BLANK,,,500,1', 'BLANK,,,500,2'];
  for (const s of samples) {
    for (const log of [-11, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5]) {
      const c = 10 ** log;
      const y = 500 + 4500 / (1 + c / s.ic50);
      rows.push(`${s.sample},${c},M,${y},1`, `${s.sample},${c},M,${y},2`);
    }
  }
  return rows.join('\n') + '\n';
}

describe('mechanism: operational model, calls, Schild, allosteric modulation, bias and what-if', function () {
  this.timeout(60_000);
  let targetId: number;
  let camp: number;
  let arrestin: number;
  let binding: number;
  let antagonist: number;
  let modulation: number;
  let R: Ligand; // reference full agonist
  let F: Ligand; // full agonist
  let P: Ligand; // partial agonist
  let N: Ligand; // neutral antagonist
  let I: Ligand; // inverse agonist
  let A1: Ligand; // competitive antagonist, pKB 8.5
  let A2: Ligand; // allosteric antagonist with limited cooperativity (saturating shift)
  let M: Ligand; // positive allosteric modulator
  let campRun: number;

  const ref = (sample: string): AgonistSim => ({ sample, logKA: -6.5, logTau: 1.5 });

  before(async () => {
    const t = await request(app()).post('/api/targets').set(await auth('pharmacologist')).send({ name: 'Mechanism receptor', geneSymbol: 'MECH1', family: 'GPCR', species: 'human' });
    expect(t.status, JSON.stringify(t.body)).to.equal(201);
    targetId = t.body.id;
    R = await register('CCCN(CCC)CCc1ccc(O)cc1', 'mechanism reference agonist');
    F = await register('CCCN(CCC)CCc1ccc(OC)cc1', 'mechanism full agonist');
    P = await register('CCCN(CCC)CCc1ccc(Cl)cc1', 'mechanism partial agonist');
    N = await register('CCCN(CCC)CCc1ccc(Br)cc1', 'mechanism neutral antagonist');
    I = await register('CCCN(CCC)CCc1ccc(F)cc1', 'mechanism inverse agonist');
    A1 = await register('CCCN(CCC)CCc1ccc(C)cc1', 'mechanism competitive antagonist');
    A2 = await register('CCCN(CCC)CCc1ccc(CC)cc1', 'mechanism allosteric antagonist');
    M = await register('CCCN(CCC)CCc1ccc(C#N)cc1', 'mechanism PAM');
    camp = await createAssay({ code: 'MECH-CAMP', name: 'cAMP (constitutively active)', targetId, kind: 'functional-agonist', constitutiveActivity: true, referenceCompound: R.registryNumber });
    arrestin = await createAssay({ code: 'MECH-ARR', name: 'β-arrestin', readout: 'β-arrestin', targetId, kind: 'functional-agonist', referenceCompound: R.registryNumber });
    binding = await createAssay({ code: 'MECH-BIND', name: 'binding', readout: 'cpm', targetId, kind: 'binding', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
    antagonist = await createAssay({ code: 'MECH-SCHILD', name: 'antagonist mode (Schild)', targetId, kind: 'functional-antagonist', agonistConcM: 3e-8, agonistEc50M: 1e-8 });
    modulation = await createAssay({ code: 'MECH-ALLO', name: 'allosteric modulation', targetId, kind: 'allosteric-modulation', referenceCompound: R.registryNumber, agonistConcM: 1e-8 });
    campRun = await uploadOk(camp, agonistCsv([
      ref(R.batchNumber),
      { sample: F.batchNumber, logKA: -7, logTau: 1.2 },
      { sample: P.batchNumber, logKA: -7, logTau: -0.2 },
      { sample: N.batchNumber, logKA: -7.5, logTau: -Infinity },
      { sample: I.batchNumber, logKA: -7.5, logTau: -Infinity, inverse: 0.8 },
    ], { constitutive: 3000, reference: ref(R.batchNumber), seed: 11 }));
  });

  describe('operational model per result (Black & Leff 1983)', () => {
    it('stores log τ, log KA and log(τ/KA) of a partial agonist, recovering the simulated values', async () => {
      const p = (await runResults(campRun)).find((r) => r.compound.id === P.id)!;
      // Em is the reference's fitted top (≈ 96.9 % of the true system maximum), so τ comes out
      // slightly high; the simulated log τ −0.2 and log KA −7 are recovered within 0.1 log units.
      expect(p.values.logTau.value).to.be.closeTo(-0.2, 0.1);
      expect(p.values.logKA.value).to.be.closeTo(-7, 0.15);
      expect(p.values.logTauKA.value).to.be.closeTo(6.8, 0.1);
      expect(p.values.logTauKA.se).to.be.a('number');
      expect(p.values.logTauKA.ci95).to.have.length(2);
      expect(p.values.logTau.qualifier).to.equal('=');
    });

    it('reports τ of the reference full agonist as a lower bound and only its log(τ/KA) as a value', async () => {
      const r = (await runResults(campRun)).find((x) => x.isReference)!;
      expect(r.values.logTau.qualifier).to.equal('>');
      expect(r.values.logTauKA.qualifier).to.equal('=');
      // log(τ/KA) = 1.5 + 6.5 = 8 (REFERENCES.md §4 relation), within the fit's error.
      expect(r.values.logTauKA.value).to.be.closeTo(8, 0.15);
    });

    it('gives no operational parameters to a curve without agonism, and a basal change to every compound in a constitutively active system', async () => {
      const results = await runResults(campRun);
      const n = results.find((r) => r.compound.id === N.id)!;
      const i = results.find((r) => r.compound.id === I.id)!;
      expect(n.values.logTauKA).to.equal(undefined);
      expect(Math.abs(n.values.basalChange.value)).to.be.below(10);
      // 0.8 × 3000 of a reference window of ≈ 8720 raw units: ≈ −27.5 %.
      expect(i.values.basalChange.value).to.be.closeTo(-27.5, 3);
    });
  });

  describe('ligand-type calls', () => {
    before(async () => {
      const b = await uploadOk(binding, bindingCsv([{ sample: N.batchNumber, ic50: 2 * 10 ** -7.5 }, { sample: I.batchNumber, ic50: 2 * 10 ** -7.5 }]));
      await approveRun(b);
      await approveRun(campRun);
    });

    const callOf = async (c: Ligand) => {
      const res = await request(app()).get(`/api/calls?compound=${c.registryNumber}&target=${targetId}`).set(await auth('viewer'));
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      expect(res.body.items).to.have.length(1);
      return res.body.items[0];
    };

    it('calls full, partial, neutral and inverse agonists from the approved results, with the evidence and the caution', async () => {
      expect((await callOf(R)).call).to.equal('full agonist');
      expect((await callOf(F)).call).to.equal('full agonist');
      expect((await callOf(P)).call).to.equal('partial agonist');
      const n = await callOf(N);
      expect(n.call).to.equal('neutral antagonist');
      expect(n.rule).to.match(/basal/);
      expect(n.evidence).to.have.length(2);
      expect(n.evidence.map((e: { assayCode: string }) => e.assayCode).sort()).to.deep.equal(['MECH-BIND', 'MECH-CAMP']);
      const i = await callOf(I);
      expect(i.call).to.equal('inverse agonist');
      expect(i.evidence.find((e: { assayCode: string }) => e.assayCode === 'MECH-CAMP').note).to.match(/inverse agonist/);
      expect(i.caution).to.match(/qualified pharmacologist/);
      expect(i.source).to.equal('rule');
    });

    it('answers the SAR table through callsFor, keyed compound:target', async () => {
      const map = await callsFor(testOrm().em.fork(), [P.id, I.id], [targetId]);
      expect(map.get(`${P.id}:${targetId}`)).to.deep.equal({ call: 'partial agonist', source: 'rule', contradicted: false });
      expect(map.get(`${I.id}:${targetId}`)?.call).to.equal('inverse agonist');
    });

    it('changes a call when the assay\'s threshold is edited, and back when it is reset', async () => {
      const bad = await request(app()).put(`/api/assays/${camp}/call-thresholds`).set(await auth('pharmacologist')).send({ thresholds: { fullAgonistAlpha: 'high' } });
      expect(bad.status).to.equal(400);
      expect(bad.body.error.details[0].field).to.equal('thresholds.fullAgonistAlpha');
      const crossed = await request(app()).put(`/api/assays/${camp}/call-thresholds`).set(await auth('pharmacologist')).send({ thresholds: { partialAgonistAlpha: 0.9, fullAgonistAlpha: 0.5 } });
      expect(crossed.status).to.equal(400);
      expect(crossed.body.error.details[0].field).to.equal('thresholds.partialAgonistAlpha');
      const up = await request(app()).put(`/api/assays/${camp}/call-thresholds`).set(await auth('pharmacologist')).send({ thresholds: { fullAgonistAlpha: 0.99 } });
      expect(up.status, JSON.stringify(up.body)).to.equal(200);
      expect(up.body.effective.fullAgonistAlpha).to.equal(0.99);
      expect((await callOf(F)).call).to.equal('partial agonist');
      const reset = await request(app()).put(`/api/assays/${camp}/call-thresholds`).set(await auth('pharmacologist')).send({ thresholds: null });
      expect(reset.status).to.equal(200);
      expect(reset.body.overrides).to.deep.equal({});
      expect((await callOf(F)).call).to.equal('full agonist');
    });

    it('needs a reason to override a call; the override is audited', async () => {
      const p = await callOf(P);
      const none = await request(app()).post(`/api/calls/${p.id}/override`).set(await auth('pharmacologist')).send({ call: 'neutral antagonist' });
      expect(none.status).to.equal(400);
      expect(none.body.error.details.map((d: { field: string }) => d.field)).to.include('reason');
      const badCall = await request(app()).post(`/api/calls/${p.id}/override`).set(await auth('pharmacologist')).send({ call: 'super agonist', reason: 'because' });
      expect(badCall.status).to.equal(400);
      expect(badCall.body.error.details[0].field).to.equal('call');
      const lead = await request(app()).post(`/api/calls/${p.id}/override`).set(await auth('lead')).send({ call: 'neutral antagonist', reason: 'washout experiment' });
      expect(lead.status).to.equal(403);
      const ok = await request(app()).post(`/api/calls/${p.id}/override`).set(await auth('pharmacologist')).send({ call: 'neutral antagonist', reason: 'no agonism in native tissue (notebook PH-12)' });
      expect(ok.status, JSON.stringify(ok.body)).to.equal(200);
      expect(ok.body).to.include({ call: 'neutral antagonist', source: 'manual', computedCall: 'partial agonist', contradicted: false });
      expect(ok.body.override.reason).to.match(/native tissue/);
      const events = await testOrm().em.fork().getConnection().execute<{ action: string }[]>(`select action from audit_event where entity_type = 'LigandCall' and entity_id = ? and action = 'call.override'`, [String(p.id)]);
      expect(events).to.have.length(1);
    });

    it('flags an override that a later approved result contradicts, and clears the override back to the rule', async () => {
      const arr = await uploadOk(arrestin, agonistCsv([{ ...ref(R.batchNumber), logTau: 1.0 }, { sample: P.batchNumber, logKA: -7, logTau: -0.3 }, { sample: F.batchNumber, logKA: -7, logTau: 0.9 }], { reference: { ...ref(R.batchNumber), logTau: 1.0 }, seed: 12 }));
      await approveRun(arr);
      const p = await callOf(P);
      expect(p).to.include({ call: 'neutral antagonist', source: 'manual', computedCall: 'partial agonist', contradicted: true });
      const flaggedEvents = await testOrm().em.fork().getConnection().execute<{ action: string }[]>(`select action from audit_event where entity_type = 'LigandCall' and entity_id = ? and action = 'call.contradicted'`, [String(p.id)]);
      expect(flaggedEvents).to.have.length(1);
      const flagged = await request(app()).get(`/api/calls?contradicted=true&target=${targetId}`).set(await auth('lead'));
      expect(flagged.body.items.map((c: { id: number }) => c.id)).to.include(p.id);
      const cleared = await request(app()).post(`/api/calls/${p.id}/clear-override`).set(await auth('pharmacologist')).send({ reason: 'superseded by the arrestin data' });
      expect(cleared.status, JSON.stringify(cleared.body)).to.equal(200);
      expect(cleared.body).to.include({ call: 'partial agonist', source: 'rule', contradicted: false });
      const again = await request(app()).post(`/api/calls/${p.id}/clear-override`).set(await auth('pharmacologist')).send({});
      expect(again.status).to.equal(409);
    });

    it('recomputes on demand for a compound, and refuses a body naming neither compound nor project', async () => {
      const res = await request(app()).post('/api/calls/recompute').set(await auth('pharmacologist')).send({ compound: P.registryNumber });
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      expect(res.body).to.deep.equal({ compounds: 1, calls: 1 });
      const bad = await request(app()).post('/api/calls/recompute').set(await auth('pharmacologist')).send({});
      expect(bad.status).to.equal(400);
      expect(bad.body.error.details[0].field).to.equal('compound');
    });

    // Kenakin et al. (2012): a ligand equal to the reference on both readouts has ΔΔlog(τ/KA) = 0.
    it('gives the reference agonist a bias of 0 (bias factor 1) against itself between two readouts', async () => {
      const res = await request(app()).get(`/api/bias?compound=${R.registryNumber}&target=${targetId}`).set(await auth('viewer'));
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      expect(res.body.pairs).to.have.length(1);
      const pair = res.body.pairs[0];
      expect(pair.deltaDelta.value).to.equal(0);
      expect(pair.biasFactor.value).to.equal(1);
      expect(pair.deltaDelta.se).to.be.above(0);
      expect(pair.deltaDelta.ci95[0]).to.be.below(0);
      expect(res.body.method).to.match(/Kenakin/);
    });

    it('gives the bias of a partial agonist between two readouts relative to the reference (ΔΔ = −0.4 simulated)', async () => {
      const res = await request(app()).get(`/api/bias?compound=${P.registryNumber}&target=${targetId}&assays=${camp},${arrestin}`).set(await auth('viewer'));
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      // Simulated: Δ(cAMP) = (−0.2 + 7) − (1.5 + 6.5) = −1.2; Δ(arrestin) = (−0.3 + 7) − (1.0 + 6.5) = −0.8;
      // ΔΔ = −0.4 (biased toward arrestin, relative to the reference). Em from the reference's top
      // shifts each estimate slightly (log(1 + τ) terms), hence the tolerance.
      expect(res.body.pairs[0].deltaDelta.value).to.be.closeTo(-0.4, 0.25);
      const bad = await request(app()).get(`/api/bias?compound=${P.registryNumber}&target=${targetId}&assays=${camp}`).set(await auth('viewer'));
      expect(bad.status).to.equal(400);
      expect(bad.body.error.details[0].field).to.equal('assays');
    });

    // Two agonists at one site (what-if.ts): a partial agonist lowers the response to a near-maximal
    // concentration of the full agonist toward its own maximum (common practice).
    it('simulates the reference agonist with fixed concentrations of a partial agonist', async () => {
      const res = await request(app()).get(`/api/what-if?compound=${P.registryNumber}&assay=${camp}`).set(await auth('viewer'));
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      const curves = res.body.curves as { bConcM: number; baseline: number; maximum: number; points: { logConc: number; response: number }[] }[];
      expect(curves[0].bConcM).to.equal(0);
      expect(curves[0].baseline).to.equal(0);
      const last = curves[curves.length - 1];
      expect(last.baseline).to.be.above(20);
      const at = (c: (typeof curves)[number], x: number) => c.points.reduce((best, p) => (Math.abs(p.logConc - x) < Math.abs(best.logConc - x) ? p : best)).response;
      expect(at(last, -8)).to.be.below(at(curves[0], -8));
      const none = await request(app()).get(`/api/what-if?compound=${P.registryNumber}&assay=${binding}`).set(await auth('viewer'));
      expect(none.status).to.equal(400);
      expect(none.body.error.details[0].field).to.equal('assay');
    });
  });

  describe('Schild analysis (Arunlakshana & Schild 1959) from an antagonist-mode run', () => {
    let runId: number;
    before(async () => {
      const agonist = ref(R.batchNumber);
      const sims: AgonistSim[] = [agonist];
      for (const b of [1e-8, 1e-7, 1e-6]) sims.push({ ...agonist, condition: `antagonist ${A1.batchNumber} ${b * 1e9} nM`, kaFactor: 1 + b / 10 ** -8.5 });
      // ATCM with α = 0.03, KB = 100 nM: the dose ratio tends to 1/α ≈ 33 (REFERENCES.md §7).
      for (const b of [1e-7, 1e-6, 1e-5, 1e-4]) sims.push({ ...agonist, condition: `antagonist ${A2.registryNumber} ${b} M`, kaFactor: (1 + b / 1e-7) / (1 + (0.03 * b) / 1e-7) });
      runId = await uploadOk(antagonist, agonistCsv(sims, { reference: agonist, seed: 21 }));
    });

    it('stores pA2, the Schild slope and pKB for a competitive antagonist (slope 1, pA2 = pKB = 8.5 within the interval)', async () => {
      const results = await runResults(runId);
      expect(results.map((r) => r.compound.id).sort()).to.deep.equal([A1.id, A2.id].sort());
      const a1 = results.find((r) => r.compound.id === A1.id)!;
      expect(a1.values.schildSlope.ci95![0]).to.be.below(1);
      expect(a1.values.schildSlope.ci95![1]).to.be.above(1);
      expect(a1.values.pA2.value).to.be.closeTo(8.5, 0.15);
      expect(a1.values.pA2.ci95![0]).to.be.below(8.5);
      expect(a1.values.pA2.ci95![1]).to.be.above(8.5);
      expect(a1.values.pKB.value).to.be.closeTo(8.5, 0.15);
    });

    it('flags the saturating shift of an allosteric antagonist and reports neither pKB nor pA2 as values', async () => {
      const res = await request(app()).get(`/api/runs/${runId}/schild`).set(await auth('viewer'));
      expect(res.status).to.equal(200);
      const a2 = res.body.items.find((i: { compound: { id: number } }) => i.compound.id === A2.id);
      expect(a2.schild.flags).to.include('saturating-shift');
      expect(a2.values.pKB).to.equal(undefined);
      expect(a2.values.pA2).to.equal(undefined);
      expect(a2.schild.pA2.value).to.be.a('number');
      expect(a2.values.schildSlope.value).to.be.below(0.7);
    });

    it('serves the Schild plot: log[B], log(DR − 1), the regression line and each agonist curve with its points', async () => {
      const res = await request(app()).get(`/api/runs/${runId}/schild`).set(await auth('viewer'));
      const a1 = res.body.items.find((i: { compound: { id: number } }) => i.compound.id === A1.id);
      expect(a1.schild.points.map((p: { logB: number }) => p.logB)).to.deep.equal([-8, -7, -6]);
      expect(a1.schild.line).to.have.length(2);
      expect(a1.curves).to.have.length(4);
      expect(a1.curves[0].id).to.equal('control');
      expect(a1.curves[1].points).to.have.length(2 * LOGS.length);
      expect(a1.agonist.registryNumber).to.equal(R.registryNumber);
      // log(DR − 1) = log[B] − log KB: at [B] = 10 nM, log(DR − 1) = 0.5.
      expect(a1.schild.points[0].logDrMinus1).to.be.closeTo(0.5, 0.15);
    });

    it('excludes and restores a point of an agonist curve through the antagonist\'s result, re-running the Schild analysis', async () => {
      const view = await request(app()).get(`/api/runs/${runId}/schild`).set(await auth('viewer'));
      const a1 = view.body.items.find((i: { compound: { id: number } }) => i.compound.id === A1.id);
      const point = a1.curves[3].points[10];
      const result = (await runResults(runId)).find((r) => r.compound.id === A1.id)!;
      const before = result.values.pA2.value;
      const fixed = await request(app()).patch(`/api/results/${result.id}`).set(await auth('pharmacologist')).send({ fixed: { hillSlope: 1 } });
      expect(fixed.status).to.equal(400);
      expect(fixed.body.error.details[0].field).to.equal('fixed');
      const out = await request(app()).patch(`/api/results/${result.id}`).set(await auth('pharmacologist')).send({ exclude: [point.id] });
      expect(out.status, JSON.stringify(out.body)).to.equal(200);
      expect(out.body.analysis.kind).to.equal('schild');
      expect(out.body.values.pA2.value).to.not.equal(before);
      const again = await request(app()).get(`/api/runs/${runId}/schild`).set(await auth('viewer'));
      const excluded = again.body.items.find((i: { compound: { id: number } }) => i.compound.id === A1.id).curves[3].points[10];
      expect(excluded).to.include({ id: point.id, excluded: true });
      const back = await request(app()).patch(`/api/results/${result.id}`).set(await auth('pharmacologist')).send({ include: [point.id] });
      expect(back.body.values.pA2.value).to.be.closeTo(before, 1e-9);
    });

    it('calls the competitive antagonist a neutral antagonist and the saturating one a negative allosteric modulator once approved', async () => {
      await approveRun(runId);
      const calls = await request(app()).get(`/api/calls?target=${targetId}`).set(await auth('viewer'));
      const byCompound = new Map(calls.body.items.map((c: { compound: { id: number }; call: string }) => [c.compound.id, c.call]));
      expect(byCompound.get(A1.id)).to.equal('neutral antagonist');
      expect(byCompound.get(A2.id)).to.equal('negative allosteric modulator');
    });

    it('serves Schild and allosteric-modulation templates that upload as they are (sample numbers replaced)', async () => {
      const schild = await request(app()).get('/api/assays/templates/schild-long.csv').set(await auth('viewer'));
      expect(schild.status).to.equal(200);
      const run = await uploadOk(antagonist, schild.text.replaceAll('CPD-000001-01', R.batchNumber).replaceAll('CPD-000002-01', A1.batchNumber));
      const view = await request(app()).get(`/api/runs/${run}/schild`).set(await auth('viewer'));
      expect(view.body.items).to.have.length(1);
      expect(view.body.items[0].schild.points).to.have.length(2);
      const allo = await request(app()).get('/api/assays/templates/allosteric-long.csv').set(await auth('viewer'));
      const run2 = await uploadOk(modulation, allo.text.replaceAll('CPD-000001-01', R.batchNumber).replaceAll('CPD-000003-01', M.batchNumber));
      const view2 = await request(app()).get(`/api/runs/${run2}/allosteric`).set(await auth('viewer'));
      expect(view2.body.items[0].allosteric.shifts[0].foldShift).to.be.greaterThan(2);
    });

    it('refuses malformed or unknown antagonist conditions, naming the row and column', async () => {
      const csv = 'sample,concentration,unit,response,condition\nBASAL,,,1000,\nMAX,10,uM,9000,\n' + `${R.batchNumber},1,nM,3000,antagonist 10 nM\n${R.batchNumber},10,nM,5000,antagonist CPD-999999-01 10 nM\n`;
      const res = await upload(antagonist, csv);
      expect(res.status).to.equal(400);
      expect(res.body.error.details.map((d: { field: string }) => d.field)).to.deep.equal(['row 4, column condition', 'row 5, column condition']);
      const wrongRole = await upload(antagonist, csv.replace('antagonist 10 nM', `modulator ${A1.batchNumber} 10 nM`));
      expect(wrongRole.body.error.details[0].message).to.match(/takes "antagonist …" conditions/);
    });
  });

  describe('allosteric modulation (ATCM, Ehlert 1988)', () => {
    let runId: number;
    before(async () => {
      const agonist = ref(R.batchNumber);
      // PAM with α = 10, KB = 1 µM: fold-shifts 1.82, 5.5 and 9.2 at 0.1, 1 and 10 µM (REFERENCES.md §7).
      const sims: AgonistSim[] = [agonist, { sample: M.batchNumber, logKA: -6, logTau: -Infinity }];
      for (const b of [1e-7, 1e-6, 1e-5]) sims.push({ ...agonist, condition: `modulator ${M.batchNumber} ${b * 1e6} uM`, kaFactor: (1 + b / 1e-6) / (1 + (10 * b) / 1e-6) });
      runId = await uploadOk(modulation, agonistCsv(sims, { reference: agonist, seed: 31 }));
    });

    it('stores the fold-shift, the Emax change, log KB and log α in the modulator\'s result', async () => {
      const m = (await runResults(runId)).find((r) => r.compound.id === M.id)!;
      expect(m.values.foldShift.value).to.be.closeTo(9.2, 1.5);
      expect(Math.abs(m.values.emaxChange.value)).to.be.below(0.1);
      expect(m.values.logCooperativity.value).to.be.closeTo(1, 0.3);
      expect(m.values.logKB.value).to.be.closeTo(-6, 0.4);
    });

    it('serves the allosteric plot data and classifies a PAM', async () => {
      const res = await request(app()).get(`/api/runs/${runId}/allosteric`).set(await auth('viewer'));
      expect(res.status).to.equal(200);
      expect(res.body.items).to.have.length(1);
      const item = res.body.items[0];
      expect(item.allosteric.classification.call).to.equal('positive allosteric modulator');
      expect(item.allosteric.shifts.map((s: { logB: number }) => s.logB)).to.deep.equal([-7, -6, -5]);
      expect(item.curves).to.have.length(4);
      expect(item.modulatorAlone.points.length).to.equal(2 * LOGS.length);
      const none = await request(app()).get(`/api/runs/${runId}/schild`).set(await auth('viewer'));
      expect(none.body.items).to.deep.equal([]);
    });

    it('calls the modulator a positive allosteric modulator once approved', async () => {
      await approveRun(runId, [M.id]);
      const res = await request(app()).get(`/api/calls?compound=${M.id}`).set(await auth('viewer'));
      expect(res.body.items[0].call).to.equal('positive allosteric modulator');
      expect(res.body.items[0].evidence[0].note).to.match(/fold-shift/);
    });

    it('answers 404 for the analyses of a run that does not exist', async () => {
      const res = await request(app()).get('/api/runs/999999/allosteric').set(await auth('viewer'));
      expect(res.status).to.equal(404);
    });
  });
});
