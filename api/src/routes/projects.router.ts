import { Router } from 'express';
import { z } from 'zod';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';
import { projectPanel, setProjectPanel } from '../services/assay.service.js';
import { updateProjectSettings } from '../services/selectivity.service.js';
import { createProject, createSeries, listProjects, listSeries, updateSeries } from '../services/project.service.js';

const Code = z.string().trim().regex(/^[A-Za-z0-9-]{1,20}$/, { error: 'must be 1–20 letters, digits or hyphens' });
const NewProject = z.object({ code: Code, name: z.string().trim().min(1).max(120), description: z.string().max(4000).optional() });
const NewSeries = z.object({ projectId: z.number().int().positive(), code: Code, name: z.string().trim().min(1).max(120), description: z.string().max(4000).optional(), core: z.string().max(200_000).optional() });
const Id = z.object({ id: z.coerce.number().int().positive() });
const Panel = z.object({ targets: z.array(z.object({ targetId: z.number().int().positive(), role: z.enum(['primary', 'anti-target']), agonismUnwanted: z.boolean().optional() }).strict()).max(100) }).strict();
const Settings = z
  .object({
    selectivityWindow: z.number().min(0, { error: 'must be 0–6 log units' }).max(6, { error: 'must be 0–6 log units' }).optional(),
    ranking: z
      .object({
        potency: z.number().min(-10).max(10).optional(),
        margin: z.number().min(-10).max(10).optional(),
        lipe: z.number().min(-10).max(10).optional(),
        requiredCalls: z.array(z.string().max(40)).max(10).optional(),
      })
      .strict()
      .optional(),
  })
  .strict();
const SeriesPatch = z
  .object({ name: z.string().trim().min(1).max(120).optional(), description: z.string().max(4000).nullable().optional(), core: z.string().max(200_000).nullable().optional() })
  .strict();
const SeriesQuery = z.object({ projectId: z.coerce.number().int().positive().optional() });

export function projectsRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (_req, res) => {
    res.json({ items: await listProjects(em()) });
  });
  router.post('/', requireCapability('manageProjects'), async (req, res) => {
    const body = parse(NewProject, req.body, 'body');
    res.status(201).json(await createProject(em(), currentUser(req).id, body));
  });
  router.get('/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await projectPanel(em(), id));
  });
  router.patch('/:id/settings', requireCapability('decide'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await updateProjectSettings(em(), currentUser(req).id, id, parse(Settings, req.body, 'body')));
  });
  router.put('/:id/targets', requireCapability('manageTargets'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const body = parse(Panel, req.body, 'body');
    res.json(await setProjectPanel(em(), currentUser(req).id, id, body.targets));
  });
  return router;
}

export function seriesRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    const query = parse(SeriesQuery, req.query, 'query');
    res.json({ items: await listSeries(em(), query.projectId) });
  });
  router.post('/', requireCapability('register'), async (req, res) => {
    const body = parse(NewSeries, req.body, 'body');
    res.status(201).json(await createSeries(em(), currentUser(req).id, body));
  });
  router.patch('/:id', requireCapability('register'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await updateSeries(em(), currentUser(req).id, id, parse(SeriesPatch, req.body, 'body')));
  });
  return router;
}
