import { expect } from 'chai';
import { Batch, Compound } from '../../api/src/entities/compound.entity.js';
import { Project, Series } from '../../api/src/entities/project.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { DEMO_ACCOUNTS, seedDemo } from '../../database/seeders/demo.js';
import { demoAnalogues } from '../../database/seeders/demo-registry.js';
import { testOrm } from '../helpers/db.js';

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
    expect(first).to.contain('11 demo run(s)');
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
});
