import { Router } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import { HttpError } from '../http-error.js';
import { authenticate, currentUser, em } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AccountService } from '../services/account.service.js';
import type { AuthService } from '../services/auth.service.js';
import { verifyPassword } from '../services/password.js';

const LoginBody = z.object({
  email: z.email({ error: 'must be an e-mail address' }).max(254),
  password: z.string().min(1, { error: 'must not be empty' }).max(256),
});

const Email = z.email({ error: 'must be an e-mail address' }).max(254);
const Secret = z.string().min(20, { error: 'is not a valid link token' }).max(200, { error: 'is not a valid link token' });
const NewPassword = z.string().min(1, { error: 'must not be empty' }).max(1000);
const ResetRequestBody = z.object({ email: Email }).strict();
const ResetConfirmBody = z.object({ token: Secret, password: NewPassword }).strict();
const AcceptBody = z.object({ token: Secret, password: NewPassword, name: z.string().trim().max(120).optional() }).strict();
const ChangeBody = z.object({ currentPassword: z.string().min(1, { error: 'must not be empty' }).max(256), password: NewPassword }).strict();

function tooMany(message: string) {
  return () => {
    throw new HttpError(429, 'too_many_attempts', message);
  };
}

export function authRouter(auth: AuthService, accounts: AccountService) {
  const router = Router();

  // Failed sign-ins are limited per account and address, and all attempts per address.
  const perAccount = rateLimit({
    windowMs: 15 * 60_000,
    limit: 10,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').toLowerCase()}`,
    handler: tooMany('Too many failed sign-in attempts for this account; wait 15 minutes and try again.'),
  });
  const perAddress = rateLimit({
    windowMs: 15 * 60_000,
    limit: 300,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: tooMany('Too many sign-in attempts from this address; wait 15 minutes and try again.'),
  });

  router.post('/login', perAddress, perAccount, async (req, res) => {
    const body = parse(LoginBody, req.body, 'body');
    res.json(await auth.login(em(), body.email, body.password));
  });

  router.get('/me', authenticate(auth), (req, res) => {
    res.json({ user: currentUser(req) });
  });

  // Links by e-mail: requests limited per address and per account, link use per address.
  const resetPerAccount = rateLimit({
    windowMs: 60 * 60_000,
    limit: 5,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `reset|${String(req.body?.email ?? '').toLowerCase()}`,
    handler: tooMany('Too many reset requests for this account; wait an hour and try again.'),
  });
  const linkPerAddress = rateLimit({
    windowMs: 15 * 60_000,
    limit: 100,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: tooMany('Too many attempts from this address; wait 15 minutes and try again.'),
  });

  router.post('/password-reset', linkPerAddress, resetPerAccount, async (req, res) => {
    const body = parse(ResetRequestBody, req.body, 'body');
    await accounts.requestReset(em(), body.email);
    res.status(202).json({ message: 'If this address belongs to an active account, a link to reset its password is on its way. The link expires in an hour.' });
  });

  router.post('/password-reset/confirm', linkPerAddress, async (req, res) => {
    const body = parse(ResetConfirmBody, req.body, 'body');
    const user = await accounts.confirmReset(em(), body.token, body.password);
    res.json(auth.session(user));
  });

  router.post('/invitation/accept', linkPerAddress, async (req, res) => {
    const body = parse(AcceptBody, req.body, 'body');
    const user = await accounts.acceptInvitation(em(), body.token, body.password, body.name);
    res.json(auth.session(user));
  });

  router.post('/password', authenticate(auth), async (req, res) => {
    const body = parse(ChangeBody, req.body, 'body');
    const user = await accounts.changePassword(em(), currentUser(req).id, body.currentPassword, body.password, verifyPassword);
    res.json(auth.session(user));
  });

  return router;
}
