// Assays, runs and results through real HTTP on the real database: upload validation (every
// documented error names its row or well and stores nothing), fits and derived values, refits,
// manual entry, and the review path with its e-mails in the fake mailbox.
import { expect } from 'chai';
import request from 'supertest';
import { mailTo, testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';
import { fixtureEmail } from '../helpers/fixtures.js';
import type { Role } from '../../api/src/domain/roles.js';

const app = () => testApp();
const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

async function count(table: string): Promise<number> {
  const rows = await testOrm().em.fork().getConnection().execute<{ n: string }[]>(`select count(*) as n from ${table}`);
  return Number(rows[0].n);
}

async function register(smiles: string, name: string): Promise<{ registryNumber: string; batchNumber: string }> {
  const res = await request(app()).post('/api/compounds').set(await auth('chemist')).send({ structure: smiles, name });
  expect(res.status, JSON.stringify(res.body)).to.equal(201);
  const batches = await request(app()).get(`/api/compounds/${res.body.id}/batches`).set(await auth('chemist'));
  return { registryNumber: res.body.registryNumber, batchNumber: batches.body.items[0].batchNumber };
}

/** Noise-free binding data: % specific binding follows mass action with IC50 = Ki(1 + [L]/Kd). */
function bindingCsv(sample: string, ic50: number, total = 5000, nsb = 500): string {
  const rows = ['sample,concentration,unit,response,replicate', `BASAL,,,${total},1`, `BASAL,,,${total},2`, `BLANK,,,${nsb},1`, `BLANK,,,${nsb},2`];
  for (const log of [-11, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5]) {
    const c = 10 ** log;
    const signal = nsb + (total - nsb) / (1 + c / ic50);
    rows.push(`${sample},${c},M,${signal},1`, `${sample},${c},M,${signal},2`);
  }
  return rows.join('\n') + '\n';
}

/** Agonist data in raw units: basal 1000, window 9000; each sample a 4PL with its own Emax fraction. */
function agonistCsv(curves: { sample: string; logEC50: number; fraction: number }[]): string {
  const rows = ['sample,concentration,unit,response,replicate', 'BASAL,,,1000,1', 'BASAL,,,1000,2', 'MAX,10,uM,10000,1', 'MAX,10,uM,10000,2'];
  for (const c of curves) {
    for (let log = -11; log <= -5; log += 0.5) {
      const y = 1000 + (9000 * c.fraction) / (1 + 10 ** (c.logEC50 - log));
      rows.push(`${c.sample},${(10 ** log).toExponential(6)},M,${y},1`);
    }
  }
  return rows.join('\n') + '\n';
}

function upload(assayId: number, csv: string, opts: { drop?: boolean; role?: Role } = {}) {
  return tokenFor(opts.role ?? 'pharmacologist').then((token) =>
    request(app())
      .post(`/api/assays/${assayId}/runs`)
      .set('Authorization', `Bearer ${token}`)
      .field('runDate', '2026-11-30')
      .field('dropBadRows', opts.drop ? 'true' : 'false')
      .attach('file', Buffer.from(csv), { filename: 'run.csv', contentType: 'text/csv' }),
  );
}

describe('/api/targets, /api/assays and /api/runs', () => {
  let targetId: number;
  let bindingAssay: number;
  let agonistAssay: number;
  let test: { registryNumber: string; batchNumber: string };
  let partial: { registryNumber: string; batchNumber: string };
  let reference: { registryNumber: string; batchNumber: string };

  before(async function () {
    this.timeout(60_000);
    const t = await request(app()).post('/api/targets').set(await auth('pharmacologist')).send({ name: 'Test receptor A', geneSymbol: 'TSTA', family: 'GPCR', species: 'human' });
    expect(t.status, JSON.stringify(t.body)).to.equal(201);
    targetId = t.body.id;
    test = await register('CCN(CC)CCOc1ccc(Cl)cc1', 'assay test ligand');
    partial = await register('CCN(CC)CCOc1ccc(Br)cc1', 'assay partial ligand');
    reference = await register('CCN(CC)CCOc1ccc(F)cc1', 'assay reference agonist');
    const b = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: 'TSTA-BIND', name: 'binding', targetId, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
    expect(b.status, JSON.stringify(b.body)).to.equal(201);
    bindingAssay = b.body.id;
    const a = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: 'TSTA-AGO', name: 'agonist', targetId, kind: 'functional-agonist', readout: 'cAMP', species: 'human', referenceCompound: reference.registryNumber });
    expect(a.status, JSON.stringify(a.body)).to.equal(201);
    agonistAssay = a.body.id;
  });

  it('refuses an assay that lacks what its kind needs, naming the fields', async () => {
    const res = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: 'TSTA-X', name: 'x', targetId, kind: 'binding', readout: 'cpm', species: 'human' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).to.have.members(['radioligandConcM', 'radioligandKdM']);
  });

  it('sets a project panel with one primary target and refuses two', async () => {
    const p = await request(app()).post('/api/projects').set(await auth('lead')).send({ code: 'ASSAYP', name: 'Assay project' });
    const ok = await request(app()).put(`/api/projects/${p.body.id}/targets`).set(await auth('pharmacologist')).send({ targets: [{ targetId, role: 'primary' }] });
    expect(ok.status, JSON.stringify(ok.body)).to.equal(200);
    expect(ok.body.targets[0]).to.include({ targetId, role: 'primary' });
    const two = await request(app()).put(`/api/projects/${p.body.id}/targets`).set(await auth('pharmacologist')).send({ targets: [{ targetId, role: 'primary' }, { targetId, role: 'primary' }] });
    expect(two.status).to.equal(400);
  });

  // Cheng & Prusoff (1973): with [L] = Kd, Ki = IC50/2, so pKi = pIC50 + log10(2).
  it('fits a binding run: pIC50 from the curve and pKi by Cheng–Prusoff with [L] = Kd', async () => {
    const res = await upload(bindingAssay, bindingCsv(test.batchNumber, 1e-7));
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    const run = await request(app()).get(`/api/runs/${res.body.runId}`).set(await auth('viewer'));
    expect(run.body.normalisation.method).to.equal('percent-specific-binding');
    expect(run.body.files).to.have.length(1);
    const r = run.body.results[0];
    expect(r.status).to.equal('draft');
    expect(r.values.pIC50.value).to.be.closeTo(7, 1e-4);
    expect(r.values.pKi.value).to.be.closeTo(7 + Math.log10(2), 1e-4);
    expect(r.values.pKi.qualifier).to.equal('=');
    expect(run.body.caution).to.match(/qualified pharmacologist/);
    const file = await request(app()).get(`/api/runs/${res.body.runId}/files/${run.body.files[0].id}`).set(await auth('viewer'));
    expect(file.status).to.equal(200);
    expect(file.text).to.equal(bindingCsv(test.batchNumber, 1e-7));
  });

  // Intrinsic activity (common practice): the reference full agonist has α = 1; half its maximum gives α = 0.5.
  it('fits an agonist run: α = 1 for the reference, 0.5 for a compound reaching half its maximum', async () => {
    const csv = agonistCsv([
      { sample: reference.batchNumber, logEC50: -8, fraction: 1 },
      { sample: partial.batchNumber, logEC50: -7, fraction: 0.5 },
    ]);
    const res = await upload(agonistAssay, csv);
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    const run = await request(app()).get(`/api/runs/${res.body.runId}`).set(await auth('viewer'));
    const ref = run.body.results.find((r: { isReference: boolean }) => r.isReference);
    const other = run.body.results.find((r: { isReference: boolean }) => !r.isReference);
    expect(ref.values.alpha.value).to.be.closeTo(1, 1e-9);
    expect(ref.values.emax.value).to.be.closeTo(100, 1e-3);
    expect(other.values.alpha.value).to.be.closeTo(0.5, 1e-4);
    expect(other.values.pEC50.value).to.be.closeTo(7, 1e-4);
  });

  it('fits a 96-well plate matrix with its plate map, the same as the long format', async () => {
    const letters = 'ABCDEFGH';
    const grid: string[][] = letters.split('').map(() => Array(12).fill(''));
    const map = ['well,sample,concentration,unit'];
    const logs = [-11, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5];
    logs.forEach((log, col) => {
      for (const row of [0, 1]) {
        grid[row][col] = String(500 + 4500 / (1 + 10 ** log / 1e-7));
        map.push(`${letters[row]}${col + 1},${test.batchNumber},${10 ** log},M`);
      }
    });
    for (const row of [2, 3]) {
      grid[row][0] = '5000';
      map.push(`${letters[row]}1,BASAL,,`);
      grid[row][1] = '500';
      map.push(`${letters[row]}2,BLANK,,`);
    }
    const matrix = [',' + Array.from({ length: 12 }, (_, i) => i + 1).join(','), ...grid.map((cells, r) => `${letters[r]},${cells.join(',')}`)].join('\n');
    const res = await request(app())
      .post(`/api/assays/${bindingAssay}/runs`)
      .set(await auth('pharmacologist'))
      .field('runDate', '2026-12-01')
      .attach('matrix', Buffer.from(matrix), 'plate.csv')
      .attach('map', Buffer.from(map.join('\n')), 'map.csv');
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    const run = await request(app()).get(`/api/runs/${res.body.runId}`).set(await auth('viewer'));
    expect(run.body.format).to.equal('plate');
    expect(run.body.files.map((f: { role: string }) => f.role)).to.deep.equal(['matrix', 'map']);
    expect(run.body.results[0].values.pIC50.value).to.be.closeTo(7, 1e-4);
    expect(run.body.measurements.find((m: { well: string }) => m.well === 'A1').concentrationM).to.equal(1e-11);
  });

  it('reports a potency beyond the tested range as a bound, not a number', async () => {
    const res = await upload(bindingAssay, bindingCsv(partial.batchNumber, 1e-3));
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    const run = await request(app()).get(`/api/runs/${res.body.runId}`).set(await auth('viewer'));
    const v = run.body.results[0].values;
    expect(v.pIC50.qualifier).to.equal('<');
    expect(v.pIC50.value).to.be.closeTo(5, 1e-9);
    expect(v.pKi.qualifier).to.equal('<');
  });

  describe('bad raw data: 400 naming the row or well, nothing stored', () => {
    const good = () => bindingCsv(test.batchNumber, 1e-7);
    const cases: [string, () => string, RegExp][] = [
      ['an unknown sample', () => good().replace(/\n[^\n]*-01,1e-11,M/, '\nCPD-999999-01,1e-11,M'), /row 6, column sample/],
      ['a bad unit', () => good().replace(/,M,/, ',furlongs,'), /row 6, column unit/],
      ['a non-numeric response', () => good().replace(/(\n[^\n]*-01,1e-11,M,)[^,]+/, '$1lots'), /row 6, column response/],
      ['a missing column', () => good().replace('sample,concentration,unit,response,replicate', 'sample,concentration,response,replicate').replace(/,M,/g, ','), /header/],
      ['an empty file', () => '', /file/],
      ['a duplicate well', () => 'sample,concentration,unit,response,well\nBASAL,,,100,A1\nBLANK,,,10,A2\nBLANK,,,11,A1\n', /row 4/],
    ];
    for (const [what, csv, where] of cases) {
      it(`${what}`, async () => {
        const before = [await count('run'), await count('measurement'), await count('result'), await count('run_file')];
        const res = await upload(bindingAssay, csv());
        expect(res.status, JSON.stringify(res.body)).to.equal(400);
        const text = JSON.stringify(res.body.error);
        expect(text).to.match(where);
        expect([await count('run'), await count('measurement'), await count('result'), await count('run_file')]).to.deep.equal(before);
      });
    }

    it('a plate of the wrong size', async () => {
      const token = await tokenFor('pharmacologist');
      const matrix = ',1,2,3\nA,1,2,3\nB,1,2,3\n';
      const map = 'well,sample,concentration,unit\nA1,BASAL,,\n';
      const before = await count('run');
      const res = await request(app()).post(`/api/assays/${bindingAssay}/runs`).set('Authorization', `Bearer ${token}`).field('runDate', '2026-11-30').attach('matrix', Buffer.from(matrix), 'm.csv').attach('map', Buffer.from(map), 'map.csv');
      expect(res.status).to.equal(400);
      expect(JSON.stringify(res.body.error)).to.match(/wrong plate size/);
      expect(await count('run')).to.equal(before);
    });

    it('a binary file', async () => {
      const res = await upload(bindingAssay, '\u0000\u0001\u0002PNG');
      expect(res.status).to.equal(400);
      expect(res.body.error.message).to.match(/not a text/);
    });

    it('keeps the good rows when the user asks to drop the bad ones', async () => {
      const csv = good().replace(/,M,/, ',furlongs,');
      const res = await upload(bindingAssay, csv, { drop: true });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      expect(res.body.droppedRows).to.equal(1);
      const run = await request(app()).get(`/api/runs/${res.body.runId}`).set(await auth('viewer'));
      expect(run.body.droppedRows[0].where).to.match(/row 6/);
      expect(run.body.measurements).to.have.length(4 + 21);
    });
  });

  it('only pharmacologists and admins upload', async () => {
    const res = await upload(bindingAssay, bindingCsv(test.batchNumber, 1e-7), { role: 'lead' });
    expect(res.status).to.equal(403);
  });

  describe('refit, submit and review', () => {
    let runId: number;
    let resultId: number;

    before(async () => {
      const noisy = bindingCsv(test.batchNumber, 1e-8).replace(/(\n[^\n]*-01,1e-11,M,)[^,]+,1/, '$1200,1');
      const res = await upload(bindingAssay, noisy);
      runId = res.body.runId;
      const run = await request(app()).get(`/api/runs/${runId}`).set(await auth('viewer'));
      resultId = run.body.results[0].id;
    });

    it('excludes an outlier and refits; restoring it brings the first fit back', async () => {
      const run = await request(app()).get(`/api/runs/${runId}`).set(await auth('viewer'));
      const first = run.body.results[0];
      const outlier = run.body.measurements.find((m: { response: number }) => m.response === 200);
      const refit = await request(app()).patch(`/api/results/${resultId}`).set(await auth('pharmacologist')).send({ exclude: [outlier.id], version: first.version });
      expect(refit.status, JSON.stringify(refit.body)).to.equal(200);
      expect(refit.body.values.pIC50.value).to.be.closeTo(8, 1e-4);
      expect(refit.body.fit.rSquared).to.be.greaterThan(first.fit.rSquared);
      const back = await request(app()).patch(`/api/results/${resultId}`).set(await auth('pharmacologist')).send({ include: [outlier.id] });
      expect(back.body.values.pIC50.value).to.be.closeTo(first.values.pIC50.value, 1e-6);
      const stale = await request(app()).patch(`/api/results/${resultId}`).set(await auth('pharmacologist')).send({ exclude: [outlier.id], version: first.version });
      expect(stale.status).to.equal(409);
    });

    it('holds a fixed Hill slope exactly', async () => {
      const res = await request(app()).patch(`/api/results/${resultId}`).set(await auth('pharmacologist')).send({ fixed: { hillSlope: -1 } });
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      expect(res.body.values.hillSlope.value).to.equal(-1);
      expect(res.body.fixed).to.deep.equal({ hillSlope: -1 });
    });

    it('submits the run, e-mails the leads, and locks the results', async () => {
      const res = await request(app()).post(`/api/runs/${runId}/submit`).set(await auth('pharmacologist'));
      expect(res.status, JSON.stringify(res.body)).to.equal(200);
      expect(res.body.submitted).to.include(resultId);
      const mail = await mailTo(fixtureEmail('lead'), 'submitted for review', test.registryNumber);
      expect(mail.text).to.include(test.registryNumber);
      const locked = await request(app()).patch(`/api/results/${resultId}`).set(await auth('pharmacologist')).send({ fixed: {} });
      expect(locked.status).to.equal(409);
      const queue = await request(app()).get('/api/results?status=submitted&points=true').set(await auth('lead'));
      const item = queue.body.items.find((r: { id: number }) => r.id === resultId);
      expect(item.points.length).to.be.greaterThan(10);
    });

    it('needs a comment to reject; a lead approves and the pharmacologist is e-mailed', async () => {
      const bare = await request(app()).post(`/api/results/${resultId}/reject`).set(await auth('lead')).send({});
      expect(bare.status).to.equal(400);
      const ok = await request(app()).post(`/api/results/${resultId}/approve`).set(await auth('lead')).send({ comment: 'Clean curve.' });
      expect(ok.status, JSON.stringify(ok.body)).to.equal(200);
      expect(ok.body.status).to.equal('approved');
      expect(ok.body.reviewedBy.name).to.be.a('string');
      await mailTo(fixtureEmail('pharmacologist'), 'approved', test.registryNumber);
      const again = await request(app()).post(`/api/results/${resultId}/approve`).set(await auth('lead')).send({});
      expect(again.status).to.equal(409);
      const events = await testOrm().em.fork().getConnection().execute<{ action: string }[]>(`select action from audit_event where entity_type = 'Result' and entity_id = '${resultId}' order by id`);
      expect(events.map((e) => e.action)).to.include.members(['result.refit', 'result.submit', 'result.approve']);
    });
  });

  describe('manual entry', () => {
    it('a retired assay keeps its results but takes no new ones (409), until it is restored', async () => {
      const a = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: 'TSTA-OLD', name: 'old binding', targetId, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
      expect(a.status, JSON.stringify(a.body)).to.equal(201);
      const retired = await request(app()).patch(`/api/assays/${a.body.id}`).set(await auth('pharmacologist')).send({ retired: true, version: a.body.version });
      expect(retired.status, JSON.stringify(retired.body)).to.equal(200);
      const entry = { assayId: a.body.id, sample: test.batchNumber, values: { pKi: { value: 6.5 } }, note: 'after retirement' };
      const refused = await request(app()).post('/api/results').set(await auth('pharmacologist')).send(entry);
      expect(refused.status).to.equal(409);
      expect(refused.body.error.code).to.equal('assay_retired');
      const upload = await request(app()).post(`/api/assays/${a.body.id}/runs`).set(await auth('pharmacologist')).field('runDate', '2026-11-30').attach('file', Buffer.from(bindingCsv(test.batchNumber, 1e-8)), { filename: 'run.csv', contentType: 'text/csv' });
      expect(upload.status).to.equal(409);
      await request(app()).patch(`/api/assays/${a.body.id}`).set(await auth('pharmacologist')).send({ retired: false, version: retired.body.version }).expect(200);
      expect((await request(app()).post('/api/results').set(await auth('pharmacologist')).send(entry)).status).to.equal(201);
    });

    it('stores values measured elsewhere as a draft, with qualifiers and n', async () => {
      const res = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: bindingAssay, sample: test.batchNumber, values: { pKi: { value: 7.2, qualifier: '=', sd: 0.2, n: 4 } }, note: 'Contract lab report 2026-11' });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      expect(res.body.source).to.equal('manual');
      expect(res.body.values.pKi).to.include({ value: 7.2, qualifier: '=', n: 4 });
      expect(res.body.values.pKi.se).to.be.closeTo(0.1, 1e-12);
    });

    it('refuses a parameter of another assay kind, a p-value out of range and an unknown sample', async () => {
      const wrongKind = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: bindingAssay, sample: test.batchNumber, values: { pEC50: { value: 7, qualifier: '=' } }, note: 'x' });
      expect(wrongKind.status).to.equal(400);
      expect(wrongKind.body.error.message).to.match(/pEC50/);
      const range = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: bindingAssay, sample: test.batchNumber, values: { pKi: { value: 70, qualifier: '=' } }, note: 'x' });
      expect(range.status).to.equal(400);
      expect(range.body.error.details[0].field).to.equal('values.pKi');
      const unknown = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: bindingAssay, sample: 'CPD-999999-01', values: { pKi: { value: 7, qualifier: '=' } }, note: 'x' });
      expect(unknown.status).to.equal(400);
      expect(unknown.body.error.details[0].field).to.equal('sample');
    });
  });

  it('serves the three templates', async () => {
    for (const name of ['raw-data-long.csv', 'plate-matrix-96.csv', 'plate-map-96.csv']) {
      const res = await request(app()).get(`/api/assays/templates/${name}`).set(await auth('viewer'));
      expect(res.status).to.equal(200);
      expect(res.headers['content-type']).to.match(/text\/csv/);
    }
  });
});
