// No lost data (issue 9): two people editing the same record get a 409 instead of a silent
// overwrite (MikroORM version fields, checked again in the UPDATE itself), and nothing a result
// depends on can be deleted, through the API or behind its back.
import { expect } from 'chai';
import request from 'supertest';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';

const as = async (role: 'admin' | 'pharmacologist' | 'chemist') => ({ Authorization: `Bearer ${await tokenFor(role)}` });

describe('no lost data: optimistic locking', () => {
  it('five simultaneous edits of a target from the same version: one wins, four answer 409, one audit event', async () => {
    const headers = await as('pharmacologist');
    const created = await request(testApp()).post('/api/targets').set(headers).send({ name: 'Locking receptor', geneSymbol: 'LCK1', family: 'GPCR', species: 'human' });
    expect(created.status, JSON.stringify(created.body)).to.equal(201);
    const { id, version } = created.body;
    const answers = await Promise.all(
      [1, 2, 3, 4, 5].map((i) => request(testApp()).patch(`/api/targets/${id}`).set(headers).send({ description: `edit ${i}`, version })),
    );
    const statuses = answers.map((a) => a.status).sort();
    expect(statuses).to.deep.equal([200, 409, 409, 409, 409]);
    for (const a of answers.filter((x) => x.status === 409)) expect(a.body.error.code).to.equal('stale_version');
    const winner = answers.find((a) => a.status === 200)!;
    const now = await request(testApp()).get('/api/targets').set(headers);
    const target = now.body.items.find((t: { id: number }) => t.id === id);
    expect(target.description).to.equal(winner.body.description);
    expect(target.version).to.equal(version + 1);
    expect(await testOrm().em.fork().count(AuditEvent, { action: 'target.update', entityId: String(id) })).to.equal(1);
  });

  it('an edit from a version someone else already changed answers 409 and changes nothing', async () => {
    const headers = await as('pharmacologist');
    const created = await request(testApp()).post('/api/targets').set(headers).send({ name: 'Stale receptor', geneSymbol: 'STL1', family: 'GPCR', species: 'human' });
    const { id, version } = created.body;
    expect((await request(testApp()).patch(`/api/targets/${id}`).set(headers).send({ species: 'rat', version })).status).to.equal(200);
    const stale = await request(testApp()).patch(`/api/targets/${id}`).set(headers).send({ species: 'mouse', version });
    expect(stale.status).to.equal(409);
    const now = (await request(testApp()).get('/api/targets').set(headers)).body.items.find((t: { id: number }) => t.id === id);
    expect(now.species).to.equal('rat');
  });

  it('simultaneous edits of a user from the same version: one wins, the others answer 409', async () => {
    const headers = await as('admin');
    const created = await request(testApp()).post('/api/users').set(headers).send({ email: 'concurrent@fixture.test', name: 'Race', role: 'viewer', password: 'tidal-harbour-lamp-1' });
    expect(created.status, JSON.stringify(created.body)).to.equal(201);
    const { id, version } = created.body;
    const answers = await Promise.all(['A', 'B', 'C'].map((n) => request(testApp()).patch(`/api/users/${id}`).set(headers).send({ name: `Race ${n}`, version })));
    expect(answers.map((a) => a.status).sort()).to.deep.equal([200, 409, 409]);
  });
});

describe('no lost data: nothing a result depends on is deleted', () => {
  it('the API has no DELETE route but for saved views (a personal setting nothing depends on)', () => {
    const deletes = testApp().apiRoutes.filter((r) => r.method === 'DELETE').map((r) => r.path);
    expect(deletes).to.deep.equal(['/api/sar/views/:id']);
  });

  it('the database refuses to delete a compound that has batches, or a target that has assays', async () => {
    const chemist = await as('chemist');
    const compound = await request(testApp()).post('/api/compounds').set(chemist).send({ structure: 'CCN(CC)C(=O)c1ccc(Br)cc1', confirm: true });
    expect(compound.status, JSON.stringify(compound.body)).to.equal(201);
    const conn = testOrm().em.fork().getConnection();
    let code: string | undefined;
    try {
      await conn.execute('delete from compound where id = ?', [compound.body.id]);
    } catch (err) {
      code = (err as { code?: string }).code;
    }
    expect(code).to.equal('23503');
    const [row] = await conn.execute<{ n: string }[]>('select count(*) as n from compound where id = ?', [compound.body.id]);
    expect(Number(row.n)).to.equal(1);
    const [fk] = await conn.execute<{ n: string }[]>(
      `select count(*) as n from pg_constraint where contype = 'f' and confdeltype = 'c' and conrelid::regclass::text in ('batch', 'assay', 'run', 'measurement', 'result', 'compound')`,
    );
    expect(Number(fk.n), 'no ON DELETE CASCADE on the registry and result tables').to.equal(0);
  });
});

describe('no lost data: targets and assays are retired, not deleted', () => {
  it('retiring a target keeps it and its assays, is audited, refuses new assays on it, and can be undone', async () => {
    const headers = await as('pharmacologist');
    const target = (await request(testApp()).post('/api/targets').set(headers).send({ name: 'Retiring receptor', geneSymbol: 'RET1', family: 'GPCR', species: 'human' })).body;
    const assay = await request(testApp()).post('/api/assays').set(headers).send({ code: 'RET1-BIND', name: 'binding', targetId: target.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
    expect(assay.status, JSON.stringify(assay.body)).to.equal(201);
    const retired = await request(testApp()).patch(`/api/targets/${target.id}`).set(headers).send({ retired: true, version: target.version });
    expect(retired.status, JSON.stringify(retired.body)).to.equal(200);
    expect(retired.body.retired).to.equal(true);
    const listed = (await request(testApp()).get('/api/targets').set(headers)).body.items.find((t: { id: number }) => t.id === target.id);
    expect(listed).to.include({ retired: true, assayCount: 1 });
    expect((await request(testApp()).get(`/api/assays/${assay.body.id}`).set(headers)).status).to.equal(200);
    const refused = await request(testApp()).post('/api/assays').set(headers).send({ code: 'RET1-BIND2', name: 'binding 2', targetId: target.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 });
    expect(refused.status).to.equal(400);
    expect(refused.body.error.details[0].field).to.equal('targetId');
    const restored = await request(testApp()).patch(`/api/targets/${target.id}`).set(headers).send({ retired: false });
    expect(restored.body.retired).to.equal(false);
    const trail = await testOrm().em.fork().find(AuditEvent, { entityType: 'Target', entityId: String(target.id), action: { $in: ['target.retire', 'target.restore'] } }, { orderBy: { id: 'asc' } });
    expect(trail.map((e) => e.action)).to.deep.equal(['target.retire', 'target.restore']);
  });

  it('retiring an assay keeps it readable and audits it', async () => {
    const headers = await as('pharmacologist');
    const target = (await request(testApp()).post('/api/targets').set(headers).send({ name: 'Assay retiring receptor', geneSymbol: 'RET2', family: 'GPCR', species: 'human' })).body;
    const assay = (await request(testApp()).post('/api/assays').set(headers).send({ code: 'RET2-BIND', name: 'binding', targetId: target.id, kind: 'binding', readout: 'cpm', species: 'human', radioligandConcM: 1e-9, radioligandKdM: 1e-9 })).body;
    const res = await request(testApp()).patch(`/api/assays/${assay.id}`).set(headers).send({ retired: true, version: assay.version });
    expect(res.status, JSON.stringify(res.body)).to.equal(200);
    expect(res.body.retired).to.equal(true);
    const again = await request(testApp()).get(`/api/assays/${assay.id}`).set(headers);
    expect(again.status).to.equal(200);
    expect(await testOrm().em.fork().count(AuditEvent, { action: 'assay.retire', entityId: String(assay.id) })).to.equal(1);
    const bad = await request(testApp()).patch(`/api/assays/${assay.id}`).set(headers).send({ retired: 'yes' });
    expect(bad.status).to.equal(400);
    expect(bad.body.error.details[0].field).to.equal('retired');
  });
});
