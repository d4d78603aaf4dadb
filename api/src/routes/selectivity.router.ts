import { Router } from 'express';
import { stringify } from 'csv-stringify/sync';
import { z } from 'zod';
import { exportTable } from '../domain/sar-export.js';
import { DECISIONS } from '../entities/decision.entity.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';
import type { Mailer } from '../services/mail.service.js';
import { compareCompounds, comparisonTable, listDecisions, matrixCsv, projectOverview, recordDecision, selectivityMatrix } from '../services/selectivity.service.js';
import { cachedRead } from '../middleware/read-cache.js';
import type { ReadCache } from '../services/read-cache.js';

const IdList = (max: number) =>
  z.preprocess(
    (v) => (typeof v === 'string' ? (v.trim() ? v.split(',').map((s) => s.trim()) : []) : v),
    z.array(z.coerce.number().int({ error: 'must be whole numbers' }).positive({ error: 'must be positive ids' })).max(max, { error: `at most ${max}` }),
  );
const Project = z.string().trim().min(1, { error: 'is required (a project id or code)' }).max(40);
const MatrixQuery = z.object({ project: Project, compounds: IdList(5000).optional(), series: IdList(100).optional(), view: z.coerce.number().int().positive().optional() });
const CompareQuery = z.object({ project: Project, compounds: IdList(6) });
const DecisionQuery = z.object({
  project: z.coerce.number().int().positive().optional(),
  compound: z.coerce.number().int().positive().optional(),
  flagged: z.enum(['true', 'false']).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});
const NewDecision = z
  .object({
    projectId: z.number().int().positive(),
    compoundId: z.number().int().positive(),
    decision: z.enum(DECISIONS, { error: `must be one of ${DECISIONS.join(', ')}` }),
    rationale: z.string().trim().min(10, { error: 'is required: at least 10 characters saying why' }).max(4000),
  })
  .strict();
const OverviewQuery = z.object({ project: Project });

function csv(res: import('express').Response, name: string, rows: unknown[][]) {
  res.type('text/csv; charset=utf-8').attachment(`${name}-${new Date().toISOString().slice(0, 10)}.csv`);
  res.send(stringify(rows as never));
}

export function selectivityRouter(auth: AuthService, readCache: ReadCache) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), cachedRead(readCache), async (req, res) => {
    const q = parse(MatrixQuery, req.query, 'query');
    res.json(await selectivityMatrix(em(), { project: q.project, compoundIds: q.compounds, seriesIds: q.series, viewId: q.view, userId: currentUser(req).id }));
  });
  router.get('/export.csv', requireCapability('export'), async (req, res) => {
    const q = parse(MatrixQuery, req.query, 'query');
    const m = await selectivityMatrix(em(), { project: q.project, compoundIds: q.compounds, seriesIds: q.series, viewId: q.view, userId: currentUser(req).id });
    csv(res, `${m.project.code.toLowerCase()}-selectivity`, matrixCsv(m));
  });
  router.get('/compare', requireCapability('read'), cachedRead(readCache), async (req, res) => {
    const q = parse(CompareQuery, req.query, 'query');
    res.json(await compareCompounds(em(), { project: q.project, compoundIds: q.compounds, userId: currentUser(req).id }));
  });
  router.get('/compare/export.csv', requireCapability('export'), async (req, res) => {
    const q = parse(CompareQuery, req.query, 'query');
    // The same pivot and checks (2–6 compounds of the project) as the page, flattened.
    const { table, rows } = await comparisonTable(em(), { project: q.project, compoundIds: q.compounds, userId: currentUser(req).id });
    const labels = new Map(table.targets.map((t) => [t.id, t.geneSymbol]));
    const flat = exportTable(table.columns.flatMap((g) => g.children), rows, (id) => labels.get(id) ?? `target ${id}`);
    csv(res, `${table.project.code.toLowerCase()}-comparison`, [flat.headers, ...flat.records]);
  });
  return router;
}

export function decisionsRouter(auth: AuthService, mailer: Mailer) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    const q = parse(DecisionQuery, req.query, 'query');
    res.json(await listDecisions(em(), { projectId: q.project, compoundId: q.compound, flagged: q.flagged === 'true', limit: q.limit }));
  });
  router.post('/', requireCapability('decide'), async (req, res) => {
    const body = parse(NewDecision, req.body, 'body');
    res.status(201).json(await recordDecision(em(), mailer, currentUser(req).id, body));
  });
  return router;
}

export function overviewRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    const q = parse(OverviewQuery, req.query, 'query');
    res.json(await projectOverview(em(), q.project, currentUser(req).id));
  });
  return router;
}
