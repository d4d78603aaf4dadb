import { Router, type Request } from 'express';
import { stringify } from 'csv-stringify/sync';
import { z } from 'zod';
import { Molecule } from 'openchemlib';
import { SAR_PARAMETER_KEYS, type SarParameter } from '../domain/sar.js';
import { exportTable, sdfRecord } from '../domain/sar-export.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';
import { sarCellResults, sarTable, type SarQuery } from '../services/sar.service.js';
import { createView, deleteView, listViews, updateView } from '../services/saved-view.service.js';
import { HttpError } from '../http-error.js';
import { cachedRead } from '../middleware/read-cache.js';
import type { ReadCache } from '../services/read-cache.js';

/** "1,2,3" (query) or [1,2,3] (body) → positive integers. */
const IdList = (max: number) =>
  z.preprocess(
    (v) => (typeof v === 'string' ? (v.trim() ? v.split(',').map((s) => s.trim()) : []) : v),
    z.array(z.coerce.number().int({ error: 'must be whole numbers' }).positive({ error: 'must be positive ids' })).max(max, { error: `at most ${max}` }),
  );
/** Parameters, plus `call` for each receptor's ligand-type call. */
const CHOICES = [...SAR_PARAMETER_KEYS, 'call'] as const;
const ParameterList = z.preprocess(
  (v) => (typeof v === 'string' ? v.split(',').map((s) => s.trim()).filter(Boolean) : v),
  z.array(z.enum(CHOICES as unknown as [string, ...string[]], { error: `must be among ${CHOICES.join(', ')}` })).min(1, { error: 'choose at least one parameter' }).max(CHOICES.length),
);
const Bool = z.preprocess((v) => (v === 'true' || v === '1' ? true : v === 'false' || v === '0' ? false : v), z.boolean());

const SarParams = z.object({
  project: z.string().trim().min(1, { error: 'is required (a project id or code)' }).max(40),
  series: IdList(100).optional(),
  targets: IdList(60).optional(),
  parameters: ParameterList.default(['pKi', 'pEC50', 'alpha', 'call']),
  substructure: z.string().max(200_000).optional(),
  format: z.enum(['smiles', 'molfile', 'smarts']).optional(),
  text: z.string().max(200).optional(),
  status: z.enum(['approved', 'submitted'], { error: 'must be approved (approved results only) or submitted (approved and submitted)' }).default('approved'),
  selectivityBy: z.enum(['pKi', 'pEC50']).default('pKi'),
  window: z.coerce.number().min(0, { error: 'must be 0–6 log units' }).max(6, { error: 'must be 0–6 log units' }).optional(),
});
const ExportParams = SarParams.extend({
  /** Column ids in the grid's order (from the SAR response's column definitions); all when absent. */
  columns: z.preprocess((v) => (typeof v === 'string' ? v.split(',').map((s) => s.trim()).filter(Boolean) : v), z.array(z.string().max(60)).max(2000)).optional(),
  /** Compound ids in the grid's order after its own filters and sort; all rows when absent. */
  compounds: IdList(100_000).optional(),
});
const CellParams = z.object({
  compound: z.coerce.number().int().positive(),
  column: z.string().max(60),
  status: z.enum(['approved', 'submitted']).default('approved'),
});
const ViewState = z.object({
  seriesIds: z.array(z.number().int().positive()).max(100),
  targetIds: z.array(z.number().int().positive()).max(60),
  parameters: z.array(z.enum(CHOICES as unknown as [string, ...string[]])).min(1).max(CHOICES.length),
  substructure: z.string().max(200_000).nullable(),
  text: z.string().max(200).nullable(),
  includeSubmitted: z.boolean(),
  columnState: z.array(z.record(z.string(), z.unknown())).max(3000),
  filterModel: z.record(z.string(), z.unknown()),
}).strict();
const NewView = z.object({ projectId: z.number().int().positive(), name: z.string().trim().min(1, { error: 'must not be empty' }).max(120), shared: z.boolean().default(false), state: ViewState }).strict();
const ViewPatch = z.object({ version: z.number().int().positive({ error: 'is required (the version you loaded)' }), name: z.string().trim().min(1).max(120).optional(), shared: z.boolean().optional(), state: ViewState.optional() }).strict();
const ViewsQuery = z.object({ project: z.coerce.number().int().positive({ error: 'is required (a project id)' }) });
const Id = z.object({ id: z.coerce.number().int().positive() });

function toQuery(p: z.infer<typeof SarParams>): SarQuery {
  return {
    project: p.project,
    seriesIds: p.series,
    targetIds: p.targets,
    parameters: [...new Set(p.parameters)].filter((k): k is SarParameter => k !== 'call'),
    calls: p.parameters.includes('call'),
    substructure: p.substructure?.trim() ? { structure: p.substructure, format: p.format } : undefined,
    text: p.text,
    includeSubmitted: p.status === 'submitted',
    selectivityBy: p.selectivityBy,
    window: p.window,
    timeLimitMs: 10_000,
  };
}

/** The table and its flattened export, in the grid's column and row order when given. */
async function exported(req: Request) {
  const p = parse(ExportParams, req.method === 'GET' ? req.query : req.body, req.method === 'GET' ? 'query' : 'body');
  const table = await sarTable(em(), toQuery(p));
  const all = table.columns.flatMap((g) => g.children);
  const byId = new Map(all.map((c) => [c.id, c]));
  const unknown = (p.columns ?? []).filter((id) => !byId.has(id));
  if (unknown.length) throw HttpError.badRequest(`columns: unknown column ${unknown.slice(0, 5).join(', ')}`, [{ field: 'columns', message: `unknown: ${unknown.slice(0, 5).join(', ')}` }]);
  const columns = p.columns?.length ? p.columns.map((id) => byId.get(id)!) : all;
  let rows = table.rows;
  if (p.compounds) {
    const byRow = new Map(rows.map((r) => [r.id, r]));
    rows = p.compounds.map((id) => byRow.get(id)).filter((r) => r !== undefined);
  }
  const targets = new Map(table.targets.map((t) => [t.id, t.geneSymbol]));
  return { table, rows, ...exportTable(columns, rows, (id) => targets.get(id) ?? `target ${id}`) };
}

function fileName(code: string, ext: string) {
  return `${code.toLowerCase()}-sar-${new Date().toISOString().slice(0, 10)}.${ext}`;
}

export function sarRouter(auth: AuthService, readCache: ReadCache) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), cachedRead(readCache), async (req, res) => {
    res.json(await sarTable(em(), toQuery(parse(SarParams, req.query, 'query'))));
  });
  router.get('/cell', requireCapability('read'), async (req, res) => {
    const p = parse(CellParams, req.query, 'query');
    res.json(await sarCellResults(em(), p.compound, p.column, p.status === 'submitted'));
  });
  for (const method of ['get', 'post'] as const) {
    router[method]('/export.csv', requireCapability('export'), async (req, res) => {
      const { table, headers, records } = await exported(req);
      res.type('text/csv; charset=utf-8').attachment(fileName(table.project.code, 'csv'));
      res.send(stringify([headers, ...records]));
    });
    router[method]('/export.sdf', requireCapability('export'), async (req, res) => {
      const { table, rows, headers, records } = await exported(req);
      const parts = rows.map((r, i) => {
        const mol = Molecule.fromIDCode(r.idCode);
        mol.setName(r.registryNumber);
        return sdfRecord(mol.toMolfile(), headers, records[i]);
      });
      res.attachment(fileName(table.project.code, 'sdf')).set('Content-Type', 'chemical/x-mdl-sdfile; charset=utf-8');
      res.send(parts.join(''));
    });
  }
  router.get('/views', requireCapability('read'), async (req, res) => {
    const { project } = parse(ViewsQuery, req.query, 'query');
    res.json(await listViews(em(), currentUser(req).id, project));
  });
  router.post('/views', requireCapability('read'), async (req, res) => {
    res.status(201).json(await createView(em(), currentUser(req).id, parse(NewView, req.body, 'body')));
  });
  router.patch('/views/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await updateView(em(), currentUser(req).id, id, parse(ViewPatch, req.body, 'body')));
  });
  router.delete('/views/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    await deleteView(em(), currentUser(req).id, id);
    res.status(204).end();
  });
  return router;
}
