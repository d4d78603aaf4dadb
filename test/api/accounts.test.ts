// Invitations, password resets, password changes and token revocation (issue 9), through the
// real routes and the in-process fake SMTP server.
import { expect } from 'chai';
import request from 'supertest';
import { AccountToken } from '../../api/src/entities/account-token.entity.js';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { hashToken } from '../../api/src/services/account.service.js';
import { testApp, tokenFor } from '../helpers/api.js';
import { testOrm } from '../helpers/db.js';

const app = () => testApp();
const asAdmin = async () => ({ Authorization: `Bearer ${await tokenFor('admin')}` });

/** Waits for the newest message to `to` whose text holds a link to `path`, and returns the link's token. */
async function linkTokenFor(to: string, path: string, after = 0): Promise<string> {
  for (let i = 0; i < 100; i++) {
    const msg = app().mailer.messages().find((m) => m.id > after && m.to.includes(to) && m.text.includes(path));
    if (msg) {
      const match = new RegExp(`${path}\\?token=([A-Za-z0-9_-]+)`).exec(msg.text.replace(/=\r?\n/g, ''));
      if (match) return match[1];
    }
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no ${path} e-mail to ${to}`);
}

const lastMailId = () => app().mailer.messages()[0]?.id ?? 0;
const login = (email: string, password: string) => request(app()).post('/api/auth/login').send({ email, password });
const me = (token: string) => request(app()).get('/api/auth/me').set('Authorization', `Bearer ${token}`);

describe('accounts: invitation by e-mail', () => {
  it('an admin invites an address with a role; the e-mailed link sets a password and signs in', async () => {
    const res = await request(app()).post('/api/users/invitations').set(await asAdmin()).send({ email: 'Invitee.One@Fixture.test', name: 'Invitee One', role: 'pharmacologist' });
    expect(res.status).to.equal(201);
    expect(res.body.user).to.include({ email: 'invitee.one@fixture.test', role: 'pharmacologist', invited: true });
    expect(res.body.emailed).to.equal(true);
    expect(new Date(res.body.expiresAt).getTime()).to.be.greaterThan(Date.now() + 6 * 24 * 3600_000);
    const token = await linkTokenFor('invitee.one@fixture.test', '/accept-invitation');
    expect((await login('invitee.one@fixture.test', 'anything-at-all-1')).status).to.equal(401);
    const accepted = await request(app()).post('/api/auth/invitation/accept').send({ token, password: 'quiet-harbour-lamp-9' });
    expect(accepted.status).to.equal(200);
    expect(accepted.body.user).to.include({ email: 'invitee.one@fixture.test', role: 'pharmacologist' });
    expect((await me(accepted.body.token)).status).to.equal(200);
    expect((await login('invitee.one@fixture.test', 'quiet-harbour-lamp-9')).status).to.equal(200);
    const events = await testOrm().em.fork().find(AuditEvent, { action: { $in: ['user.invite', 'user.invitation.accept'] }, entityId: String(res.body.user.id) });
    expect(events.map((e) => e.action).sort()).to.deep.equal(['user.invitation.accept', 'user.invite']);
  });

  it('the invitation link works once', async () => {
    await request(app()).post('/api/users/invitations').set(await asAdmin()).send({ email: 'once@fixture.test', name: 'Once', role: 'viewer' });
    const token = await linkTokenFor('once@fixture.test', '/accept-invitation');
    expect((await request(app()).post('/api/auth/invitation/accept').send({ token, password: 'quiet-harbour-lamp-9' })).status).to.equal(200);
    const again = await request(app()).post('/api/auth/invitation/accept').send({ token, password: 'other-harbour-lamp-9' });
    expect(again.status).to.equal(400);
    expect(again.body.error.code).to.equal('invalid_link');
    expect((await login('once@fixture.test', 'other-harbour-lamp-9')).status).to.equal(401);
  });

  it('an expired invitation link answers 400', async () => {
    await request(app()).post('/api/users/invitations').set(await asAdmin()).send({ email: 'late@fixture.test', name: 'Late', role: 'viewer' });
    const token = await linkTokenFor('late@fixture.test', '/accept-invitation');
    await testOrm().em.fork().nativeUpdate(AccountToken, { tokenHash: hashToken(token) }, { expiresAt: new Date(Date.now() - 1000) });
    const res = await request(app()).post('/api/auth/invitation/accept').send({ token, password: 'quiet-harbour-lamp-9' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details[0].field).to.equal('token');
  });

  it('inviting a pending address again replaces the first link; an existing account answers 409', async () => {
    const admin = await asAdmin();
    const before = lastMailId();
    await request(app()).post('/api/users/invitations').set(admin).send({ email: 'twice-invited@fixture.test', name: 'Twice', role: 'viewer' });
    const first = await linkTokenFor('twice-invited@fixture.test', '/accept-invitation', before);
    const mid = lastMailId();
    expect((await request(app()).post('/api/users/invitations').set(admin).send({ email: 'twice-invited@fixture.test', name: 'Twice', role: 'chemist' })).status).to.equal(201);
    const second = await linkTokenFor('twice-invited@fixture.test', '/accept-invitation', mid);
    expect((await request(app()).post('/api/auth/invitation/accept').send({ token: first, password: 'quiet-harbour-lamp-9' })).status).to.equal(400);
    const ok = await request(app()).post('/api/auth/invitation/accept').send({ token: second, password: 'quiet-harbour-lamp-9' });
    expect(ok.body.user.role).to.equal('chemist');
    const dup = await request(app()).post('/api/users/invitations').set(admin).send({ email: 'chemist@fixture.test', name: 'X', role: 'viewer' });
    expect(dup.status).to.equal(409);
  });

  it('accepting with a password that breaks the policy answers 400 naming password, and the link still works', async () => {
    await request(app()).post('/api/users/invitations').set(await asAdmin()).send({ email: 'picky@fixture.test', name: 'Picky', role: 'viewer' });
    const token = await linkTokenFor('picky@fixture.test', '/accept-invitation');
    for (const weak of ['short', 'Password2024!', 'picky@fixture.test']) {
      const res = await request(app()).post('/api/auth/invitation/accept').send({ token, password: weak });
      expect(res.status, weak).to.equal(400);
      expect(res.body.error.details[0].field).to.equal('password');
    }
    expect((await request(app()).post('/api/auth/invitation/accept').send({ token, password: 'quiet-harbour-lamp-9' })).status).to.equal(200);
  });

  it('answers 400 naming the fields of a malformed invitation', async () => {
    const res = await request(app()).post('/api/users/invitations').set(await asAdmin()).send({ email: 'nope', name: '', role: 'wizard' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details.map((d: { field: string }) => d.field)).to.have.members(['email', 'name', 'role']);
  });
});

describe('accounts: password reset by e-mail', () => {
  before(async () => {
    // Two accounts: reset requests are limited to 5 an hour per account.
    await request(app()).post('/api/users').set(await asAdmin()).send({ email: 'forgetful@fixture.test', name: 'Forgetful', role: 'chemist', password: 'first-harbour-lamp-1' });
    await request(app()).post('/api/users').set(await asAdmin()).send({ email: 'forgetful-2@fixture.test', name: 'Forgetful Two', role: 'chemist', password: 'first-harbour-lamp-1' });
  });

  it('answers 202 the same for a known and an unknown address, and e-mails only the known one', async () => {
    const before = lastMailId();
    const known = await request(app()).post('/api/auth/password-reset').send({ email: 'Forgetful@fixture.test' });
    const unknown = await request(app()).post('/api/auth/password-reset').send({ email: 'nobody-here@fixture.test' });
    expect(known.status).to.equal(202);
    expect(unknown.status).to.equal(202);
    expect(unknown.body).to.deep.equal(known.body);
    await linkTokenFor('forgetful@fixture.test', '/reset-password', before);
    await new Promise((r) => setTimeout(r, 200));
    expect(app().mailer.messages().some((m) => m.to.includes('nobody-here@fixture.test'))).to.equal(false);
  });

  it('stores only the hash of the secret in the link', async () => {
    const before = lastMailId();
    await request(app()).post('/api/auth/password-reset').send({ email: 'forgetful@fixture.test' });
    const token = await linkTokenFor('forgetful@fixture.test', '/reset-password', before);
    const rows = await testOrm().em.fork().getConnection().execute<{ token_hash: string }[]>('select token_hash from account_token');
    expect(rows.some((r) => r.token_hash === hashToken(token))).to.equal(true);
    expect(rows.some((r) => r.token_hash === token)).to.equal(false);
  });

  it('the link sets a new password once; the old password and every earlier token stop working', async () => {
    const session = await login('forgetful@fixture.test', 'first-harbour-lamp-1');
    expect(session.status).to.equal(200);
    const before = lastMailId();
    await request(app()).post('/api/auth/password-reset').send({ email: 'forgetful@fixture.test' });
    const token = await linkTokenFor('forgetful@fixture.test', '/reset-password', before);
    const res = await request(app()).post('/api/auth/password-reset/confirm').send({ token, password: 'second-harbour-lamp-2' });
    expect(res.status).to.equal(200);
    expect((await me(res.body.token)).status).to.equal(200);
    expect((await me(session.body.token)).status).to.equal(401);
    expect((await login('forgetful@fixture.test', 'first-harbour-lamp-1')).status).to.equal(401);
    expect((await login('forgetful@fixture.test', 'second-harbour-lamp-2')).status).to.equal(200);
    const reuse = await request(app()).post('/api/auth/password-reset/confirm').send({ token, password: 'third-harbour-lamp-3' });
    expect(reuse.status).to.equal(400);
    expect(reuse.body.error.code).to.equal('invalid_link');
    const audited = await testOrm().em.fork().count(AuditEvent, { action: 'user.password.reset' });
    expect(audited).to.be.greaterThan(0);
  });

  it('a newer reset link replaces an older one', async () => {
    let before = lastMailId();
    await request(app()).post('/api/auth/password-reset').send({ email: 'forgetful@fixture.test' });
    const older = await linkTokenFor('forgetful@fixture.test', '/reset-password', before);
    before = lastMailId();
    await request(app()).post('/api/auth/password-reset').send({ email: 'forgetful@fixture.test' });
    const newer = await linkTokenFor('forgetful@fixture.test', '/reset-password', before);
    expect((await request(app()).post('/api/auth/password-reset/confirm').send({ token: older, password: 'fourth-harbour-lamp-4' })).status).to.equal(400);
    expect((await request(app()).post('/api/auth/password-reset/confirm').send({ token: newer, password: 'fourth-harbour-lamp-4' })).status).to.equal(200);
  });

  it('an expired reset link answers 400', async () => {
    const before = lastMailId();
    await request(app()).post('/api/auth/password-reset').send({ email: 'forgetful-2@fixture.test' });
    const token = await linkTokenFor('forgetful-2@fixture.test', '/reset-password', before);
    await testOrm().em.fork().nativeUpdate(AccountToken, { tokenHash: hashToken(token) }, { expiresAt: new Date(Date.now() - 1) });
    expect((await request(app()).post('/api/auth/password-reset/confirm').send({ token, password: 'fifth-harbour-lamp-5' })).status).to.equal(400);
  });

  it('a made-up token answers 400 naming the token', async () => {
    const res = await request(app()).post('/api/auth/password-reset/confirm').send({ token: 'x'.repeat(43), password: 'fifth-harbour-lamp-5' });
    expect(res.status).to.equal(400);
    expect(res.body.error.details[0].field).to.equal('token');
  });

  it('sends nothing for a deactivated account', async () => {
    const em = testOrm().em.fork();
    em.persist(em.create(User, { email: 'gone@fixture.test', name: 'Gone', role: 'viewer', passwordHash: 'x', active: false }));
    await em.flush();
    await request(app()).post('/api/auth/password-reset').send({ email: 'gone@fixture.test' });
    await new Promise((r) => setTimeout(r, 200));
    expect(app().mailer.messages().some((m) => m.to.includes('gone@fixture.test'))).to.equal(false);
  });

  it('limits reset requests per account: the 6th within an hour answers 429', async () => {
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) statuses.push((await request(app()).post('/api/auth/password-reset').send({ email: 'limited-reset@fixture.test' })).status);
    expect(statuses).to.deep.equal([202, 202, 202, 202, 202, 429]);
  });
});

describe('accounts: changing one\'s own password', () => {
  it('needs the current password, applies the policy and revokes other sessions', async () => {
    await request(app()).post('/api/users').set(await asAdmin()).send({ email: 'changer@fixture.test', name: 'Changer', role: 'viewer', password: 'first-harbour-lamp-1' });
    const a = await login('changer@fixture.test', 'first-harbour-lamp-1');
    const b = await login('changer@fixture.test', 'first-harbour-lamp-1');
    const auth = { Authorization: `Bearer ${a.body.token}` };
    const wrong = await request(app()).post('/api/auth/password').set(auth).send({ currentPassword: 'nope', password: 'second-harbour-lamp-2' });
    expect(wrong.status).to.equal(400);
    expect(wrong.body.error.details[0].field).to.equal('currentPassword');
    const weak = await request(app()).post('/api/auth/password').set(auth).send({ currentPassword: 'first-harbour-lamp-1', password: 'qwertyqwerty' });
    expect(weak.status).to.equal(400);
    expect(weak.body.error.details[0].field).to.equal('password');
    const ok = await request(app()).post('/api/auth/password').set(auth).send({ currentPassword: 'first-harbour-lamp-1', password: 'second-harbour-lamp-2' });
    expect(ok.status).to.equal(200);
    expect((await me(b.body.token)).status).to.equal(401);
    expect((await me(a.body.token)).status).to.equal(401);
    expect((await me(ok.body.token)).status).to.equal(200);
  });
});
