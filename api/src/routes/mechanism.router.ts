// Mechanism: ligand-type calls (with overrides), bias factors and the what-if simulation.
import { Router } from 'express';
import { z } from 'zod';
import { LIGAND_CALLS } from '../domain/ligand-call.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';
import { callView, clearOverride, getCall, listCalls, overrideCall, recomputeFor } from '../services/call.service.js';
import { biasFor, whatIf } from '../services/operational.service.js';

const Id = z.object({ id: z.coerce.number().int().positive() });
const compoundKey = z.string().trim().min(1).max(40);
const idList = (what: string) =>
  z
    .string()
    .trim()
    .regex(/^\d+(,\d+)*$/, { error: `must be a comma-separated list of ${what}` })
    .transform((s) => s.split(',').map(Number));

const CallQuery = z.object({
  compound: compoundKey.optional(),
  target: z.coerce.number().int().positive().optional(),
  project: z.coerce.number().int().positive().optional(),
  contradicted: z.enum(['true', 'false']).transform((v) => v === 'true').optional(),
  source: z.enum(['rule', 'manual']).optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
  offset: z.coerce.number().int().min(0).default(0),
});
const Recompute = z
  .object({ compound: z.union([compoundKey, z.number().int().positive().transform(String)]).optional(), project: z.number().int().positive().optional() })
  .strict()
  .refine((b) => (b.compound === undefined) !== (b.project === undefined), { error: 'give either compound or project', path: ['compound'] });
const Override = z.object({ call: z.enum(LIGAND_CALLS), reason: z.string().trim().min(3, { error: 'is required: say why the computed call is overridden (at least 3 characters)' }).max(2000), version: z.number().int().optional() }).strict();
const Clear = z.object({ reason: z.string().trim().max(2000).optional() }).strict();

const BiasQuery = z.object({
  compound: compoundKey,
  target: z.coerce.number().int().positive(),
  assays: idList('assay ids').refine((ids) => ids.length === 2 && ids[0] !== ids[1], { error: 'must name two different assays' }).optional(),
});
const WhatIfQuery = z.object({
  compound: compoundKey,
  assay: z.coerce.number().int().positive(),
  agonist: compoundKey.optional(),
  concentrations: z
    .string()
    .trim()
    .transform((s) => s.split(',').map((x) => Number(x.trim())))
    .refine((xs) => xs.length >= 1 && xs.length <= 12 && xs.every((x) => Number.isFinite(x) && x >= 0 && x <= 1), { error: 'must be 1 to 12 comma-separated molar concentrations between 0 and 1 M' })
    .optional(),
});

export function callsRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    res.json(await listCalls(em(), parse(CallQuery, req.query, 'query')));
  });
  router.post('/recompute', requireCapability('enterResults'), async (req, res) => {
    const body = parse(Recompute, req.body, 'body');
    res.json(await recomputeFor(em(), currentUser(req).id, body));
  });
  router.get('/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(callView(await getCall(em(), id)));
  });
  router.post('/:id/override', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    await overrideCall(em(), currentUser(req).id, id, parse(Override, req.body, 'body'));
    res.json(callView(await getCall(em().fork(), id)));
  });
  router.post('/:id/clear-override', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    await clearOverride(em(), currentUser(req).id, id, parse(Clear, req.body, 'body').reason);
    res.json(callView(await getCall(em().fork(), id)));
  });
  return router;
}

export function biasRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    res.json(await biasFor(em(), parse(BiasQuery, req.query, 'query')));
  });
  return router;
}

export function whatIfRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    res.json(await whatIf(em(), parse(WhatIfQuery, req.query, 'query')));
  });
  return router;
}
