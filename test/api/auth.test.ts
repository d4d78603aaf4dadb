import { expect } from 'chai';
import jwt from 'jsonwebtoken';
import request from 'supertest';
import { User } from '../../api/src/entities/user.entity.js';
import { hashPassword } from '../../api/src/services/password.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm, testSettings } from '../helpers/db.js';
import { FIXTURE_PASSWORD, fixtureEmail } from '../helpers/fixtures.js';

const login = (body: unknown) => request(testApp()).post('/api/auth/login').send(body as object);

describe('POST /api/auth/login', () => {
  before(async () => {
    const em = testOrm().em.fork();
    const passwordHash = await hashPassword(FIXTURE_PASSWORD);
    em.persist(em.create(User, { email: 'retired@fixture.test', name: 'Retired User', role: 'chemist', passwordHash, active: false }));
    em.persist(em.create(User, { email: 'throttled@fixture.test', name: 'Throttled User', role: 'viewer', passwordHash }));
    await em.flush();
  });

  it('answers 200 with a token and the user for the right password', async () => {
    const res = await login({ email: fixtureEmail('chemist'), password: FIXTURE_PASSWORD });
    expect(res.status).to.equal(200);
    expect(res.body.token).to.be.a('string');
    expect(res.body.user).to.deep.include({ email: 'chemist@fixture.test', role: 'chemist', name: 'Fixture Chemist' });
    expect(res.body.user).not.to.have.property('passwordHash');
  });

  it('treats the e-mail case-insensitively', async () => {
    const res = await login({ email: 'CHEMIST@Fixture.TEST', password: FIXTURE_PASSWORD });
    expect(res.status).to.equal(200);
  });

  it('answers 401 for a wrong password', async () => {
    const res = await login({ email: fixtureEmail('chemist'), password: 'not-the-password' });
    expect(res.status).to.equal(401);
    expect(res.body.error.message).to.equal('E-mail or password is incorrect.');
  });

  it('answers an unknown user with the same 401 as a wrong password', async () => {
    const wrong = await login({ email: fixtureEmail('chemist'), password: 'not-the-password' });
    const unknown = await login({ email: 'nobody@fixture.test', password: 'not-the-password' });
    expect(unknown.status).to.equal(401);
    expect(unknown.body).to.deep.equal(wrong.body);
  });

  it('answers 401 for a deactivated user', async () => {
    const res = await login({ email: 'retired@fixture.test', password: FIXTURE_PASSWORD });
    expect(res.status).to.equal(401);
    expect(res.body.error.message).to.contain('deactivated');
  });

  it('answers 400 naming a missing password', async () => {
    const res = await login({ email: fixtureEmail('chemist') });
    expect(res.status).to.equal(400);
    expect(res.body.error.details).to.deep.equal([{ field: 'password', message: 'is required' }]);
    expect(res.body.error.message).to.contain('password is required');
  });

  it('answers 400 naming a malformed e-mail', async () => {
    const res = await login({ email: 'not-an-address', password: 'x' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details).to.deep.equal([{ field: 'email', message: 'must be an e-mail address' }]);
  });

  it('answers 400 naming every wrong field at once', async () => {
    const res = await login({ email: 42, password: ['x'] });
    expect(res.status).to.equal(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).to.deep.equal(['email', 'password']);
  });

  it('limits failed attempts per account: the 11th within 15 minutes answers 429', async () => {
    for (let i = 0; i < 10; i++) {
      const res = await login({ email: 'throttled@fixture.test', password: `wrong-${i}` });
      expect(res.status).to.equal(401);
    }
    const blocked = await login({ email: 'throttled@fixture.test', password: FIXTURE_PASSWORD });
    expect(blocked.status).to.equal(429);
    expect(blocked.body.error.code).to.equal('too_many_attempts');
    const other = await login({ email: fixtureEmail('viewer'), password: FIXTURE_PASSWORD });
    expect(other.status).to.equal(200);
  });
});

describe('bearer tokens', () => {
  const me = (header?: string) => {
    const r = request(testApp()).get('/api/auth/me');
    return header ? r.set('Authorization', header) : r;
  };

  it('GET /api/auth/me answers the signed-in user', async () => {
    const res = await me(`Bearer ${await tokenFor('lead')}`);
    expect(res.status).to.equal(200);
    expect(res.body.user).to.deep.include({ email: 'lead@fixture.test', role: 'lead' });
  });

  it('answers 401 without a token on a protected route', async () => {
    const res = await me();
    expect(res.status).to.equal(401);
    expect(res.body.error.code).to.equal('unauthorized');
  });

  it('answers 401 for a header that is not "Bearer <token>"', async () => {
    const res = await me('Token abc');
    expect(res.status).to.equal(401);
    expect(res.body.error.code).to.equal('invalid_token');
  });

  it('answers 401 for a tampered signature', async () => {
    const token = await tokenFor('lead');
    const [head, payload, signature] = token.split('.');
    const flipped = (signature[0] === 'A' ? 'B' : 'A') + signature.slice(1);
    const res = await me(`Bearer ${head}.${payload}.${flipped}`);
    expect(res.status).to.equal(401);
    expect(res.body.error.code).to.equal('invalid_token');
  });

  it('answers 401 for a token whose claims were changed (role raised to admin)', async () => {
    const token = await tokenFor('viewer');
    const [head, payload, signature] = token.split('.');
    const claims = JSON.parse(Buffer.from(payload, 'base64url').toString());
    const forged = Buffer.from(JSON.stringify({ ...claims, role: 'admin' })).toString('base64url');
    const res = await request(testApp()).get('/api/users').set('Authorization', `Bearer ${head}.${forged}.${signature}`);
    expect(res.status).to.equal(401);
  });

  it('answers 401 for a token signed with another secret', async () => {
    const token = jwt.sign({ sub: '1', role: 'admin', tv: 0 }, 'some-other-secret', { algorithm: 'HS256', issuer: 'ligandry' });
    const res = await me(`Bearer ${token}`);
    expect(res.status).to.equal(401);
  });

  it('answers 401 for an unsigned ("alg": "none") token', async () => {
    const token = jwt.sign({ sub: '1', role: 'admin', tv: 0 }, '', { algorithm: 'none', issuer: 'ligandry' });
    const res = await me(`Bearer ${token}`);
    expect(res.status).to.equal(401);
  });

  it('answers 401 token_expired for an expired token', async () => {
    const em = testOrm().em.fork();
    const user = await em.findOneOrFail(User, { email: fixtureEmail('chemist') });
    const past = Math.floor(Date.now() / 1000) - 3600;
    const token = jwt.sign({ sub: String(user.id), role: user.role, tv: user.tokenVersion, iat: past - 60, exp: past }, testSettings().jwtSecret, { algorithm: 'HS256', issuer: 'ligandry' });
    const res = await me(`Bearer ${token}`);
    expect(res.status).to.equal(401);
    expect(res.body.error.code).to.equal('token_expired');
  });
});
