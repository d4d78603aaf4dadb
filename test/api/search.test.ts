// POST /api/compounds/search through real HTTP on the real database: substructure (screen +
// atom-by-atom), similarity, text and filters, their combinations, paging, the time limit and
// bad queries.
import { expect } from 'chai';
import request from 'supertest';
import { searchCompounds } from '../../api/src/services/compound-search.service.js';
import { runningThreads, SHARDS, storedMolecules } from '../../api/src/services/match-shards.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';

const app = () => testApp();
const auth = async () => ({ Authorization: `Bearer ${await tokenFor('viewer')}` });
const search = async (body: object) => request(app()).post('/api/compounds/search').set(await auth()).send(body);

// Invented analogues sharing an unusual core (a 2-thienyl sulfonamide on a morpholine), so the
// hits are known whatever else the test database holds.
const SERIES = [
  'O=S(=O)(c1cccs1)N1CCOCC1',
  'Cc1ccc(S(=O)(=O)N2CCOCC2)s1',
  'O=S(=O)(c1ccc(Cl)s1)N1CCOCC1',
  'O=S(=O)(c1ccc(Br)s1)N1CCOC(C)C1',
];
const OTHERS = ['O=S(=O)(c1ccccc1)N1CCOCC1', 'c1ccsc1CCN1CCOCC1'];

describe('/api/compounds/search', () => {
  const ids = new Map<string, { id: number; registryNumber: string }>();

  before(async function () {
    this.timeout(60_000);
    const token = await tokenFor('chemist');
    for (const smiles of [...SERIES, ...OTHERS]) {
      const res = await request(app()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: smiles, name: `search test ${smiles}`, confirm: true });
      expect(res.status, JSON.stringify(res.body)).to.equal(201);
      ids.set(smiles, { id: res.body.id, registryNumber: res.body.registryNumber });
    }
  });

  it('finds exactly the compounds that contain the substructure, with the matched atoms', async () => {
    const res = await search({ substructure: 'O=S(=O)(c1cccs1)N1CCOCC1', pageSize: 200 });
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    const found = res.body.items.map((c: { id: number }) => c.id);
    for (const s of SERIES) expect(found, s).to.include(ids.get(s)!.id);
    for (const s of OTHERS) expect(found, s).to.not.include(ids.get(s)!.id);
    const first = res.body.items.find((c: { id: number }) => c.id === ids.get(SERIES[0])!.id);
    expect(first.match).to.have.length(14); // every heavy atom of the query
    expect(res.body.complete).to.equal(true);
    expect(res.body.stats.screened).to.be.at.most(res.body.stats.considered);
  });

  it('highlights the match in the depiction', async () => {
    const id = ids.get(SERIES[0])!.id;
    const svg = (url: string) =>
      auth().then((h) =>
        request(app()).get(url).set(h).buffer(true).parse((res, done) => {
          let text = '';
          res.on('data', (c: Buffer) => (text += c.toString()));
          res.on('end', () => done(null, text));
        }),
      );
    const plain = await svg(`/api/compounds/${id}/depiction.svg`);
    const marked = await svg(`/api/compounds/${id}/depiction.svg?highlight=0,1,2,3`);
    expect(marked.status).to.equal(200);
    expect(String(marked.body)).to.contain('<svg');
    expect(String(marked.body)).to.not.equal(String(plain.body));
    const bad = await request(app()).get(`/api/compounds/${id}/depiction.svg?highlight=a,b`).set(await auth());
    expect(bad.status).to.equal(400);
  });

  it('finds a molecule as its own top hit at similarity 1.0, sorted by similarity', async () => {
    const res = await search({ similarity: { structure: SERIES[2], threshold: 0.3, limit: 10 } });
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    expect(res.body.items[0].id).to.equal(ids.get(SERIES[2])!.id);
    expect(res.body.items[0].similarity).to.equal(1);
    const sims = res.body.items.map((c: { similarity: number }) => c.similarity);
    expect(sims).to.deep.equal([...sims].sort((a, b) => b - a));
    expect(Math.min(...sims)).to.be.at.least(0.3);
  });

  it('combines substructure with property filters and text', async () => {
    const heavy = await search({ substructure: 'c1cccs1', filters: { mw: { min: 300 } }, pageSize: 200 });
    const found = heavy.body.items.map((c: { id: number; mw: number }) => c.id);
    expect(found).to.include(ids.get(SERIES[3])!.id);
    expect(found).to.not.include(ids.get(SERIES[0])!.id);
    for (const c of heavy.body.items) expect(c.mw).to.be.at.least(300);
    const text = await search({ text: ids.get(SERIES[1])!.registryNumber, substructure: 'c1cccs1' });
    expect(text.body.items[0].id).to.equal(ids.get(SERIES[1])!.id);
    const thiophenes = [...SERIES, OTHERS[1]].map((s) => ids.get(s)!.id);
    for (const c of text.body.items) expect(thiophenes).to.include(c.id);
  });

  it('pages a large answer and gives the total', async () => {
    const all = await search({ substructure: 'C', pageSize: 2 });
    expect(all.status).to.equal(200);
    expect(all.body.items).to.have.length(2);
    expect(all.body.total).to.be.greaterThan(2);
    const page2 = await search({ substructure: 'C', pageSize: 2, page: 2 });
    expect(page2.body.items[0].id).to.not.equal(all.body.items[0].id);
  });

  it('with count "first-page" answers the same page as the exact search and leaves the total to it', async function () {
    this.timeout(60_000);
    // Enough candidates that the first pages are known before the last is checked: invented alcohols.
    const token = await tokenFor('chemist');
    for (let n = 1; n <= 40; n++) {
      const res = await request(app()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: `${'C'.repeat(n)}O`, name: `first-page alcohol ${n}`, confirm: true });
      expect([201, 409], JSON.stringify(res.body)).to.include(res.status);
    }
    // Through HTTP, page 1: the first page alone, then the exact search.
    const firstHttp = await search({ substructure: 'CCC', pageSize: 2, count: 'first-page' });
    expect(firstHttp.status, JSON.stringify(firstHttp.body)).to.equal(200);
    expect(firstHttp.body.counting).to.equal(true);
    expect(firstHttp.body.total).to.equal(null);
    const exactHttp = await search({ substructure: 'CCC', pageSize: 2 });
    expect(exactHttp.body.counting).to.equal(false);
    expect(firstHttp.body.items.map((c: { id: number }) => c.id)).to.deep.equal(exactHttp.body.items.map((c: { id: number }) => c.id));
    // Once the exact list is kept, a first-page request already has the exact total.
    const afterExact = await search({ substructure: 'CCC', pageSize: 2, page: 2, count: 'first-page' });
    expect(afterExact.body.counting).to.equal(false);
    expect(afterExact.body.total).to.equal(exactHttp.body.total);
    // Pages 1–3 against the exact search, nothing kept between them.
    const run = (page: number, count: 'exact' | 'first-page') =>
      searchCompounds(testOrm().em.fork(), { substructure: { structure: 'C' }, page, pageSize: 2, timeLimitMs: 10_000, count, reuse: false });
    for (const page of [1, 2, 3]) {
      const first = await run(page, 'first-page');
      const exact = await run(page, 'exact');
      expect(first.items.map((c) => c.id)).to.deep.equal(exact.items.map((c) => c.id));
      expect(first.items.map((c) => c.match)).to.deep.equal(exact.items.map((c) => c.match));
      expect(first.counting).to.equal(true);
      expect(first.total).to.equal(null);
      expect(first.totalAtMost).to.equal(exact.stats.screened);
      expect(first.totalAtMost).to.be.at.least(exact.total!);
      expect(first.stats.checked).to.be.below(exact.stats.checked!);
      expect(exact.counting).to.equal(false);
      expect(exact.totalAtMost).to.equal(null);
    }
    // When the page needs every candidate, the first answer already has the exact total.
    const rare = await search({ substructure: SERIES[0], count: 'first-page' });
    expect(rare.body.counting).to.equal(false);
    expect(rare.body.total).to.equal((await search({ substructure: SERIES[0] })).body.total);
  });

  it('pages an exact search from its kept hit list until the data changes', async () => {
    const first = await search({ substructure: 'CO', pageSize: 3 });
    expect(first.body.total).to.be.greaterThan(6);
    expect(first.body.stats.reused).to.not.equal(true);
    const second = await search({ substructure: 'CO', pageSize: 3, page: 2 });
    expect(second.body.stats.reused).to.equal(true);
    expect(second.body.total).to.equal(first.body.total);
    const fresh = await searchCompounds(testOrm().em.fork(), { substructure: { structure: 'CO' }, page: 2, pageSize: 3, timeLimitMs: 10_000, reuse: false });
    expect(second.body.items.map((c: { id: number }) => c.id)).to.deep.equal(fresh.items.map((c) => c.id));
    // A new compound with the fragment: the kept list is stale, the search runs again and finds it.
    const token = await tokenFor('chemist');
    const added = await request(app()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: 'FCC1CCOCC1', name: 'kept-list probe', confirm: true });
    expect(added.status, JSON.stringify(added.body)).to.equal(201);
    const after = await search({ substructure: 'CO', pageSize: 3, page: 2 });
    expect(after.body.stats.reused).to.not.equal(true);
    expect(after.body.total).to.equal(first.body.total + 1);
  });

  it('runs the atom-by-atom stage on the search threads, which keep the decoded molecules', async () => {
    await search({ substructure: 'C' });
    expect(runningThreads()).to.equal(SHARDS);
    expect(storedMolecules()).to.be.greaterThan(0);
  });

  it('answers with what it found and a note when the time limit runs out', async () => {
    let t = 0;
    const clock = () => (t += 50_000);
    const result = await searchCompounds(testOrm().em.fork(), { substructure: { structure: 'C' }, page: 1, pageSize: 10, timeLimitMs: 1000, reuse: false }, clock);
    expect(result.complete).to.equal(false);
    expect(result.note).to.match(/time limit/);
  });

  const bad: [string, object, RegExp][] = [
    ['an empty query', {}, /Empty query/],
    ['an empty substructure', { substructure: '  ' }, /substructure/],
    ['an unparsable structure', { substructure: 'C1CC(' }, /substructure/],
    ['a threshold above 1', { similarity: { structure: 'CCO', threshold: 1.5 } }, /threshold/],
    ['a threshold below 0', { similarity: { structure: 'CCO', threshold: -0.1 } }, /threshold/],
    ['an unknown field', { smiles: 'CCO' }, /smiles|Unrecognized/i],
    ['min above max', { filters: { mw: { min: 500, max: 100 } } }, /min/],
  ];
  for (const [what, body, message] of bad) {
    it(`answers 400 for ${what}`, async () => {
      const res = await search(body);
      expect(res.status, JSON.stringify(res.body)).to.equal(400);
      expect(JSON.stringify(res.body.error)).to.match(message);
    });
  }

  it('treats text with SQL in it as text', async () => {
    const res = await search({ text: "x'; drop table compound; --" });
    expect(res.status).to.equal(200);
    const still = await search({ substructure: 'c1cccs1', pageSize: 1 });
    expect(still.body.total).to.be.greaterThan(0);
  });
});

describe('search while fingerprints are being recomputed', () => {
  it('still finds rows whose fingerprint is missing or of another version, and the background pass restores them', async () => {
    const token = await tokenFor('chemist');
    const smiles = 'CC(C)(C)OC(=O)N1CCC(CC1)c1nnc(SC)o1';
    const res = await request(testApp()).post('/api/compounds').set('Authorization', `Bearer ${token}`).send({ structure: smiles, name: 'stale fingerprint test' });
    expect(res.status, JSON.stringify(res.body)).to.equal(201);
    const knex = testOrm().em.getConnection().getKnex();
    await knex.raw("update compound set fingerprint = repeat('0', 1024)::bit(1024), fingerprint_version = null where id = ?", [res.body.id]);
    const found = await request(testApp()).post('/api/compounds/search').set('Authorization', `Bearer ${token}`).send({ substructure: 'c1nnc(SC)o1' });
    expect(found.body.items.map((c: { id: number }) => c.id)).to.include(res.body.id);
    expect(await testApp().imports.fillFingerprints()).to.be.at.least(1);
    const row = (await knex.raw<{ rows: { v: number; ones: number }[] }>('select fingerprint_version as v, bit_count(fingerprint) as ones from compound where id = ?', [res.body.id])).rows[0];
    expect(row.v).to.equal(1);
    expect(Number(row.ones)).to.be.greaterThan(0);
  });
});
