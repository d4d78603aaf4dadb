// Selectivity review through real HTTP on the real database: the matrix agrees with the SAR
// aggregates, the window marks at its boundary, the ranking as worked by hand, decisions with
// their e-mails and the flag when later data moves a margin across the window, comparison and
// the leads' overview.
import { expect } from 'chai';
import request from 'supertest';
import { parse as parseCsv } from 'csv-parse/sync';
import { approvedPKi, mailTo, testApp, tokenFor } from '../helpers/api.js';
import { fixtureEmail } from '../helpers/fixtures.js';
import type { Role } from '../../api/src/domain/roles.js';

const app = () => testApp();
const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });
type Key = 'A' | 'B' | 'C' | 'D';

describe('selectivity review API', function () {
  this.timeout(60_000);
  const c = {} as Record<Key, { id: number; registryNumber: string }>;
  const target: Record<string, number> = {};
  const assay: Record<string, number> = {};
  let projectId = 0;

  const pKi = (key: string, cpd: Key, value: number) => approvedPKi(assay[key], c[cpd].registryNumber, value);

  before(async () => {
    const p = await request(app()).post('/api/projects').set(await auth('lead')).send({ code: 'SELP', name: 'Selectivity test project' });
    expect(p.status, JSON.stringify(p.body)).to.equal(201);
    projectId = p.body.id;
    const s = await request(app()).post('/api/series').set(await auth('chemist')).send({ projectId, code: 'SL', name: 'Selectivity amides', core: '[*:1]c1ccc(cc1)C(=O)N[*:2]' });
    expect(s.status, JSON.stringify(s.body)).to.equal(201);
    const smiles: Record<Key, string> = { A: 'Fc1ccc(cc1)C(=O)NCCC', B: 'Clc1ccc(cc1)C(=O)NCCC', C: 'Brc1ccc(cc1)C(=O)NCCC', D: 'Ic1ccc(cc1)C(=O)NCCC' };
    for (const [key, smi] of Object.entries(smiles) as [Key, string][]) {
      const res = await request(app()).post('/api/compounds').set(await auth('chemist')).send({ structure: smi, seriesId: s.body.id, name: `selectivity ${key}` });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      c[key] = { id: res.body.id, registryNumber: res.body.registryNumber };
    }
    for (const key of ['P', 'X', 'Y']) {
      const t = await request(app()).post('/api/targets').set(await auth('pharmacologist')).send({ name: `Selectivity receptor ${key}`, geneSymbol: `SEL${key}`, family: 'GPCR', species: 'human' });
      target[key] = t.body.id;
      const a = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: `SEL${key}-B`, name: `binding ${key}`, targetId: t.body.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
      expect(a.status, JSON.stringify(a.body)).to.equal(201);
      assay[key] = a.body.id;
    }
    await request(app()).put(`/api/projects/${projectId}/targets`).set(await auth('pharmacologist'))
      .send({ targets: [{ targetId: target.P, role: 'primary' }, { targetId: target.X, role: 'anti-target' }, { targetId: target.Y, role: 'anti-target', agonismUnwanted: true }] })
      .expect(200);
    // Margins over X: A exactly 2.00 (at the 100-fold window), B 1.99 (just inside), C 0.50.
    for (const [k, cpd, v] of [['P', 'A', 8.0], ['X', 'A', 6.0], ['P', 'B', 8.0], ['X', 'B', 6.01], ['P', 'C', 9.0], ['X', 'C', 8.5], ['P', 'D', 7.0]] as [string, Key, number][]) await pKi(k, cpd, v);
  });

  const matrix = async (query = '') => (await request(app()).get(`/api/selectivity?project=SELP${query}`).set(await auth('lead'))).body;
  const rowOf = (m: { rows: { compound: { id: number } }[] }, key: Key) => m.rows.find((r) => r.compound.id === c[key].id) as Record<string, any>;

  it('matrix values equal the SAR aggregates for the same compounds', async () => {
    const m = await matrix();
    const sar = (await request(app()).get('/api/sar?project=SELP&parameters=pKi').set(await auth('lead'))).body;
    for (const key of ['A', 'B', 'C', 'D'] as Key[]) {
      const r = rowOf(m, key);
      const s = sar.rows.find((x: { id: number }) => x.id === c[key].id);
      for (const t of Object.values(target)) {
        expect(r.cells[t].pKi, `${key} at ${t}`).to.deep.equal(s.cells[`t:${t}:pKi`] ?? null);
        expect(r.cells[t].margin, `${key} margin at ${t}`).to.deep.equal(s.margins[t] ?? null);
      }
      expect(r.worstMargin).to.deep.equal(s.worstMargin);
    }
  });

  it('the window marks fire exactly at the boundary: Δ 2.00 is outside a 100-fold window, 1.99 inside', async () => {
    const m = await matrix();
    expect(rowOf(m, 'A').cells[target.X].margin).to.include({ value: 2, window: 'outside' });
    expect(rowOf(m, 'A').insideWindow).to.equal(false);
    expect(rowOf(m, 'B').cells[target.X].margin.window).to.equal('inside');
    expect(rowOf(m, 'B').insideWindow).to.equal(true);
    // A wider window (2.5 log units) puts A inside as well; then back to 2.
    await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('lead')).send({ selectivityWindow: 2.5 }).expect(200);
    expect(rowOf(await matrix(), 'A').insideWindow).to.equal(true);
    await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('lead')).send({ selectivityWindow: 2 }).expect(200);
  });

  it('sorts by the worst margin, smallest first, compounds without a margin last', async () => {
    const m = await matrix();
    expect(m.rows.map((r: { compound: { id: number } }) => r.compound.id)).to.deep.equal([c.C.id, c.B.id, c.A.id, c.D.id]);
  });

  it('ranks as worked by hand, and a changed weight reorders', async () => {
    // Weights potency 1, margin 1, LipE 0: A 8 + 2 = 10, B 8 + 1.99 = 9.99, C 9 + 0.5 = 9.5; D has no margin → unranked.
    await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('lead')).send({ ranking: { potency: 1, margin: 1, lipe: 0, requiredCalls: [] } }).expect(200);
    let m = await matrix();
    expect(rowOf(m, 'A').score.score).to.be.closeTo(10, 1e-9);
    expect(rowOf(m, 'B').score.score).to.be.closeTo(9.99, 1e-9);
    expect(rowOf(m, 'C').score.score).to.be.closeTo(9.5, 1e-9);
    expect(rowOf(m, 'D').score).to.include({ score: null, excluded: 'no worst margin (log units)' });
    // Potency 2, margin 0: C 18, A 16, B 16.
    await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('lead')).send({ ranking: { potency: 2, margin: 0 } }).expect(200);
    m = await matrix();
    expect(rowOf(m, 'C').score.score).to.be.closeTo(18, 1e-9);
    expect(rowOf(m, 'A').score.score).to.be.closeTo(16, 1e-9);
    const sar = (await request(app()).get('/api/sar?project=SELP&parameters=pKi').set(await auth('chemist'))).body;
    expect(sar.rows.find((r: { id: number }) => r.id === c.C.id).score).to.be.closeTo(18, 1e-9);
    const bad = await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('lead')).send({ ranking: { requiredCalls: ['superagonist'] } });
    expect(bad.status).to.equal(400);
    expect((await request(app()).patch(`/api/projects/${projectId}/settings`).set(await auth('chemist')).send({ selectivityWindow: 3 })).status).to.equal(403);
  });

  it('records a decision with its rationale and the data behind it, and e-mails the chemist', async () => {
    const none = await request(app()).post('/api/decisions').set(await auth('lead')).send({ projectId, compoundId: c.B.id, decision: 'hold' });
    expect(none.status).to.equal(400);
    expect(none.body.error.message).to.match(/rationale/);
    expect((await request(app()).post('/api/decisions').set(await auth('chemist')).send({ projectId, compoundId: c.B.id, decision: 'hold', rationale: 'inside the window at X' })).status).to.equal(403);
    const res = await request(app()).post('/api/decisions').set(await auth('lead')).send({ projectId, compoundId: c.B.id, decision: 'hold', rationale: 'margin over X is just inside the window' });
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    expect(res.body).to.include({ decision: 'hold', flagged: false, current: true });
    expect(res.body.snapshot.worstMargin).to.include({ targetId: target.X, window: 'inside' });
    const mail = await mailTo(fixtureEmail('chemist'), `${c.B.registryNumber} in SELP: hold`);
    expect(mail.text).to.contain('margin over X is just inside the window');
    await mailTo(fixtureEmail('pharmacologist'), `${c.B.registryNumber} in SELP: hold`);
  });

  it('a new approved result that moves the worst margin across the window flags the earlier decision', async () => {
    await pKi('X', 'B', 5.0); // X becomes (6.01 + 5.0)/2 = 5.505: margin 2.495, outside
    const list = (await request(app()).get(`/api/decisions?compound=${c.B.id}`).set(await auth('viewer'))).body;
    expect(list.items).to.have.length(1);
    expect(list.items[0].flagged).to.equal(true);
    expect(list.items[0].flaggedReason).to.match(/worst margin moved from 1\.99 \(inside the window\) to 2\.50 \(outside the window\)/);
    // A new decision supersedes it, unflagged.
    const again = await request(app()).post('/api/decisions').set(await auth('lead')).send({ projectId, compoundId: c.B.id, decision: 'progress', rationale: 'selective after the repeat at X' });
    expect(again.status).to.equal(201);
    const after = (await request(app()).get(`/api/decisions?compound=${c.B.id}`).set(await auth('viewer'))).body.items;
    expect(after.map((d: { decision: string; current: boolean }) => [d.decision, d.current])).to.deep.equal([['progress', true], ['hold', false]]);
  });

  it('compares 2 to 6 compounds with the differences outside the series core', async () => {
    const res = await request(app()).get(`/api/selectivity/compare?project=SELP&compounds=${c.A.id},${c.B.id},${c.C.id}`).set(await auth('viewer'));
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    expect(res.body.compounds.map((x: { id: number }) => x.id)).to.deep.equal([c.A.id, c.B.id, c.C.id]);
    expect(res.body.commonCore.seriesCode).to.equal('SL');
    // Core C10-ish ring + amide: the halogen and the propyl chain lie outside → 1 + 3 atoms.
    for (const x of res.body.compounds) expect(x.differences).to.have.length(4);
    expect(res.body.compounds[0].cells[`t:${target.P}:pKi`].value).to.equal(8);
    expect((await request(app()).get(`/api/selectivity/compare?project=SELP&compounds=${c.A.id}`).set(await auth('viewer'))).status).to.equal(400);
    const csv = await request(app()).get(`/api/selectivity/compare/export.csv?project=SELP&compounds=${c.A.id},${c.C.id}`).set(await auth('viewer'));
    expect(csv.status).to.equal(200);
    const [header, ...rows] = parseCsv(csv.text) as string[][];
    expect(header).to.include('SELP pKi');
    expect(rows.map((r) => r[header.indexOf('Registry number')])).to.deep.equal([c.A.registryNumber, c.C.registryNumber]);
  });

  it('exports the matrix as CSV with qualifiers and windows in their own columns', async () => {
    const res = await request(app()).get('/api/selectivity/export.csv?project=SELP').set(await auth('viewer'));
    expect(res.status).to.equal(200);
    const [header, ...rows] = parseCsv(res.text) as string[][];
    expect(header).to.include.members(['SELX ΔpKi vs primary', 'SELX window', 'SELY unwanted agonism', 'Score']);
    expect(rows).to.have.length(4);
  });

  it('gives leads an overview: counts by series and decision, the review queue, recent decisions, the ranking and the scatter', async () => {
    const res = await request(app()).get('/api/overview?project=SELP').set(await auth('lead'));
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    expect(res.body.series).to.deep.equal([{ code: 'SL', name: 'Selectivity amides', compounds: 4, progress: 1, hold: 0, stop: 0, undecided: 3, flagged: 0 }]);
    expect(res.body.results.approved).to.equal(8);
    expect(res.body.recentDecisions[0]).to.include({ decision: 'progress' });
    expect(res.body.topRanked[0].compound.id).to.equal(c.C.id);
    expect(res.body.scatter).to.have.length(4);
  });
});
