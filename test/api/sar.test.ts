// The SAR table through real HTTP on the real database: the pivot and its aggregates, the
// censored-value rule, selectivity with the window, LE and LipE, R-groups, the substructure
// filter, exports (CSV and an SDF round trip) and saved views with their owners and versions.
import { expect } from 'chai';
import request from 'supertest';
import { parse as parseCsv } from 'csv-parse/sync';
import { approvedPKi, testApp, tokenFor } from '../helpers/api.js';
import { Molecule } from 'openchemlib';
import { analyseStructure, splitSdf } from '../../api/src/domain/chem.js';
import type { Role } from '../../api/src/domain/roles.js';

const app = () => testApp();
const auth = async (role: Role) => ({ Authorization: `Bearer ${await tokenFor(role)}` });

interface Registered {
  id: number;
  registryNumber: string;
  idCode: string;
  heavyAtoms: number;
  clogp: number;
}

describe('SAR table API', function () {
  this.timeout(60_000);
  const targets: Record<'P' | 'X' | 'Y', number> = { P: 0, X: 0, Y: 0 };
  const assays: Record<'P' | 'X' | 'Y', number> = { P: 0, X: 0, Y: 0 };
  const c: Record<'A' | 'B' | 'C' | 'D', Registered> = {} as never;
  const functional: Record<string, number> = {};
  let projectId = 0;
  let seriesId = 0;

  async function manual(assay: number, cpd: Registered, pKi: number, qualifier: '=' | '<' | '>' = '=', approve = true) {
    if (approve) {
      await approvedPKi(assay, cpd.registryNumber, pKi, qualifier);
      return;
    }
    const res = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: assay, sample: cpd.registryNumber, values: { pKi: { value: pKi, qualifier } }, note: 'SAR test entry' });
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    await request(app()).post(`/api/results/${res.body.id}/submit`).set(await auth('pharmacologist')).expect(200);
  }

  before(async () => {
    const p = await request(app()).post('/api/projects').set(await auth('lead')).send({ code: 'SARP', name: 'SAR test project' });
    expect(p.status, JSON.stringify(p.body)).to.equal(201);
    projectId = p.body.id;
    const s = await request(app()).post('/api/series').set(await auth('chemist')).send({ projectId, code: 'SA', name: 'Sulfonamides', core: '[*:1]c1ccc(cc1)S(=O)(=O)N[*:2]' });
    expect(s.status, JSON.stringify(s.body)).to.equal(201);
    seriesId = s.body.id;
    const smiles = { A: 'Fc1ccc(cc1)S(=O)(=O)NC', B: 'Clc1ccc(cc1)S(=O)(=O)NCC', C: 'c1ccc(cc1)S(=O)(=O)NC(C)C', D: 'NC(=O)Cc1cccnc1' };
    const names = { A: 'ferrocyan', B: 'bluebell', C: 'cormorant', D: 'daffodil' };
    for (const [key, smi] of Object.entries(smiles) as ['A' | 'B' | 'C' | 'D', string][]) {
      const res = await request(app()).post('/api/compounds').set(await auth('chemist')).send({ structure: smi, seriesId, name: names[key] });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      c[key] = { id: res.body.id, registryNumber: res.body.registryNumber, idCode: res.body.idCode, heavyAtoms: res.body.heavyAtoms, clogp: res.body.clogp };
    }
    for (const key of ['P', 'X', 'Y'] as const) {
      const t = await request(app()).post('/api/targets').set(await auth('pharmacologist')).send({ name: `SAR receptor ${key}`, geneSymbol: `SAR${key}`, family: 'GPCR', species: 'human' });
      expect(t.status, JSON.stringify(t.body)).to.equal(201);
      targets[key] = t.body.id;
      const a = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code: `SAR${key}-B`, name: `binding ${key}`, targetId: t.body.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
      expect(a.status, JSON.stringify(a.body)).to.equal(201);
      assays[key] = a.body.id;
    }
    const panel = await request(app()).put(`/api/projects/${projectId}/targets`).set(await auth('pharmacologist')).send({
      targets: [{ targetId: targets.P, role: 'primary' }, { targetId: targets.X, role: 'anti-target' }, { targetId: targets.Y, role: 'anti-target' }],
    });
    expect(panel.status, JSON.stringify(panel.body)).to.equal(200);
    // The reference agonist may be registered already by another suite: then use its number.
    const ref = await request(app()).post('/api/compounds').set(await auth('chemist')).send({ structure: 'NCCc1c[nH]c2ccc(O)cc12', name: 'reference agonist' });
    expect(ref.status, JSON.stringify(ref.body)).to.be.oneOf([201, 409]);
    const referenceNumber: string = ref.status === 201 ? ref.body.registryNumber : ref.body.error.details.registryNumber;
    for (const [code, readout] of [['SARP-CAMP', 'cAMP'], ['SARP-ARR', 'β-arrestin']]) {
      const f = await request(app()).post('/api/assays').set(await auth('pharmacologist')).send({ code, name: `${readout} P`, targetId: targets.P, kind: 'functional-agonist', readout, species: 'human', referenceCompound: referenceNumber });
      expect(f.status, JSON.stringify(f.body)).to.equal(201);
      functional[readout] = f.body.id;
    }
    for (const [readout, pEC50, alpha] of [['cAMP', 8.1, 0.95], ['β-arrestin', 6.9, 0.4]] as const) {
      const res = await request(app()).post('/api/results').set(await auth('pharmacologist')).send({ assayId: functional[readout], sample: c.A.registryNumber, values: { pEC50: { value: pEC50 }, alpha: { value: alpha } }, note: 'SAR test entry' });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      await request(app()).post(`/api/results/${res.body.id}/submit`).set(await auth('pharmacologist')).expect(200);
      await request(app()).post(`/api/results/${res.body.id}/approve`).set(await auth('lead')).send({}).expect(200);
    }
    for (const v of [7.0, 7.3, 7.6]) await manual(assays.P, c.A, v);
    await manual(assays.X, c.A, 5.0);
    await manual(assays.Y, c.A, 5.0, '<');
    await manual(assays.P, c.B, 8.0);
    await manual(assays.P, c.B, 9.0, '=', false); // submitted, not approved
    await manual(assays.X, c.B, 6.5);
    await manual(assays.P, c.C, 5, '<');
    await manual(assays.P, c.C, 4.5, '<');
  });

  const sar = async (query: string, role: Role = 'chemist') => request(app()).get(`/api/sar?${query}`).set(await auth(role));
  const row = (body: { rows: { id: number }[] }, key: 'A' | 'B' | 'C' | 'D') => body.rows.find((r) => r.id === c[key].id) as Record<string, any>;

  it('pivots the project panel: one row per series member, one column group per target', async () => {
    const res = await sar('project=SARP&parameters=pKi');
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    expect(res.body.rows.map((r: { id: number }) => r.id)).to.have.members([c.A.id, c.B.id, c.C.id, c.D.id]);
    expect(res.body.targets.map((t: { id: number }) => t.id)).to.deep.equal([targets.P, targets.X, targets.Y]);
    const groups = res.body.columns.map((g: { id: string }) => g.id);
    expect(groups).to.include.members([`target:${targets.P}`, `target:${targets.X}`, `target:${targets.Y}`, 'rgroups', 'efficiency', 'properties']);
    const anti = res.body.columns.find((g: { id: string }) => g.id === `target:${targets.X}`);
    expect(anti.children.map((ch: { id: string }) => ch.id)).to.deep.equal([`t:${targets.X}:pKi`, `m:${targets.X}`]);
  });

  it('aggregates approved results: pKi 7.0, 7.3, 7.6 → 7.3 ± 0.3 (n 3)', async () => {
    const a = row((await sar('project=SARP&parameters=pKi')).body, 'A');
    const cell = a.cells[`t:${targets.P}:pKi`];
    expect(cell.value).to.be.closeTo(7.3, 1e-9);
    expect(cell.sd).to.be.closeTo(0.3, 1e-9);
    expect(cell).to.include({ n: 3, qualifier: '=' });
  });

  it('keeps potency and efficacy per assay (never pooled across readouts), affinity pooled per target', async () => {
    const body = (await sar('project=SARP&parameters=pKi,pEC50,alpha')).body;
    const group = body.columns.find((g: { id: string }) => g.id === `target:${targets.P}`);
    expect(group.children.map((ch: { id: string }) => ch.id)).to.deep.equal([
      `t:${targets.P}:pKi`,
      `a:${functional['β-arrestin']}:pEC50`, `a:${functional['β-arrestin']}:alpha`,
      `a:${functional.cAMP}:pEC50`, `a:${functional.cAMP}:alpha`,
    ]);
    expect(group.children[1].assay).to.include({ code: 'SARP-ARR', readout: 'β-arrestin' });
    const a = row(body, 'A');
    expect(a.cells[`a:${functional.cAMP}:pEC50`]).to.include({ value: 8.1, n: 1 });
    expect(a.cells[`a:${functional['β-arrestin']}:alpha`]).to.include({ value: 0.4, n: 1 });
  });

  it('shows each receptor\'s ligand-type call when asked, the same as the calls API', async () => {
    const body = (await sar('project=SARP&parameters=pKi,call')).body;
    const group = body.columns.find((g: { id: string }) => g.id === `target:${targets.P}`);
    expect(group.children.map((ch: { id: string }) => ch.id)).to.include(`c:${targets.P}`);
    const calls = await request(app()).get(`/api/calls?compound=${c.A.registryNumber}&target=${targets.P}`).set(await auth('viewer'));
    expect(calls.status).to.equal(200);
    expect(calls.body.items).to.have.length(1);
    expect(row(body, 'A').calls[targets.P]).to.deep.equal({ call: calls.body.items[0].call, source: calls.body.items[0].source, contradicted: false });
    const without = (await sar('project=SARP&parameters=pKi')).body;
    expect(without.columns.flatMap((g: { children: { id: string }[] }) => g.children.map((ch) => ch.id))).to.not.include(`c:${targets.P}`);
  });

  it('leaves submitted results out unless asked, then counts them in and marks them', async () => {
    const approved = row((await sar('project=SARP&parameters=pKi')).body, 'B').cells[`t:${targets.P}:pKi`];
    expect(approved).to.include({ value: 8, n: 1, submitted: 0 });
    const withSubmitted = row((await sar('project=SARP&parameters=pKi&status=submitted')).body, 'B').cells[`t:${targets.P}:pKi`];
    expect(withSubmitted.value).to.be.closeTo(8.5, 1e-9);
    expect(withSubmitted).to.include({ n: 2, submitted: 1 });
  });

  it('every value censored: the bound every result supports, with its qualifier', async () => {
    const cell = row((await sar('project=SARP&parameters=pKi')).body, 'C').cells[`t:${targets.P}:pKi`];
    expect(cell).to.include({ value: 5, qualifier: '<', flag: 'all-censored', n: 2 });
  });

  it('selectivity over each anti-target, the window and the worst margin', async () => {
    const body = (await sar('project=SARP&parameters=pKi')).body;
    const a = row(body, 'A');
    expect(a.margins[targets.X].value).to.be.closeTo(2.3, 1e-9);
    expect(a.margins[targets.X]).to.include({ qualifier: '=', window: 'outside' });
    expect(a.margins[targets.Y].value).to.be.closeTo(2.3, 1e-9);
    expect(a.margins[targets.Y]).to.include({ qualifier: '>', window: 'outside' });
    const b = row(body, 'B');
    expect(b.margins[targets.X].value).to.be.closeTo(1.5, 1e-9);
    expect(b.margins[targets.X].window).to.equal('inside');
    expect(b.worstMargin.targetId).to.equal(targets.X);
    // A wider window (3 log units = 1000-fold) puts A's measured margin inside.
    const wide = row((await sar('project=SARP&parameters=pKi&window=3')).body, 'A');
    expect(wide.margins[targets.X].window).to.equal('inside');
    expect(wide.margins[targets.Y].window).to.equal('uncertain');
  });

  it('LE and LipE against the primary pKi, from the compound record (Hopkins 2004; Leeson & Springthorpe 2007)', async () => {
    const a = row((await sar('project=SARP&parameters=pKi')).body, 'A');
    expect(a.le.value).to.be.closeTo((1.37 * 7.3) / c.A.heavyAtoms, 1e-9);
    expect(a.lipe.value).to.be.closeTo(7.3 - c.A.clogp, 1e-9);
    const cRow = row((await sar('project=SARP&parameters=pKi')).body, 'C');
    expect(cRow.le.qualifier).to.equal('<');
  });

  it('decomposes R-groups against the series core and lists a non-member apart', async () => {
    const body = (await sar('project=SARP&parameters=pKi')).body;
    expect(body.series[0].rgroupLabels).to.deep.equal(['R1', 'R2']);
    expect(row(body, 'A').rgroups).to.deep.equal({ R1: '*F', R2: '*C' });
    expect(row(body, 'C').rgroups.R1).to.equal('H');
    expect(row(body, 'D').rgroups).to.equal(null);
    expect(row(body, 'D').rgroupProblem).to.equal('does not contain the core');
  });

  it('a chemist sets a series core (typed or drawn with placeholders); the R-groups follow it, a bad core is refused', async () => {
    const bad = await request(app()).patch(`/api/series/${seriesId}`).set(await auth('chemist')).send({ core: 'c1ccccc1' });
    expect(bad.status).to.equal(400);
    expect(bad.body.error.message).to.match(/core: .*no attachment points/);
    // A drawing: molfile of the sulfonyl core with one placeholder atom ("?" in the editor) on the ring.
    const molfile = Molecule.fromSmiles('c1ccc(cc1)S(=O)(=O)N');
    const ph = molfile.addAtom(0);
    molfile.addBond(0, ph);
    const ok = await request(app()).patch(`/api/series/${seriesId}`).set(await auth('chemist')).send({ core: molfile.toMolfile() });
    expect(ok.status, JSON.stringify(ok.body)).to.equal(200);
    let body = (await sar('project=SARP&parameters=pKi')).body;
    expect(body.series[0].rgroupLabels).to.deep.equal(['R1']);
    expect(row(body, 'A').rgroups).to.equal(null); // the N-methyl sits on a core atom without a placeholder
    expect(row(body, 'A').rgroupProblem).to.match(/without an attachment point/);
    expect((await request(app()).patch(`/api/series/${seriesId}`).set(await auth('viewer')).send({ core: null })).status).to.equal(403);
    await request(app()).patch(`/api/series/${seriesId}`).set(await auth('chemist')).send({ core: '[*:1]c1ccc(cc1)S(=O)(=O)N[*:2]' }).expect(200);
    body = (await sar('project=SARP&parameters=pKi')).body;
    expect(row(body, 'A').rgroups).to.deep.equal({ R1: '*F', R2: '*C' });
  });

  it('filters by substructure (atom-by-atom) and by text', async () => {
    const res = await sar(`project=SARP&parameters=pKi&substructure=${encodeURIComponent('Clc1ccccc1')}`);
    expect(res.status).to.equal(200);
    expect(res.body.rows.map((r: { id: number }) => r.id)).to.deep.equal([c.B.id]);
    expect(res.body.rows[0].match).to.be.an('array').that.is.not.empty;
    const text = await sar('project=SARP&parameters=pKi&text=cormorant');
    expect(text.body.rows.map((r: { id: number }) => r.id)).to.deep.equal([c.C.id]);
  });

  it('answers 400 naming the parameter for bad input, 404 for an unknown project', async () => {
    const bad = await sar('project=SARP&parameters=pKi,potency');
    expect(bad.status).to.equal(400);
    expect(bad.body.error.message).to.match(/parameters/);
    const win = await sar('project=SARP&window=9');
    expect(win.status).to.equal(400);
    expect(win.body.error.message).to.match(/window/);
    const sub = await sar('project=SARP&substructure=C1CC(');
    expect(sub.status).to.equal(400);
    expect(sub.body.error.message).to.match(/substructure/);
    const noProject = await sar('parameters=pKi');
    expect(noProject.status).to.equal(400);
    expect((await sar('project=NOPE')).status).to.equal(404);
    const tgt = await sar('project=SARP&targets=999999');
    expect(tgt.status).to.equal(400);
  });

  it('lists the individual results behind a cell with their assay', async () => {
    const res = await request(app()).get(`/api/sar/cell?compound=${c.A.id}&column=t:${targets.P}:pKi`).set(await auth('viewer'));
    expect(res.status).to.equal(200);
    expect(res.body.items).to.have.length(3);
    expect(res.body.items[0].assay.code).to.equal('SARP-B');
    const fn = await request(app()).get(`/api/sar/cell?compound=${c.A.id}&column=a:${functional.cAMP}:alpha`).set(await auth('viewer'));
    expect(fn.body.items.map((r: { assay: { code: string } }) => r.assay.code)).to.deep.equal(['SARP-CAMP']);
    const bad = await request(app()).get(`/api/sar/cell?compound=${c.A.id}&column=nonsense`).set(await auth('viewer'));
    expect(bad.status).to.equal(400);
  });

  it('exports CSV with the chosen columns and rows in the grid order, qualifiers and units in their own columns', async () => {
    const columns = ['registryNumber', `t:${targets.P}:pKi`, `m:${targets.Y}`];
    const res = await request(app()).post('/api/sar/export.csv').set(await auth('viewer')).send({ project: 'SARP', parameters: ['pKi'], columns, compounds: [c.C.id, c.A.id] });
    expect(res.status, res.text).to.equal(200);
    expect(res.headers['content-type']).to.match(/text\/csv/);
    const [header, ...records] = parseCsv(res.text) as string[][];
    expect(header).to.deep.equal([
      'Registry number', 'Name', 'SARP pKi', 'SARP pKi qualifier', 'SARP pKi SD', 'SARP pKi n', 'SARP pKi unit', 'SARP pKi note',
      'SARY margin (log units)', 'SARY margin qualifier', 'SARY margin fold', 'SARY margin window',
    ]);
    expect(records.map((r) => r[0])).to.deep.equal([c.C.registryNumber, c.A.registryNumber]);
    expect(records[0].slice(2, 8)).to.deep.equal(['5', '<', '', '2', '−log M', 'all-censored']);
    expect(records[1].slice(2, 7)).to.deep.equal(['7.3', '=', '0.3', '3', '−log M']);
    expect(records[1].slice(8, 10)).to.deep.equal(['2.3', '>']);
    const bad = await request(app()).get('/api/sar/export.csv?project=SARP&columns=nonsense').set(await auth('viewer'));
    expect(bad.status).to.equal(400);
  });

  it('exports SDF that re-imports to the same canonical structures and values', async () => {
    const query = `project=SARP&parameters=pKi&columns=registryNumber,t:${targets.P}:pKi,worstMargin`;
    const sdf = await request(app())
      .get(`/api/sar/export.sdf?${query}`)
      .set(await auth('viewer'))
      .buffer(true)
      .parse((res, done) => {
        let text = '';
        res.setEncoding('utf8');
        res.on('data', (chunk: string) => (text += chunk));
        res.on('end', () => done(null, text));
      });
    expect(sdf.status).to.equal(200);
    const csv = parseCsv((await request(app()).get(`/api/sar/export.csv?${query}`).set(await auth('viewer'))).text) as string[][];
    expect(sdf.headers['content-type']).to.match(/chemical\/x-mdl-sdfile/);
    const records = splitSdf(sdf.body as string);
    expect(records).to.have.length(4);
    for (const rec of records) {
      const key = (Object.keys(c) as ('A' | 'B' | 'C' | 'D')[]).find((k) => c[k].registryNumber === rec.fields['Registry number'])!;
      expect(key, JSON.stringify(rec.fields)).to.be.a('string');
      expect(analyseStructure(rec.molfile, 'molfile').idCode).to.equal(c[key].idCode);
      const line = csv.find((r) => r[0] === c[key].registryNumber)!;
      csv[0].forEach((h, i) => {
        if (line[i] === '') expect(rec.fields[h]).to.equal(undefined);
        else expect(rec.fields[h], h).to.equal(line[i]);
      });
    }
  });

  describe('saved views', () => {
    const state = { seriesIds: [], targetIds: [], parameters: ['pKi'], substructure: null, text: null, includeSubmitted: false, columnState: [{ colId: 'worstMargin', sort: 'asc' }], filterModel: {} };

    it('saves a private view that only its owner sees, and a shared one everyone sees', async () => {
      const mine = await request(app()).post('/api/sar/views').set(await auth('chemist')).send({ projectId, name: 'by margin', state });
      expect(mine.status, JSON.stringify(mine.body)).to.equal(201);
      expect(mine.body).to.include({ name: 'by margin', shared: false, mine: true, version: 1 });
      const shared = await request(app()).post('/api/sar/views').set(await auth('chemist')).send({ projectId, name: 'team view', shared: true, state });
      expect(shared.status).to.equal(201);
      const own = await request(app()).get(`/api/sar/views?project=${projectId}`).set(await auth('chemist'));
      expect(own.body.items.map((v: { name: string }) => v.name)).to.deep.equal(['by margin', 'team view']);
      expect(own.body.items[0].state.columnState[0]).to.deep.equal({ colId: 'worstMargin', sort: 'asc' });
      const other = await request(app()).get(`/api/sar/views?project=${projectId}`).set(await auth('lead'));
      expect(other.body.items.map((v: { name: string; mine: boolean }) => [v.name, v.mine])).to.deep.equal([['team view', false]]);
    });

    it('refuses a duplicate name (409), a stale version (409) and changes by anyone but the owner (403)', async () => {
      const dup = await request(app()).post('/api/sar/views').set(await auth('chemist')).send({ projectId, name: 'by margin', state });
      expect(dup.status).to.equal(409);
      const list = await request(app()).get(`/api/sar/views?project=${projectId}`).set(await auth('chemist'));
      const team = list.body.items.find((v: { name: string }) => v.name === 'team view');
      const renamed = await request(app()).patch(`/api/sar/views/${team.id}`).set(await auth('chemist')).send({ version: team.version, name: 'team view (pKi)' });
      expect(renamed.status, JSON.stringify(renamed.body)).to.equal(200);
      expect(renamed.body.version).to.equal(team.version + 1);
      const stale = await request(app()).patch(`/api/sar/views/${team.id}`).set(await auth('chemist')).send({ version: team.version, shared: false });
      expect(stale.status).to.equal(409);
      const foreign = await request(app()).delete(`/api/sar/views/${team.id}`).set(await auth('lead'));
      expect(foreign.status).to.equal(403);
      const gone = await request(app()).delete(`/api/sar/views/${team.id}`).set(await auth('chemist'));
      expect(gone.status).to.equal(204);
      const bad = await request(app()).post('/api/sar/views').set(await auth('chemist')).send({ projectId, name: '', state: { ...state, parameters: ['nonsense'] } });
      expect(bad.status).to.equal(400);
      expect(bad.body.error.message).to.match(/name/);
      expect(bad.body.error.message).to.match(/parameters/);
    });
  });
});
