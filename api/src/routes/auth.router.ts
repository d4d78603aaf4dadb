import { Router } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import { HttpError } from '../http-error.js';
import { authenticate, currentUser, em } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';

const LoginBody = z.object({
  email: z.email({ error: 'must be an e-mail address' }).max(254),
  password: z.string().min(1, { error: 'must not be empty' }).max(256),
});

function tooMany(message: string) {
  return () => {
    throw new HttpError(429, 'too_many_attempts', message);
  };
}

export function authRouter(auth: AuthService) {
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

  return router;
}
