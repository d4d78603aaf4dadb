import { expect } from 'chai';
import request from 'supertest';
import { createApp } from '../../api/src/app.js';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import { Batch, Compound } from '../../api/src/entities/compound.entity.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm, testSettings } from '../helpers/db.js';

async function chemist() {
  return { Authorization: `Bearer ${await tokenFor('chemist')}` };
}

function register(body: object, headers: Record<string, string>) {
  return request(testApp()).post('/api/compounds').set(headers).send(body);
}

async function counts() {
  const em = testOrm().em.fork();
  return { compounds: await em.count(Compound, {}), batches: await em.count(Batch, {}), events: await em.count(AuditEvent, {}) };
}

async function waitForImport(id: number, headers: Record<string, string>) {
  for (let i = 0; i < 300; i++) {
    const res = await request(testApp()).get(`/api/compounds/import/${id}`).set(headers);
    if (res.body.status === 'done' || res.body.status === 'failed') return res.body;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`import ${id} did not finish`);
}

// Structures used here are common textbook molecules; formula and mass come from
// shared/REFERENCES.md §8 (RDKit 2022.09 and OpenChemLib agree; NIST WebBook for dopamine).
describe('/api/compounds: registration', () => {
  it('registers a parent with its first batch, properties and a registry number', async () => {
    const res = await register({ structure: 'C1=CC(=C(C=C1CCN)O)O', name: 'Reference amine A', aliases: ['RA-1'], batch: { purity: 99.1, amountMg: 25, notebookRef: 'NB-12-003' } }, await chemist());
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    expect(res.body.registryNumber).to.match(/^CPD-\d{6}$/);
    expect(res.body).to.include({ formula: 'C8H11NO2', heavyAtoms: 11, stereoStatus: 'achiral', name: 'Reference amine A' });
    expect(res.body.mw).to.be.closeTo(153.181, 0.01);
    expect(res.body.batches).to.have.length(1);
    expect(res.body.batches[0]).to.include({ batchNumber: `${res.body.registryNumber}-01`, saltLabel: 'parent (no salt or solvate)', purity: 99.1 });
    expect(res.body.history[0].action).to.equal('compound.register');
  });

  it('answers 409 with the same registry number for other spellings and a hydrochloride', async () => {
    const first = await register({ structure: 'CC(C)NCC(O)COc1cccc2ccccc12' }, await chemist());
    if (first.status === 409) expect(first.body.error.code).to.equal('confirmation_required');
    const created = first.status === 201 ? first : await register({ structure: 'CC(C)NCC(O)COc1cccc2ccccc12', confirm: true }, await chemist());
    expect(created.status).to.equal(201);
    const number = created.body.registryNumber;
    for (const spelling of ['CC(C)NCC(COC1=CC=CC2=CC=CC=C21)O', 'OC(CNC(C)C)COc1cccc2ccccc12', 'CC(C)NCC(O)COc1cccc2ccccc12.Cl', 'CC(C)[NH2+]CC(O)COc1cccc2ccccc12.[Cl-]']) {
      const res = await register({ structure: spelling, confirm: true }, await chemist());
      expect(res.status, spelling).to.equal(409);
      expect(res.body.error.code).to.equal('duplicate_structure');
      expect(res.body.error.details.registryNumber).to.equal(number);
    }
  });

  it('reads V3000 and V2000 molfiles: the same parent either way', async () => {
    const { Molecule } = await import('openchemlib');
    const aspirin = Molecule.fromSmiles('CC(=O)Oc1ccccc1C(=O)O');
    const v3 = await register({ structure: aspirin.toMolfileV3(), format: 'molfile' }, await chemist());
    expect(v3.status, JSON.stringify(v3.body)).to.equal(201);
    expect(v3.body.formula).to.equal('C9H8O4'); // REFERENCES.md §8 (NIST WebBook 180.1574)
    const v2 = await register({ structure: aspirin.toMolfile() }, await chemist());
    expect(v2.status).to.equal(409);
    expect(v2.body.error.details.registryNumber).to.equal(v3.body.registryNumber);
  });

  it('registers two enantiomers as two compounds; the second needs confirmation of the stereoisomer warning', async () => {
    const r = await register({ structure: 'C[C@H](N)Cc1ccccc1' }, await chemist());
    expect(r.status).to.equal(201);
    const s = await register({ structure: 'C[C@@H](N)Cc1ccccc1' }, await chemist());
    expect(s.status).to.equal(409);
    expect(s.body.error.code).to.equal('confirmation_required');
    expect(s.body.error.details.warnings[0]).to.include({ kind: 'stereoisomer' });
    expect(s.body.error.details.warnings[0].match.registryNumber).to.equal(r.body.registryNumber);
    const confirmed = await register({ structure: 'C[C@@H](N)Cc1ccccc1', confirm: true }, await chemist());
    expect(confirmed.status).to.equal(201);
    expect(confirmed.body.registryNumber).not.to.equal(r.body.registryNumber);
    expect(confirmed.body.stereoStatus).to.equal('defined');
  });

  it('flags a structure with undefined stereocentres before registering it', async () => {
    const res = await register({ structure: 'CC(O)C(=O)Nc1ccccc1' }, await chemist());
    expect(res.status).to.equal(409);
    expect(res.body.error.details.warnings.map((w: { kind: string }) => w.kind)).to.include('undefined-stereo');
  });

  it('keeps the salt form on the batch: parent neutral, components and batch formula weight', async () => {
    const res = await register({ structure: 'CN1CCN(CC1)C2=NC3=C(C=CC(=C3)Cl)NC4=CC=CC=C42.OC(=O)/C=C\\C(=O)O' }, await chemist());
    expect(res.status).to.equal(201);
    expect(res.body.formula).to.equal('C18H19ClN4');
    const batch = res.body.batches[0];
    expect(batch.saltLabel).to.equal('maleate');
    expect(batch.saltComponents[0]).to.include({ name: 'maleate', formula: 'C4H4O4', count: 1 });
    // maleic acid C4H4O4 116.07 (common practice); clozapine 326.83 (REFERENCES.md §8)
    expect(batch.formulaWeight).to.be.closeTo(326.83 + 116.07, 0.05);
  });

  it('allocates exactly one compound for 20 concurrent registrations of one new structure, without gaps', async () => {
    const headers = await chemist();
    const results = await Promise.all(Array.from({ length: 20 }, () => register({ structure: 'O=C(Nc1ccc(Br)cc1)c1cccnc1', confirm: true }, headers)));
    const statuses = results.map((r) => r.status).sort();
    expect(statuses.filter((s) => s === 201)).to.have.length(1);
    expect(statuses.filter((s) => s === 409)).to.have.length(19);
    const numbers = new Set(results.filter((r) => r.status === 409).map((r) => r.body.error.details.registryNumber));
    expect([...numbers]).to.deep.equal([results.find((r) => r.status === 201)!.body.registryNumber]);
    const em = testOrm().em.fork();
    expect(await em.count(Compound, { idCode: results.find((r) => r.status === 201)!.body.idCode })).to.equal(1);
    const all = await em.find(Compound, {}, { fields: ['number'], orderBy: { number: 'asc' } });
    expect(all.map((c) => c.number)).to.deep.equal(all.map((_, i) => i + 1));
  });
});

describe('/api/compounds: bad input changes nothing', () => {
  const cases: [string, object, RegExp][] = [
    ['an unparsable SMILES', { structure: 'C1CC(' }, /SMILES could not be read/],
    ['an empty body', {}, /structure is required/],
    ['a 1 MB string', { structure: 'C'.repeat(1_000_000) }, /longer than 200,000/],
    ['a molfile with a broken counts line', { structure: '\n  Ligandry\n\nxx yy  0  0  0  0  0  0  0  0999 V2000\nM  END\n', format: 'molfile' }, /counts line/],
    ['a salt with no organic parent', { structure: '[Na+].[Cl-]' }, /no organic fragment/],
    ['an unknown format', { structure: 'CCO', format: 'inchi' }, /format must be smiles or molfile/],
  ];
  for (const [what, body, message] of cases) {
    it(`answers 400 for ${what}`, async () => {
      const before = await counts();
      const res = await register(body, await chemist());
      expect(res.status).to.equal(400);
      expect(res.body.error.message).to.match(message);
      expect(await counts()).to.deep.equal(before);
    });
  }
});

describe('/api/compounds: reading', () => {
  it('finds a compound by registry number and by id, with depiction and batches', async () => {
    const created = await register({ structure: 'Cn1cnc2c1c(=O)n(C)c(=O)n2C', name: 'Xanthine reference' }, await chemist());
    const viewer = { Authorization: `Bearer ${await tokenFor('viewer')}` };
    const byNumber = await request(testApp()).get(`/api/compounds/${created.body.registryNumber}`).set(viewer);
    expect(byNumber.status).to.equal(200);
    expect(byNumber.body).to.include({ formula: 'C8H10N4O2' });
    const byId = await request(testApp()).get(`/api/compounds/${created.body.id}`).set(viewer);
    expect(byId.body.registryNumber).to.equal(created.body.registryNumber);
    const svg = await request(testApp())
      .get(`/api/compounds/${created.body.id}/depiction.svg`)
      .set(viewer)
      .buffer(true)
      .parse((res, done) => {
        let text = '';
        res.on('data', (chunk: Buffer) => (text += chunk.toString()));
        res.on('end', () => done(null, text));
      });
    expect(svg.status).to.equal(200);
    expect(svg.headers['content-type']).to.contain('image/svg+xml');
    expect(svg.body).to.contain('<svg');
    const missing = await request(testApp()).get('/api/compounds/CPD-999999').set(viewer);
    expect(missing.status).to.equal(404);
  });

  it('pages and sorts the list, and finds by fuzzy text over names and aliases', async () => {
    const viewer = { Authorization: `Bearer ${await tokenFor('viewer')}` };
    const page = await request(testApp()).get('/api/compounds?page=1&pageSize=2&sort=mw&dir=asc').set(viewer);
    expect(page.status).to.equal(200);
    expect(page.body.items).to.have.length(2);
    expect(page.body.total).to.be.greaterThan(2);
    expect(page.body.items[0].mw).to.be.at.most(page.body.items[1].mw);
    const fuzzy = await request(testApp()).get('/api/compounds?q=Xanthin%20refrence').set(viewer);
    expect(fuzzy.body.items.map((c: { name: string }) => c.name)).to.include('Xanthine reference');
    const alias = await request(testApp()).get('/api/compounds?q=RA-1').set(viewer);
    expect(alias.body.items[0].aliases).to.include('RA-1');
    const bad = await request(testApp()).get('/api/compounds?sort=password').set(viewer);
    expect(bad.status).to.equal(400);
    expect(bad.body.error.details[0].field).to.equal('sort');
  });

  it('preview computes properties and shows the duplicate without writing anything', async () => {
    const before = await counts();
    const res = await request(testApp()).post('/api/compounds/preview').set({ Authorization: `Bearer ${await tokenFor('viewer')}` }).send({ structure: 'CN1C=NC2=C1C(=O)N(C(=O)N2C)C.O' });
    expect(res.status).to.equal(200);
    expect(res.body.parsed.properties.formula).to.equal('C8H10N4O2');
    expect(res.body.parsed.salt.label).to.equal('hydrate');
    expect(res.body.duplicate.registryNumber).to.match(/^CPD-/);
    expect(await counts()).to.deep.equal(before);
  });
});

describe('/api/compounds/:id/batches', () => {
  it('adds numbered batches, with a salt form from a structure of the same parent', async () => {
    const headers = await chemist();
    const created = await register({ structure: 'NCCc1c[nH]c2ccc(O)cc12' }, headers);
    const second = await request(testApp()).post(`/api/compounds/${created.body.id}/batches`).set(headers).send({ structure: 'NCCc1c[nH]c2ccc(O)cc12.Cl', purity: 97 });
    expect(second.status).to.equal(201);
    expect(second.body).to.include({ batchNumber: `${created.body.registryNumber}-02`, saltLabel: 'hydrochloride', purity: 97 });
    const third = await request(testApp()).post(`/api/compounds/${created.body.id}/batches`).set(headers).send({ amountMg: 5 });
    expect(third.body.batchNumber).to.equal(`${created.body.registryNumber}-03`);
    const wrong = await request(testApp()).post(`/api/compounds/${created.body.id}/batches`).set(headers).send({ structure: 'CCO' });
    expect(wrong.status).to.equal(400);
    expect(wrong.body.error.message).to.contain('is not');
  });
});

describe('/api/compounds/import', () => {
  const sdfRecord = (smiles: string, name: string) => `${name}\n  Ligandry\n\n${smiles}\n>  <NAME>\n${name}\n\n$$$$\n`;

  it('imports an SDF with one corrupt record among good ones and reports each record', async () => {
    const { Molecule } = await import('openchemlib');
    const good = (smiles: string, name: string) => `${Molecule.fromSmiles(smiles).toMolfile().replace(/^[^\n]*/, name)}\n>  <NAME>\n${name}\n\n$$$$\n`;
    const corrupt = 'Broken\n  Ligandry\n\n  3  2  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 C   0  0\nM  END\n>  <NAME>\nBroken\n\n$$$$\n';
    const sdf = good('OC(=O)c1ccc(Cl)cc1', 'Acid one') + corrupt + good('OC(=O)c1ccc(Br)cc1', 'Acid two') + good('OC(=O)c1ccc(Cl)cc1', 'Acid one again');
    const headers = await chemist();
    const before = await counts();
    const res = await request(testApp()).post('/api/compounds/import').set(headers).attach('file', Buffer.from(sdf), 'acids.sdf');
    expect(res.status, JSON.stringify(res.body)).to.equal(202);
    expect(res.body).to.include({ format: 'sdf', total: 4 });
    const job = await waitForImport(res.body.id, headers);
    expect(job).to.include({ status: 'done', processed: 4, created: 2, duplicates: 1, errors: 1 });
    expect(job.report.map((o: { status: string }) => o.status)).to.deep.equal(['created', 'error', 'created', 'duplicate']);
    expect(job.report[1].message).to.match(/counts line|could not be read/);
    expect(job.report[0].name).to.equal('Acid one');
    const after = await counts();
    expect(after.compounds - before.compounds).to.equal(2);
    const trail = await testOrm().em.fork().find(AuditEvent, { entityType: 'ImportJob', entityId: String(res.body.id) }, { orderBy: { id: 'asc' } });
    expect(trail.map((e) => e.action)).to.deep.equal(['import.start', 'import.finish']);
    const csv = await request(testApp()).get(`/api/compounds/import/${res.body.id}/report.csv`).set(headers);
    expect(csv.text.split('\n')[0]).to.equal('record,status,registry_number,batch_number,name,message');
    void sdfRecord;
  });

  it('imports a CSV with mapped columns and per-row errors', async () => {
    const headers = await chemist();
    const csv = 'Structure,Label,Purity\nCCOC(=O)c1ccc(N)cc1,Ester A,98\nnot-a-smiles,Bad row,99\nCCOC(=O)c1ccc(O)cc1,Ester B,120\n';
    const res = await request(testApp()).post('/api/compounds/import').set(headers).field('options', JSON.stringify({ structureColumn: 'Structure', nameColumn: 'Label', purityColumn: 'Purity' })).attach('file', Buffer.from(csv), 'esters.csv');
    expect(res.status, JSON.stringify(res.body)).to.equal(202);
    const job = await waitForImport(res.body.id, headers);
    expect(job.report.map((o: { status: string }) => o.status)).to.deep.equal(['created', 'error', 'error']);
    expect(job.report[2].message).to.contain('outside 0–100');
  });

  it('answers 400 naming the columns when the structure column is missing', async () => {
    const res = await request(testApp()).post('/api/compounds/import').set(await chemist()).field('options', JSON.stringify({ structureColumn: 'SMILES' })).attach('file', Buffer.from('a,b\n1,2\n'), 'x.csv');
    expect(res.status).to.equal(400);
    expect(res.body.error.message).to.contain('"a", "b"');
  });

  it('refuses binary content whatever the file is called', async () => {
    const res = await request(testApp()).post('/api/compounds/import').set(await chemist()).attach('file', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 0, 0, 1]), 'compounds.sdf');
    expect(res.status).to.equal(400);
    expect(res.body.error.message).to.contain('not a text file');
  });

  it('answers 413 with the limit for a file over the size limit', async () => {
    const small = createApp({ orm: testOrm(), settings: { ...testSettings(), importMaxBytes: 2 * 1024 * 1024 } });
    const res = await request(small).post('/api/compounds/import').set(await chemist()).attach('file', Buffer.alloc(3 * 1024 * 1024, 'C'), 'big.csv');
    expect(res.status).to.equal(413);
    expect(res.body.error.message).to.contain('2 MB');
  });

  it('inspects a file: format, columns, record count and a suggested mapping', async () => {
    const res = await request(testApp()).post('/api/compounds/import/inspect').set(await chemist()).attach('file', Buffer.from('SMILES,Name,Series\nCCO,x,A\n'), 'x.csv');
    expect(res.status).to.equal(200);
    expect(res.body).to.deep.include({ format: 'csv', columns: ['SMILES', 'Name', 'Series'], records: 1 });
    expect(res.body.mapping).to.include({ structureColumn: 'SMILES', nameColumn: 'Name', seriesColumn: 'Series' });
  });
});

describe('registry numbers in the database', () => {
  it('sorts the list by registry number in both directions', async () => {
    const viewer = { Authorization: `Bearer ${await tokenFor('viewer')}` };
    const desc = await request(testApp()).get('/api/compounds?sort=registryNumber&dir=desc&pageSize=5').set(viewer);
    const asc = await request(testApp()).get('/api/compounds?sort=registryNumber&dir=asc&pageSize=5').set(viewer);
    const d = desc.body.items.map((c: { registryNumber: string }) => c.registryNumber);
    expect(d).to.deep.equal([...d].sort().reverse());
    expect(asc.body.items[0].registryNumber).to.equal('CPD-000001');
  });

  it('are formatted by the SQL exactly as registryNumber() and batchNumber() format them', async () => {
    const { registryNumber, batchNumber } = await import('../../api/src/domain/registry-numbers.js');
    const em = testOrm().em.fork();
    const compounds = await em.find(Compound, {}, { fields: ['number', 'registryNumber'] });
    expect(compounds.length).to.be.greaterThan(10);
    for (const c of compounds) expect(c.registryNumber).to.equal(registryNumber('CPD', c.number));
    const batches = await em.find(Batch, {}, { populate: ['compound'] });
    for (const b of batches) expect(b.batchNumber).to.equal(batchNumber(b.compound.registryNumber, b.sequence));
  });
});

describe('import fallback: one record at a time under savepoints', () => {
  it('registers the new records, reports duplicates (also within the chunk) and keeps going after a failed record', async () => {
    const { analyseMany } = await import('../../api/src/workers/chem-worker.js');
    const em = testOrm().em.fork();
    const { User } = await import('../../api/src/entities/user.entity.js');
    const chemistUser = await em.findOneOrFail(User, { email: 'chemist@fixture.test' });
    const records = [
      { index: 1, structure: 'CC(=O)Nc1ccc(O)cc1C', format: 'smiles' as const, fields: { n: 'Fallback one' } },
      { index: 2, structure: 'CN1C=NC2=C1C(=O)N(C(=O)N2C)C', format: 'smiles' as const, fields: { n: 'Already there' } },
      { index: 3, structure: 'C1CC(', format: 'smiles' as const, fields: { n: 'Broken' } },
      { index: 4, structure: 'CC(=O)Nc1ccc(O)cc1C.Cl', format: 'smiles' as const, fields: { n: 'Same as one' } },
      { index: 5, structure: 'CC(=O)Nc1ccc(OC)cc1C', format: 'smiles' as const, fields: { n: 'Fallback two' } },
    ];
    const results = analyseMany(records.map((r) => ({ index: r.index, text: r.structure, format: r.format })));
    const pre = await register({ structure: 'Cn1cnc2c1c(=O)n(C)c(=O)n2C' }, await chemist());
    expect(pre.status).to.be.oneOf([201, 409]);
    const before = await counts();
    const outcomes = await testApp().imports.registerOneByOne(records, results, chemistUser.id, { nameColumn: 'n' }, new Map());
    expect(outcomes.map((o) => o.status)).to.deep.equal(['created', 'duplicate', 'error', 'duplicate', 'created']);
    expect(outcomes[3].registryNumber).to.equal(outcomes[0].registryNumber);
    const after = await counts();
    expect(after.compounds - before.compounds).to.equal(2);
    expect(after.batches - before.batches).to.equal(2);
  });
});
