import { Router } from 'express';
import { z } from 'zod';
import { ROLES } from '../domain/roles.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AccountService } from '../services/account.service.js';
import type { AuthService } from '../services/auth.service.js';
import { createUser, listUsers, updateUser } from '../services/user.service.js';

const Role = z.enum(ROLES, { error: `must be one of ${ROLES.join(', ')}` });
const Name = z.string().trim().min(1, { error: 'must not be empty' }).max(120);

const NewUserBody = z.object({
  email: z.email({ error: 'must be an e-mail address' }).max(254),
  name: Name,
  role: Role,
  password: z.string().max(256),
});

const UserChangeBody = z
  .object({ name: Name.optional(), role: Role.optional(), active: z.boolean().optional(), version: z.number().int().optional() })
  .strict()
  .refine((b) => b.name !== undefined || b.role !== undefined || b.active !== undefined, { error: 'give at least one of name, role, active' });

const InvitationBody = z.object({ email: z.email({ error: 'must be an e-mail address' }).max(254), name: Name, role: Role }).strict();

const IdParams = z.object({ id: z.coerce.number().int().positive({ error: 'must be a positive whole number' }) });

export function usersRouter(auth: AuthService, accounts: AccountService) {
  const router = Router();
  router.use(authenticate(auth), requireCapability('manageUsers'));

  router.get('/', async (_req, res) => {
    res.json({ items: await listUsers(em()) });
  });

  router.post('/', async (req, res) => {
    const body = parse(NewUserBody, req.body, 'body');
    res.status(201).json(await createUser(em(), currentUser(req).id, body));
  });

  router.post('/invitations', async (req, res) => {
    const body = parse(InvitationBody, req.body, 'body');
    res.status(201).json(await accounts.invite(em(), currentUser(req).id, body));
  });

  router.patch('/:id', async (req, res) => {
    const { id } = parse(IdParams, req.params, 'path');
    const body = parse(UserChangeBody, req.body, 'body');
    res.json(await updateUser(em(), currentUser(req).id, id, body));
  });

  return router;
}
