// Shared set-up for the mechanism tests (API and pages): compounds, assays and runs through real
// HTTP, and simulated raw agonist signal under the operational model.
import { expect } from 'chai';
import request from 'supertest';
import type { Role } from '../../api/src/domain/roles.js';
import { testApp, tokenFor } from './api.js';
import { gaussian } from './seeded-noise.js';

const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

export interface Ligand {
  registryNumber: string;
  batchNumber: string;
  id: number;
}

/** Registers a structure as the chemist; answers its numbers and first batch. */
export async function register(smiles: string, name: string): Promise<Ligand> {
  const res = await request(testApp()).post('/api/compounds').set(await auth('chemist')).send({ structure: smiles, name });
  expect(res.status, JSON.stringify(res.body)).to.equal(201);
  const batches = await request(testApp()).get(`/api/compounds/${res.body.id}/batches`).set(await auth('chemist'));
  return { id: res.body.id, registryNumber: res.body.registryNumber, batchNumber: batches.body.items[0].batchNumber };
}

/** Creates an assay as the pharmacologist (cAMP, human unless given); answers its id. */
export async function createAssay(body: Record<string, unknown>): Promise<number> {
  const res = await request(testApp()).post('/api/assays').set(await auth('pharmacologist')).send({ readout: 'cAMP', species: 'human', ...body });
  expect(res.status, JSON.stringify(res.body)).to.equal(201);
  return res.body.id;
}

/** Uploads a long-CSV run as the pharmacologist; answers the raw response (for refusals too). */
export async function upload(assayId: number, csv: string) {
  return request(testApp()).post(`/api/assays/${assayId}/runs`).set(await auth('pharmacologist')).field('runDate', '2026-12-01').attach('file', Buffer.from(csv), { filename: 'run.csv', contentType: 'text/csv' });
}

/** Uploads a run that must be accepted; answers its id. */
export async function uploadOk(assayId: number, csv: string): Promise<number> {
  const res = await upload(assayId, csv);
  expect(res.status, JSON.stringify(res.body)).to.equal(201);
  return res.body.runId;
}

export async function runResults(runId: number) {
  const run = await request(testApp()).get(`/api/runs/${runId}`).set(await auth('viewer'));
  expect(run.status).to.equal(200);
  return run.body.results as { id: number; compound: { id: number }; isReference: boolean; values: Record<string, { value: number; qualifier: string; se: number | null; ci95: [number, number] | null }>; status: string }[];
}

/** Submits a run's drafts (those of the `only` compounds when given) and approves each as the lead (the approvals recompute the calls). */
export async function approveRun(runId: number, only?: number[]): Promise<void> {
  const results = await runResults(runId);
  const ids = results.filter((r) => !only || only.includes(r.compound.id)).map((r) => r.id);
  const s = await request(testApp()).post('/api/results/submit').set(await auth('pharmacologist')).send({ ids });
  expect(s.status, JSON.stringify(s.body)).to.equal(200);
  for (const id of ids) {
    const a = await request(testApp()).post(`/api/results/${id}/approve`).set(await auth('lead')).send({});
    expect(a.status, JSON.stringify(a.body)).to.equal(200);
  }
}

// Simulated raw signal: basal 1000 (+ a constitutive part), system maximum Em 9000 raw units over
// basal, operational model (Black & Leff 1983, n = 1), seeded noise of 40 raw units.
export interface AgonistSim {
  sample: string;
  logKA: number;
  logTau: number;
  /** Fraction of the constitutive signal removed at full occupancy (inverse agonism). */
  inverse?: number;
  condition?: string;
  /** Affinity scaling of a second ligand: KA,app = KA·factor (competitive: 1 + [B]/KB; ATCM (1 + [B]/KB)/(1 + α[B]/KB)). */
  kaFactor?: number;
}

export const EM = 9000;
export const LOGS = [-11, -10.5, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5.5, -5, -4.5, -4, -3.5];

export function opResponse(c: number, s: AgonistSim): number {
  if (!(s.logTau > -Infinity)) return 0;
  const tau = 10 ** s.logTau;
  const ka = 10 ** s.logKA * (s.kaFactor ?? 1);
  return (EM * tau * c) / ((1 + tau) * c + ka);
}

/** A long CSV of agonist curves in duplicate, with BASAL and MAX wells in triplicate. */
export function agonistCsv(sims: AgonistSim[], opts: { constitutive?: number; reference: AgonistSim; seed: number }): string {
  const noise = gaussian(opts.seed);
  const constitutive = opts.constitutive ?? 0;
  const basal = 1000 + constitutive;
  const rows = ['sample,concentration,unit,response,replicate,condition'];
  for (let r = 1; r <= 3; r++) {
    rows.push(`BASAL,,,${(basal + 40 * noise()).toFixed(1)},${r},`);
    rows.push(`MAX,10,uM,${(basal + opResponse(1e-5, opts.reference) + 40 * noise()).toFixed(1)},${r},`);
  }
  for (const s of sims) {
    for (const log of LOGS) {
      const c = 10 ** log;
      const occ = c / (c + 10 ** s.logKA);
      for (let r = 1; r <= 2; r++) {
        const y = basal + opResponse(c, s) - (s.inverse ?? 0) * constitutive * occ + 40 * noise();
        rows.push(`${s.sample},${c.toExponential(6)},M,${y.toFixed(1)},${r},${s.condition ?? ''}`);
      }
    }
  }
  return rows.join('\n') + '\n';
}
