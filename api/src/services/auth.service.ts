import { createSecretKey, type KeyObject } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/postgresql';
import jwt from 'jsonwebtoken';
import type { Role } from '../domain/roles.js';
import { isRole } from '../domain/roles.js';
import { User, usersOf, type IUser } from '../entities/user.entity.js';
import { HttpError } from '../http-error.js';
import { hashPassword, verifyPassword } from './password.js';

export interface AuthUser {
  id: number;
  email: string;
  name: string;
  role: Role;
}

interface TokenClaims {
  sub: string;
  role: Role;
  tv: number;
}

const BAD_CREDENTIALS = 'E-mail or password is incorrect.';
/** Compared against when the account does not exist, so both failures cost the same time. */
let decoyHash: Promise<string> | undefined;

export function publicUser(user: IUser): AuthUser {
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

export class AuthService {
  /**
   * The HMAC key as a KeyObject, made once: given a string, jsonwebtoken first tries to read it as
   * a PEM public key on every verify, which cost about a fifth of a cached request's time.
   */
  private readonly key: KeyObject;

  constructor(
    secret: string,
    private readonly ttlSeconds: number,
  ) {
    this.key = createSecretKey(Buffer.from(secret, 'utf8'));
  }

  async login(em: EntityManager, email: string, password: string) {
    const user = await usersOf(em).findByEmail(email);
    if (!user) {
      decoyHash ??= hashPassword('decoy-password-for-timing');
      await verifyPassword(await decoyHash, password);
      throw HttpError.unauthorized(BAD_CREDENTIALS);
    }
    const ok = await verifyPassword(user.passwordHash, password);
    if (!ok || !user.active) throw HttpError.unauthorized(ok ? 'This account is deactivated; ask an administrator.' : BAD_CREDENTIALS);
    user.lastSignInAt = new Date();
    await em.flush();
    return this.session(user);
  }

  /** A sign-in answer for the user: token, public user and lifetime. */
  session(user: IUser) {
    return { token: this.sign(user), user: publicUser(user), expiresIn: this.ttlSeconds };
  }

  sign(user: IUser): string {
    const claims: TokenClaims = { sub: String(user.id), role: user.role, tv: user.tokenVersion };
    return jwt.sign(claims, this.key, { algorithm: 'HS256', expiresIn: this.ttlSeconds, issuer: 'ligandry' });
  }

  /** Checks the token and that its user is still active and unchanged; the user's current role wins. */
  async authenticate(em: EntityManager, token: string): Promise<AuthUser> {
    let claims: TokenClaims;
    try {
      claims = jwt.verify(token, this.key, { algorithms: ['HS256'], issuer: 'ligandry' }) as unknown as TokenClaims;
    } catch (err) {
      const expired = err instanceof jwt.TokenExpiredError;
      throw new HttpError(401, expired ? 'token_expired' : 'invalid_token', expired ? 'Your session has expired; sign in again.' : 'The sign-in token is not valid; sign in again.');
    }
    const id = Number(claims.sub);
    if (!Number.isInteger(id) || !isRole(claims.role)) throw new HttpError(401, 'invalid_token', 'The sign-in token is not valid; sign in again.');
    const user = await em.findOne(User, { id });
    if (!user || !user.active || user.tokenVersion !== claims.tv) {
      throw new HttpError(401, 'invalid_token', 'Your session is no longer valid; sign in again.');
    }
    return publicUser(user);
  }
}
