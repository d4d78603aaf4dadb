import { expect } from 'chai';
import request from 'supertest';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';
import { fixtureEmail } from '../helpers/fixtures.js';

async function asAdmin() {
  return { Authorization: `Bearer ${await tokenFor('admin')}` };
}

describe('/api/users (admin)', () => {
  it('GET lists every user without password hashes', async () => {
    const res = await request(testApp()).get('/api/users').set(await asAdmin());
    expect(res.status).to.equal(200);
    const emails = res.body.items.map((u: { email: string }) => u.email);
    expect(emails).to.include.members(['admin@fixture.test', 'chemist@fixture.test', 'viewer@fixture.test']);
    expect(JSON.stringify(res.body)).not.to.contain('argon2');
  });

  it('POST creates a user who can sign in with the given role, and audits it', async () => {
    const res = await request(testApp())
      .post('/api/users')
      .set(await asAdmin())
      .send({ email: 'New.Chemist@Fixture.test', name: 'New Chemist', role: 'chemist', password: 'tidal-basin-seventeen' });
    expect(res.status).to.equal(201);
    expect(res.body).to.include({ email: 'new.chemist@fixture.test', role: 'chemist', active: true });
    const login = await request(testApp()).post('/api/auth/login').send({ email: 'new.chemist@fixture.test', password: 'tidal-basin-seventeen' });
    expect(login.status).to.equal(200);
    expect(login.body.user.role).to.equal('chemist');
    const events = await testOrm().em.fork().find(AuditEvent, { action: 'user.create', entityId: String(res.body.id) });
    expect(events).to.have.length(1);
  });

  it('POST answers 409 for an e-mail already registered, in any case', async () => {
    const res = await request(testApp())
      .post('/api/users')
      .set(await asAdmin())
      .send({ email: 'CHEMIST@fixture.test', name: 'Twin', role: 'viewer', password: 'tidal-basin-seventeen' });
    expect(res.status).to.equal(409);
    expect(res.body.error.code).to.equal('duplicate_email');
  });

  it('POST answers 400 naming the fields that are wrong', async () => {
    const res = await request(testApp()).post('/api/users').set(await asAdmin()).send({ email: 'x@fixture.test', name: '', role: 'wizard', password: 'tidal-basin-seventeen' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).to.have.members(['name', 'role']);
  });

  it('POST answers 400 for a password that breaks the policy', async () => {
    const res = await request(testApp()).post('/api/users').set(await asAdmin()).send({ email: 'weak@fixture.test', name: 'Weak', role: 'viewer', password: 'short' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details[0].field).to.equal('password');
  });

  it('PATCH changes a role; the old token stops working and a new sign-in carries the new role', async () => {
    const admin = await asAdmin();
    const created = await request(testApp()).post('/api/users').set(admin).send({ email: 'mover@fixture.test', name: 'Mover', role: 'viewer', password: 'tidal-basin-seventeen' });
    const first = await request(testApp()).post('/api/auth/login').send({ email: 'mover@fixture.test', password: 'tidal-basin-seventeen' });
    const res = await request(testApp()).patch(`/api/users/${created.body.id}`).set(admin).send({ role: 'lead' });
    expect(res.status).to.equal(200);
    expect(res.body.role).to.equal('lead');
    const stale = await request(testApp()).get('/api/auth/me').set('Authorization', `Bearer ${first.body.token}`);
    expect(stale.status).to.equal(401);
    const again = await request(testApp()).post('/api/auth/login').send({ email: 'mover@fixture.test', password: 'tidal-basin-seventeen' });
    expect(again.body.user.role).to.equal('lead');
  });

  it('PATCH deactivates a user: their token and sign-in answer 401', async () => {
    const admin = await asAdmin();
    const created = await request(testApp()).post('/api/users').set(admin).send({ email: 'leaver@fixture.test', name: 'Leaver', role: 'chemist', password: 'tidal-basin-seventeen' });
    const session = await request(testApp()).post('/api/auth/login').send({ email: 'leaver@fixture.test', password: 'tidal-basin-seventeen' });
    const res = await request(testApp()).patch(`/api/users/${created.body.id}`).set(admin).send({ active: false });
    expect(res.status).to.equal(200);
    expect(res.body.active).to.equal(false);
    expect((await request(testApp()).get('/api/auth/me').set('Authorization', `Bearer ${session.body.token}`)).status).to.equal(401);
    expect((await request(testApp()).post('/api/auth/login').send({ email: 'leaver@fixture.test', password: 'tidal-basin-seventeen' })).status).to.equal(401);
  });

  it('PATCH refuses to demote or deactivate the last active admin (409) and changes nothing', async () => {
    const em = testOrm().em.fork();
    const admin = await em.findOneOrFail(User, { email: fixtureEmail('admin') });
    const headers = await asAdmin();
    // Other administrators (the demo seed adds one) step down first, so this one is the last.
    for (const other of await em.find(User, { role: 'admin', active: true, id: { $ne: admin.id } })) {
      expect((await request(testApp()).patch(`/api/users/${other.id}`).set(headers).send({ role: 'viewer' })).status).to.equal(200);
    }
    const demote = await request(testApp()).patch(`/api/users/${admin.id}`).set(headers).send({ role: 'viewer' });
    expect(demote.status).to.equal(409);
    expect(demote.body.error.code).to.equal('last_admin');
    const deactivate = await request(testApp()).patch(`/api/users/${admin.id}`).set(headers).send({ active: false });
    expect(deactivate.status).to.equal(409);
    const after = await testOrm().em.fork().findOneOrFail(User, { id: admin.id });
    expect(after).to.include({ role: 'admin', active: true });
  });

  it('PATCH answers 409 when the record changed since the editor loaded it', async () => {
    const admin = await asAdmin();
    const created = await request(testApp()).post('/api/users').set(admin).send({ email: 'twice@fixture.test', name: 'Twice', role: 'viewer', password: 'tidal-basin-seventeen' });
    const seen = created.body.version;
    const first = await request(testApp()).patch(`/api/users/${created.body.id}`).set(admin).send({ name: 'Twice A', version: seen });
    expect(first.status).to.equal(200);
    const second = await request(testApp()).patch(`/api/users/${created.body.id}`).set(admin).send({ name: 'Twice B', version: seen });
    expect(second.status).to.equal(409);
    expect(second.body.error.code).to.equal('stale_version');
  });

  it('PATCH answers 404 for an unknown user and 400 for a bad id or empty change', async () => {
    const admin = await asAdmin();
    expect((await request(testApp()).patch('/api/users/999999').set(admin).send({ name: 'X' })).status).to.equal(404);
    const badId = await request(testApp()).patch('/api/users/abc').set(admin).send({ name: 'X' });
    expect(badId.status).to.equal(400);
    expect(badId.body.error.details[0].field).to.equal('id');
    expect((await request(testApp()).patch('/api/users/1').set(admin).send({})).status).to.equal(400);
    const unknownField = await request(testApp()).patch('/api/users/1').set(admin).send({ passwordHash: 'x' });
    expect(unknownField.status).to.equal(400);
  });
});
