import { expect } from 'chai';
import { Batch, Compound } from '../../api/src/entities/compound.entity.js';
import { Project, Series } from '../../api/src/entities/project.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { DEMO_ACCOUNTS, seedDemo } from '../../database/seeders/demo.js';
import { demoAnalogues } from '../../database/seeders/demo-registry.js';
import { testOrm } from '../helpers/db.js';
import { Assay, Result, Target } from '../../api/src/entities/assay.entity.js';
import { LigandCall } from '../../api/src/entities/ligand-call.entity.js';
import { biasFor, whatIf } from '../../api/src/services/operational.service.js';
import { runAnalysisView } from '../../api/src/services/mechanism.service.js';

// The invented demo scenario (DESIGN §10) is seeded by npm start; here it is seeded into the
// test database to check it is complete, deterministic and idempotent.
describe('demo seed', function () {
  this.timeout(120_000);
  let first: string;
  let second: string;

  before(async () => {
    first = await seedDemo(testOrm().em.fork(), 'CPD');
    second = await seedDemo(testOrm().em.fork(), 'CPD');
  });

  it('creates one account per role and the Tern programme with two series of 40 analogues', async () => {
    const em = testOrm().em.fork();
    expect(await em.count(User, { email: { $in: DEMO_ACCOUNTS.map((a) => a.email) } })).to.equal(5);
    const project = await em.findOneOrFail(Project, { code: 'TERN' });
    const series = await em.find(Series, { project }, { orderBy: { code: 'asc' } });
    expect(series.map((s) => s.code)).to.deep.equal(['TA', 'TB']);
    for (const s of series) expect(await em.count(Compound, { series: s })).to.equal(40);
    expect(first).to.contain('80 demo compound(s)');
    expect(first).to.contain('13 demo run(s)');
  });

  it('is idempotent: a second run creates nothing', () => {
    expect(second).to.equal('0 demo account(s), 0 demo compound(s), 0 demo run(s) created');
  });

  it('enumerates distinct, valid analogues (every one registered)', async () => {
    const analogues = demoAnalogues();
    expect(analogues).to.have.length(80);
    const em = testOrm().em.fork();
    const aliases = (await em.find(Compound, { series: { project: { code: 'TERN' } } })).flatMap((c) => c.aliases);
    expect(new Set(aliases)).to.deep.equal(new Set(analogues.map((a) => a.alias)));
  });

  it('keeps some batches as salts and adds scale-up batches', async () => {
    const em = testOrm().em.fork();
    const batches = await em.find(Batch, { compound: { series: { project: { code: 'TERN' } } } });
    const labels = new Set(batches.map((b) => b.saltLabel));
    expect([...labels]).to.include.members(['hydrochloride', 'fumarate', 'dihydrochloride', 'parent (no salt or solvate)']);
    expect(batches.filter((b) => b.sequence === 2).length).to.be.greaterThan(5);
  });

  describe('mechanism (issue 6)', () => {
    const analogues = async () => testOrm().em.fork().find(Compound, { series: { project: { code: 'TERN' } } }, { orderBy: { number: 'asc' } });
    const htr1a = async () => testOrm().em.fork().findOneOrFail(Target, { geneSymbol: 'HTR1A' });

    it('gives every compound × target with approved results a call with its evidence', async () => {
      const em = testOrm().em.fork();
      const pairs = await em.getConnection().execute<{ compound_id: number; target_id: number }[]>(
        `select distinct r.compound_id, a.target_id from result r join assay a on a.id = r.assay_id where r.status = 'approved'`,
      );
      const calls = await em.find(LigandCall, {});
      const byKey = new Map(calls.map((c) => [`${c.compound.id}:${c.target.id}`, c]));
      for (const p of pairs) {
        const call = byKey.get(`${p.compound_id}:${p.target_id}`);
        expect(call, `${p.compound_id}:${p.target_id}`).to.not.equal(undefined);
        expect(call!.evidence.length).to.be.greaterThan(0);
      }
      // The second seed recomputed every call and found nothing new: no call was written again.
      const demo = new Set((await analogues()).map((c) => c.id));
      expect(calls.filter((c) => demo.has(c.compound.id)).every((c) => c.version === 1)).to.equal(true);
    });

    it('holds full and partial agonists, neutral antagonists, an inverse agonist, a PAM and a NAM at 5-HT1A', async () => {
      const em = testOrm().em.fork();
      const target = await htr1a();
      const list = await analogues();
      const calls = await em.find(LigandCall, { target });
      const kinds = new Set(calls.map((c) => c.call));
      expect([...kinds]).to.include.members(['full agonist', 'partial agonist', 'neutral antagonist', 'inverse agonist', 'positive allosteric modulator', 'negative allosteric modulator']);
      const of = (i: number) => calls.find((c) => c.compound.id === list[i].id)!.call;
      expect(of(7)).to.equal('inverse agonist');
      expect(of(30)).to.equal('positive allosteric modulator');
      expect(of(29)).to.equal('negative allosteric modulator');
      expect(of(3)).to.equal('neutral antagonist');
    });

    it('runs the Schild, allosteric and operational-model analyses from the raw data', async () => {
      const em = testOrm().em.fork();
      const schild = await em.findOneOrFail(Assay, { code: 'T1A-SCHILD' });
      const results = await em.find(Result, { assay: schild });
      expect(results).to.have.length(4);
      const competitive = results.filter((r) => r.values.pKB);
      expect(competitive).to.have.length(3);
      for (const r of competitive) expect(r.values.schildSlope!.value).to.be.closeTo(1, 0.2);
      const run = await em.findOneOrFail(Result, { assay: { code: 'T1A-PAM' }, compound: (await analogues())[30].id });
      expect(run.values.foldShift!.value).to.be.greaterThan(2);
      const view = await runAnalysisView(em, run.run!.id, 'allosteric');
      expect((view!.items[0] as { allosteric: { classification: { call: string } } }).allosteric.classification.call).to.equal('positive allosteric modulator');
      const camp = await em.find(Result, { assay: { code: 'T1A-CAMP' }, status: 'approved' });
      expect(camp.filter((r) => r.values.logTauKA).length).to.be.greaterThan(25);
    });

    it('gives a bias factor between cAMP and β-arrestin and a what-if curve set for a partial agonist', async () => {
      const em = testOrm().em.fork();
      const target = await htr1a();
      const partial = (await em.find(LigandCall, { target, call: 'partial agonist' }, { populate: ['compound'], orderBy: { compound: { number: 'asc' } } }))[0].compound;
      const bias = await biasFor(em, { compound: partial.registryNumber, target: target.id });
      expect(bias.pairs).to.have.length(1);
      const camp = await em.findOneOrFail(Assay, { code: 'T1A-CAMP' });
      const sim = await whatIf(em, { compound: partial.registryNumber, assay: camp.id });
      expect(sim.curves.length).to.be.greaterThan(1);
    });
  });
});
