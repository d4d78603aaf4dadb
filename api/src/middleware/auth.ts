import type { RequestHandler } from 'express';
import { RequestContext, type EntityManager } from '@mikro-orm/postgresql';
import { can, type Capability } from '../domain/roles.js';
import { HttpError } from '../http-error.js';
import type { AuthService, AuthUser } from '../services/auth.service.js';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      auth?: AuthUser;
    }
  }
}

/** The request-scoped EntityManager (RequestContext middleware runs before every router). */
export function em(): EntityManager {
  const current = RequestContext.getEntityManager();
  if (!current) throw new Error('no request context: RequestContext middleware is missing');
  return current as EntityManager;
}

/** Requires a valid bearer token; sets req.auth. */
export function authenticate(auth: AuthService): RequestHandler {
  return async (req, _res, next) => {
    const header = req.get('authorization');
    if (!header) throw HttpError.unauthorized('Sign in to continue (no Authorization header).');
    const match = /^Bearer\s+(\S+)$/i.exec(header);
    if (!match) throw new HttpError(401, 'invalid_token', 'The Authorization header must be "Bearer <token>".');
    req.auth = await auth.authenticate(em(), match[1]);
    next();
  };
}

/** Requires the signed-in user's role to hold the capability (DESIGN §1 role table). */
export function requireCapability(capability: Capability): RequestHandler {
  return (req, _res, next) => {
    if (!req.auth) throw HttpError.unauthorized();
    if (!can(req.auth.role, capability)) {
      throw HttpError.forbidden(`The ${req.auth.role} role may not do this (needs "${capability}").`);
    }
    next();
  };
}

export function currentUser(req: Express.Request): AuthUser {
  if (!req.auth) throw HttpError.unauthorized();
  return req.auth;
}
