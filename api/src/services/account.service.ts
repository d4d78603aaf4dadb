// Invitations and password resets by e-mail (issue 9). A link carries a random secret; only its
// SHA-256 is stored, it expires, and it works once. Setting a password bumps the user's token
// version, so every sign-in token issued before stops working.
import { createHash, randomBytes } from 'node:crypto';
import { LockMode, type EntityManager } from '@mikro-orm/postgresql';
import type { Role } from '../domain/roles.js';
import { AccountToken, type AccountTokenPurpose } from '../entities/account-token.entity.js';
import { User, type IUser } from '../entities/user.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';
import type { Mailer } from './mail.service.js';
import { checkPassword, hashPassword } from './password.js';
import { userView, type UserView } from './user.service.js';

export const INVITATION_TTL_MS = 7 * 24 * 3600_000;
export const RESET_TTL_MS = 60 * 60_000;

export function hashToken(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** Marks the user's unused links of this purpose as used, then issues a new one. */
async function issueToken(tx: EntityManager, user: IUser, purpose: AccountTokenPurpose, ttlMs: number, createdById: number | null) {
  await tx.nativeUpdate(AccountToken, { user: user.id, purpose, usedAt: null }, { usedAt: new Date() });
  const secret = randomBytes(32).toString('base64url');
  const expiresAt = new Date(Date.now() + ttlMs);
  tx.persist(tx.create(AccountToken, { user, purpose, tokenHash: hashToken(secret), expiresAt, createdById }));
  return { secret, expiresAt };
}

function policyError(problems: string[]): HttpError {
  return HttpError.badRequest(`password ${problems.join('; ')}`, [{ field: 'password', message: problems.join('; ') }]);
}

const BAD_LINK = 'This link is not valid any more: it was already used, replaced by a newer one or has expired. Ask for a new one.';

/** Finds a live token (locked for this transaction) or answers 400 naming the token field. */
async function liveToken(tx: EntityManager, secret: string, purpose: AccountTokenPurpose) {
  const token = await tx.findOne(AccountToken, { tokenHash: hashToken(secret), purpose }, { lockMode: LockMode.PESSIMISTIC_WRITE });
  if (!token || token.usedAt || token.expiresAt.getTime() <= Date.now()) {
    throw new HttpError(400, 'invalid_link', BAD_LINK, [{ field: 'token', message: 'is not valid (used, replaced or expired)' }]);
  }
  const user = await tx.findOneOrFail(User, { id: token.user.id }, { lockMode: LockMode.PESSIMISTIC_WRITE });
  return { token, user };
}

export interface Invitation {
  email: string;
  name: string;
  role: Role;
}

export class AccountService {
  constructor(
    private readonly mailer: Mailer,
    private readonly publicUrl: string,
  ) {}

  /**
   * An admin invites an address with a role: a user without a password, and an e-mail with a link
   * that sets one. Inviting a pending address again replaces its link; an existing account is 409.
   */
  async invite(em: EntityManager, actorId: number, input: Invitation): Promise<{ user: UserView; expiresAt: string; emailed: boolean }> {
    const email = input.email.trim().toLowerCase();
    const { user, secret, expiresAt } = await em.transactional(async (tx) => {
      let user = await tx.findOne(User, { email });
      if (user && !user.invitedAt) throw HttpError.conflict('duplicate_email', `A user with the e-mail ${email} already exists.`, { id: user.id });
      if (user) {
        user.name = input.name.trim();
        user.role = input.role;
        user.invitedAt = new Date();
      } else {
        user = tx.create(User, { email, name: input.name.trim(), role: input.role, passwordHash: '', invitedAt: new Date() });
        tx.persist(user);
        await tx.flush();
      }
      const issued = await issueToken(tx, user, 'invitation', INVITATION_TTL_MS, actorId);
      audit(tx, actorId, 'user.invite', 'User', user.id, { email, role: input.role, expiresAt: issued.expiresAt.toISOString() });
      await tx.flush();
      return { user, ...issued };
    });
    let emailed = true;
    try {
      await this.mailer.send({
        to: [email],
        subject: 'You are invited to Ligandry',
        text:
          `Hello ${user.name},\n\nYou have been invited to Ligandry as ${user.role}. Choose your password here:\n\n` +
          `${this.publicUrl}/accept-invitation?token=${secret}\n\n` +
          `The link works once and expires on ${expiresAt.toISOString().slice(0, 16).replace('T', ' ')} UTC. ` +
          `If you did not expect this, ignore this message.\n`,
      });
    } catch {
      emailed = false;
    }
    return { user: userView(user), expiresAt: expiresAt.toISOString(), emailed };
  }

  /** Sets the invited user's first password; the link is spent. Answers the user to sign in. */
  async acceptInvitation(em: EntityManager, secret: string, password: string, name?: string): Promise<IUser> {
    return em.transactional(async (tx) => {
      const { token, user } = await liveToken(tx, secret, 'invitation');
      if (!user.active) throw new HttpError(400, 'invalid_link', BAD_LINK, [{ field: 'token', message: 'the account is deactivated' }]);
      const problems = checkPassword(password, user.email);
      if (problems.length) throw policyError(problems);
      user.passwordHash = await hashPassword(password);
      if (name?.trim()) user.name = name.trim();
      user.invitedAt = null;
      user.passwordChangedAt = new Date();
      user.tokenVersion += 1;
      token.usedAt = new Date();
      audit(tx, user.id, 'user.invitation.accept', 'User', user.id, { email: user.email });
      await tx.flush();
      return user;
    });
  }

  /**
   * Sends a reset link when the address belongs to an active account with a password; answers
   * the same either way, so the route does not reveal which addresses have accounts.
   */
  async requestReset(em: EntityManager, emailInput: string): Promise<void> {
    const email = emailInput.trim().toLowerCase();
    const issued = await em.transactional(async (tx) => {
      const user = await tx.findOne(User, { email });
      if (!user || !user.active || user.invitedAt) return undefined;
      const t = await issueToken(tx, user, 'password-reset', RESET_TTL_MS, null);
      audit(tx, null, 'user.password.reset-request', 'User', user.id, { email });
      await tx.flush();
      return { ...t, user };
    });
    if (!issued) return;
    this.mailer.sendLater({
      to: [email],
      subject: 'Reset your Ligandry password',
      text:
        `Hello ${issued.user.name},\n\nSomeone (hopefully you) asked to reset the password of this Ligandry account. Choose a new one here:\n\n` +
        `${this.publicUrl}/reset-password?token=${issued.secret}\n\n` +
        `The link works once and expires in ${Math.round(RESET_TTL_MS / 60_000)} minutes. If you did not ask, ignore this message: your password stays as it is.\n`,
    });
  }

  /** Sets a new password from a reset link: the link is spent and every earlier sign-in token revoked. */
  async confirmReset(em: EntityManager, secret: string, password: string): Promise<IUser> {
    return em.transactional(async (tx) => {
      const { token, user } = await liveToken(tx, secret, 'password-reset');
      if (!user.active) throw new HttpError(400, 'invalid_link', BAD_LINK, [{ field: 'token', message: 'the account is deactivated' }]);
      const problems = checkPassword(password, user.email);
      if (problems.length) throw policyError(problems);
      user.passwordHash = await hashPassword(password);
      user.passwordChangedAt = new Date();
      user.tokenVersion += 1;
      token.usedAt = new Date();
      await tx.nativeUpdate(AccountToken, { user: user.id, usedAt: null, id: { $ne: token.id } }, { usedAt: new Date() });
      audit(tx, user.id, 'user.password.reset', 'User', user.id, {});
      await tx.flush();
      return user;
    });
  }

  /** A signed-in user changes their own password; other sessions stop working. */
  async changePassword(em: EntityManager, userId: number, current: string, password: string, verify: (hash: string, pw: string) => Promise<boolean>): Promise<IUser> {
    return em.transactional(async (tx) => {
      const user = await tx.findOneOrFail(User, { id: userId }, { populate: ['passwordHash'] });
      if (!(await verify(user.passwordHash, current))) {
        throw HttpError.badRequest('currentPassword is not your current password.', [{ field: 'currentPassword', message: 'is not your current password' }]);
      }
      const problems = checkPassword(password, user.email);
      if (problems.length) throw policyError(problems);
      user.passwordHash = await hashPassword(password);
      user.passwordChangedAt = new Date();
      user.tokenVersion += 1;
      await tx.nativeUpdate(AccountToken, { user: user.id, purpose: 'password-reset', usedAt: null }, { usedAt: new Date() });
      audit(tx, user.id, 'user.password.change', 'User', user.id, {});
      await tx.flush();
      return user;
    });
  }
}
