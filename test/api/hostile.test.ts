// Hostile input (issue 9): a corpus of malformed, huge, binary and pathological structures fed to
// every route that parses one, SQL-injection strings in text search and filters, and uploads
// checked by content. Each answer is a 4xx (or a per-record error in an import) within a time
// limit, and the server still answers GET /api/health afterwards.
import { expect } from 'chai';
import { Molecule } from 'openchemlib';
import request from 'supertest';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';

const LIMIT_MS = 5000;
const chemist = async () => ({ Authorization: `Bearer ${await tokenFor('chemist')}` });

/** Pseudo-random bytes from a fixed seed (a small LCG), so the corpus is the same on every run. */
function bytes(n: number, seed: number): Buffer {
  const out = Buffer.alloc(n);
  let x = seed >>> 0;
  for (let i = 0; i < n; i++) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    out[i] = x >>> 24;
  }
  return out;
}

const cage = 'C12C3C4C1C5C2C3C45';
const validMolfile = Molecule.fromSmiles('CCO').toMolfile();

export const SMILES_CORPUS: Record<string, string> = {
  'unclosed ring': 'C1CCCC',
  'unbalanced branch': 'CC(C(C(C',
  'closing branch first': 'C)C(',
  'unknown element': 'CXxC',
  'empty brackets': 'C[]C',
  'absurd charge': '[C+++++++++++++++++++++++++]',
  'absurd isotope': '[99999999999C]',
  'pentavalent carbon': 'C(C)(C)(C)(C)C',
  'hexavalent nitrogen': 'N(C)(C)(C)(C)(C)C',
  'open aromatic ring': 'c1cccc',
  'bare aromatic atom': 'c',
  'ring bond to itself': 'C11',
  'percent ring never closed': 'C%99CC',
  'only punctuation': '()()[]==##',
  'control characters': 'CC\u0000\u0001\u0002O',
  'binary as latin-1': bytes(4000, 7).toString('latin1').replace(/\s/g, ''),
  'unicode lookalikes': 'СС(=О)О',
  'huge chain (199,999 carbons)': 'C'.repeat(199_999),
  'thousands of atoms (benzene chain)': 'c1ccccc1'.repeat(2000),
  'deeply nested branches': 'C' + '(C'.repeat(20_000) + ')'.repeat(20_000),
  'deeply nested rings (fused cages)': Array.from({ length: 400 }, () => cage).join(''),
  'many fragments': 'C.'.repeat(30_000) + 'C',
  'ring-closure digits exhausted': Array.from({ length: 5000 }, (_, i) => `C${(i % 9) + 1}`).join(''),
};

export const MOLFILE_CORPUS: Record<string, string> = {
  'truncated after the counts line': validMolfile.split('\n').slice(0, 5).join('\n'),
  'counts line announcing 999 atoms': 'x\n  y\n\n999999  0  0  0  0  0  0  0  0  0999 V2000\nM  END\n',
  'counts line of letters': 'x\n  y\n\n  a  b  0  0  0  0  0  0  0  0999 V2000\nM  END\n',
  'bond to a missing atom': 'x\n  y\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0000    0.0000    0.0000 C   0  0\n    1.0000    0.0000    0.0000 C   0  0\n  1  9  1  0\nM  END\n',
  'coordinates that are not numbers': 'x\n  y\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n       NaN       NaN       NaN C   0  0\nM  END\n',
  'V3000 with garbage': 'x\n  y\n\n  0  0  0     0  0            999 V3000\nM  V30 BEGIN CTAB\nM  V30 COUNTS 5000000 0 0 0 0\nM  V30 BEGIN ATOM\nM  V30 1 Qq 0 0 0 0\nM  END\n',
  'only M  END': 'M  END\n',
  'pentavalent carbon': 'x\n  y\n\n  6  5  0  0  0  0  0  0  0  0999 V2000\n' + '    0.0000    0.0000    0.0000 C   0  0\n'.repeat(6) + '  1  2  1  0\n  1  3  1  0\n  1  4  1  0\n  1  5  1  0\n  1  6  1  0\nM  END\n',
  'binary with a counts line': 'x\n  y\n\n  1  0  0  0  0  0  0  0  0  0999 V2000\n' + bytes(3000, 11).toString('latin1') + '\nM  END\n',
  'thousands of atoms': (() => {
    const n = 1900;
    const atoms = Array.from({ length: n }, (_, i) => `${(i * 1.5).toFixed(4).padStart(10)}    0.0000    0.0000 C   0  0`).join('\n');
    const bonds = Array.from({ length: n - 1 }, (_, i) => `${String(i + 1).padStart(3)}${String(i + 2).padStart(3)}  1  0`).join('\n');
    return `chain\n  y\n\n${String(n).padStart(3)}${String(n - 1).padStart(3)}  0  0  0  0  0  0  0  0999 V2000\n${atoms}\n${bonds}\nM  END\n`;
  })(),
};

async function timed<T>(work: () => Promise<T>): Promise<{ value: T; ms: number }> {
  const t = performance.now();
  const value = await work();
  return { value, ms: performance.now() - t };
}

async function tableCounts(): Promise<Record<string, number>> {
  const conn = testOrm().em.fork().getConnection();
  const out: Record<string, number> = {};
  for (const table of ['compound', 'batch', 'series', 'project', 'app_user', 'audit_event']) {
    const [row] = await conn.execute<{ n: string }[]>(`select count(*) as n from ${table}`);
    out[table] = Number(row.n);
  }
  return out;
}

async function healthy(): Promise<void> {
  const res = await request(testApp()).get('/api/health');
  expect(res.status).to.equal(200);
}

describe('hostile input: structures', function () {
  this.timeout(120_000);

  for (const [name, smiles] of Object.entries(SMILES_CORPUS)) {
    it(`SMILES "${name}" answers 4xx on register and preview, 4xx or no hits on search, in time`, async () => {
      const headers = await chemist();
      const before = await tableCounts();
      for (const [route, body] of [
        ['/api/compounds', { structure: smiles, format: 'smiles' }],
        ['/api/compounds/preview', { structure: smiles, format: 'smiles' }],
        ['/api/compounds/search', { substructure: smiles }],
        ['/api/compounds/search', { similarity: { structure: smiles } }],
      ] as const) {
        const { value: res, ms } = await timed(() => request(testApp()).post(route).set(headers).send(body));
        expect(ms, route).to.be.below(LIMIT_MS);
        if (route === '/api/compounds/search' && res.status === 200) {
          // A query the SMARTS reader accepts (a pentavalent carbon, say) is a query that matches nothing.
          expect(res.body.items, route).to.deep.equal([]);
          continue;
        }
        expect(res.status, `${route}: ${JSON.stringify(res.body).slice(0, 300)}`).to.be.within(400, 499);
        expect(res.body.error?.message, route).to.be.a('string');
      }
      expect(await tableCounts()).to.deep.equal(before);
      await healthy();
    });
  }

  for (const [name, molfile] of Object.entries(MOLFILE_CORPUS)) {
    it(`molfile "${name}" answers 4xx on register and preview, in time`, async () => {
      const headers = await chemist();
      for (const route of ['/api/compounds', '/api/compounds/preview']) {
        const { value: res, ms } = await timed(() => request(testApp()).post(route).set(headers).send({ structure: molfile, format: 'molfile' }));
        expect(res.status, `${route}: ${JSON.stringify(res.body).slice(0, 300)}`).to.be.within(400, 499);
        expect(ms, route).to.be.below(LIMIT_MS);
      }
      await healthy();
    });
  }

  it('answers 400 naming the field for a structure that is not text, or too long', async () => {
    const headers = await chemist();
    for (const structure of [42, ['C'], { smiles: 'C' }, null, 'C'.repeat(200_001)]) {
      const res = await request(testApp()).post('/api/compounds').set(headers).send({ structure });
      expect(res.status).to.equal(400);
      expect(res.body.error.details[0].field).to.equal('structure');
    }
  });

  it('answers 400 for a body that is not JSON, and 413 for one over the limit', async () => {
    const headers = await chemist();
    const bad = await request(testApp()).post('/api/compounds').set(headers).set('Content-Type', 'application/json').send('{"structure": "C');
    expect(bad.status).to.equal(400);
    const deep = await request(testApp()).post('/api/compounds').set(headers).set('Content-Type', 'application/json').send('['.repeat(100_000) + ']'.repeat(100_000));
    expect(deep.status).to.be.within(400, 413);
    const big = await request(testApp()).post('/api/compounds').set(headers).send({ structure: 'C', name: 'x'.repeat(3 * 1024 * 1024) });
    expect(big.status).to.equal(413);
    await healthy();
  });
});

describe('hostile input: imports', function () {
  this.timeout(180_000);

  async function waitForImport(id: number, headers: Record<string, string>) {
    for (let i = 0; i < 1200; i++) {
      const res = await request(testApp()).get(`/api/compounds/import/${id}`).set(headers);
      if (res.body.status === 'done' || res.body.status === 'failed') return res.body;
      await new Promise((r) => setTimeout(r, 100));
    }
    throw new Error(`import ${id} did not finish`);
  }

  it('an SDF of the whole corpus registers its one good record and reports an error for every other, in time', async () => {
    const headers = await chemist();
    const records = [
      // NUL bytes would refuse the whole file (tested below): here every record must reach the parser.
      ...Object.values(MOLFILE_CORPUS).map((m) => m.replace(/\n?\$\$\$\$/g, '').replace(/\u0000/g, '')),
      Molecule.fromSmiles('OC(=O)c1ccc(I)cc1').toMolfile(),
      'No structure at all\n>  <NAME>\nempty\n',
    ];
    const sdf = records.map((r, i) => `${r.replace(/\n$/, '')}\n>  <NAME>\nHostile ${i + 1}\n\n$$$$\n`).join('');
    const before = await tableCounts();
    const { value: job, ms } = await timed(async () => {
      const res = await request(testApp()).post('/api/compounds/import').set(headers).attach('file', Buffer.from(sdf, 'utf8'), 'corpus.sdf');
      expect(res.status, JSON.stringify(res.body)).to.equal(202);
      return waitForImport(res.body.id, headers);
    });
    expect(ms).to.be.below(30_000);
    expect(job.status).to.equal('done');
    expect(job.created).to.equal(1);
    expect(job.errors + job.created + job.duplicates).to.equal(job.total);
    expect(job.report.filter((o: { status: string }) => o.status === 'error').every((o: { message?: string }) => typeof o.message === 'string' && o.message.length > 0)).to.equal(true);
    const after = await tableCounts();
    expect(after.compound - before.compound).to.equal(1);
    await healthy();
  });

  it('a CSV of the SMILES corpus reports an error per hostile row, in time', async () => {
    const headers = await chemist();
    const quote = (s: string) => `"${s.replace(/"/g, '""')}"`;
    const csv = 'smiles,name\n' + Object.entries(SMILES_CORPUS).filter(([, s]) => !/[\r\n\u0000]/.test(s)).map(([name, s]) => `${quote(s)},${quote(name)}`).join('\n') + '\n';
    const before = await tableCounts();
    const { value: job, ms } = await timed(async () => {
      const res = await request(testApp()).post('/api/compounds/import').set(headers).attach('file', Buffer.from(csv), 'corpus.csv');
      expect(res.status, JSON.stringify(res.body).slice(0, 300)).to.equal(202);
      return waitForImport(res.body.id, headers);
    });
    expect(ms).to.be.below(60_000);
    expect(job.status, job.failure).to.equal('done');
    expect(job.created).to.equal(0);
    expect(job.errors).to.equal(job.total);
    expect((await tableCounts()).compound).to.equal(before.compound);
    await healthy();
  });

  it('checks uploads by content, not by name: binary called .sdf, an image called .csv, UTF-16 text', async () => {
    const headers = await chemist();
    const png = Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), bytes(2000, 3)]);
    for (const [buffer, name] of [
      [bytes(5000, 5), 'compounds.sdf'],
      [png, 'compounds.csv'],
      [Buffer.from('\uFEFFsmiles\nCCO\n', 'utf16le'), 'compounds.csv'],
      [Buffer.from([0xc3, 0x28, 0x41, 0x42, 0x0a]), 'latin.csv'],
    ] as const) {
      for (const route of ['/api/compounds/import', '/api/compounds/import/inspect']) {
        const res = await request(testApp()).post(route).set(headers).attach('file', buffer, name);
        expect(res.status, `${route} ${name}`).to.equal(400);
        expect(res.body.error.message).to.match(/^file: /);
      }
    }
    await healthy();
  });

  it('answers 400 for a multipart body without a file, or with two files', async () => {
    const headers = await chemist();
    const none = await request(testApp()).post('/api/compounds/import').set(headers).field('options', '{}');
    expect(none.status).to.equal(400);
    const two = await request(testApp()).post('/api/compounds/import').set(headers).attach('file', Buffer.from('smiles\nCCO\n'), 'a.csv').attach('file', Buffer.from('smiles\nCCN\n'), 'b.csv');
    expect(two.status).to.equal(400);
    const options = await request(testApp()).post('/api/compounds/import').set(headers).field('options', '{"seriesId": "1; drop table compound"}').attach('file', Buffer.from('smiles\nCCO\n'), 'a.csv');
    expect(options.status).to.equal(400);
  });
});

describe('hostile input: SQL injection in text search and filters', function () {
  this.timeout(60_000);
  const INJECTIONS = [
    "' OR '1'='1",
    "'; DROP TABLE compound; --",
    "\"; DELETE FROM app_user; --",
    "1; UPDATE app_user SET role='admin'",
    "%' UNION SELECT password_hash, email FROM app_user --",
    "CPD-000001' OR 1=1 --",
    "\\'; TRUNCATE audit_event; --",
    "$$; DROP TABLE batch; $$",
  ];
  let seriesCount: number;

  before(async () => {
    seriesCount = (await tableCounts()).series;
  });

  for (const text of INJECTIONS) {
    it(`"${text}" answers normally everywhere and changes nothing`, async () => {
      const headers = await chemist();
      const before = await tableCounts();
      const list = await request(testApp()).get('/api/compounds').query({ q: text }).set(headers);
      expect(list.status).to.equal(200);
      expect(list.body.items).to.be.an('array');
      const search = await request(testApp()).post('/api/compounds/search').set(headers).send({ text });
      expect(search.status).to.equal(200);
      const sar = await request(testApp()).get('/api/sar').query({ project: text }).set(headers);
      expect(sar.status).to.be.oneOf([400, 404]);
      const byRef = await request(testApp()).get(`/api/compounds/${encodeURIComponent(text)}`).set(headers);
      expect(byRef.status).to.be.oneOf([400, 404]);
      const filter = await request(testApp()).post('/api/compounds/search').set(headers).send({ text: 'x', filters: { seriesId: text } });
      expect(filter.status).to.equal(400);
      expect(filter.body.error.details[0].field).to.equal('filters.seriesId');
      const login = await request(testApp()).post('/api/auth/login').send({ email: `a${text}@x.test`, password: text });
      expect(login.status).to.be.oneOf([400, 401]);
      expect(await tableCounts()).to.deep.equal(before);
    });
  }

  it('stores a series named with injection strings literally, and finds it by that name', async () => {
    const admin = { Authorization: `Bearer ${await tokenFor('admin')}` };
    const project = await request(testApp()).post('/api/projects').set(admin).send({ code: 'INJ', name: "Robert'); DROP TABLE project;--" });
    expect(project.status, JSON.stringify(project.body)).to.equal(201);
    const headers = await chemist();
    const names: string[] = [];
    for (const [i, text] of INJECTIONS.entries()) {
      const res = await request(testApp()).post('/api/series').set(headers).send({ projectId: project.body.id, code: `INJ-${i}`, name: text });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      expect(res.body.name).to.equal(text.trim());
      names.push(text.trim());
    }
    const listed = await request(testApp()).get('/api/series').query({ projectId: project.body.id }).set(headers);
    expect(listed.body.items.map((s: { name: string }) => s.name)).to.have.members(names);
    expect((await tableCounts()).series).to.equal(seriesCount + INJECTIONS.length);
    const panel = await request(testApp()).get(`/api/projects/${project.body.id}`).set(headers);
    expect(panel.status).to.equal(200);
  });
});
