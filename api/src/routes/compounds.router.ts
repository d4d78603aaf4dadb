import { Router, type RequestHandler } from 'express';
import { AsyncResource } from 'node:async_hooks';
import multer from 'multer';
import { z } from 'zod';
import { depictIdCode } from '../domain/chem.js';
import { ImportJob } from '../entities/import-job.entity.js';
import { HttpError } from '../http-error.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import type { AuthService } from '../services/auth.service.js';
import { batchView, compoundDetail, findCompound, listCompounds, SORTABLE } from '../services/compound-query.service.js';
import { createImportJob, decodeUpload, describeFile, jobView, reportCsv, type ImportRunner } from '../services/import.service.js';
import { addBatch, previewStructure, registerCompound } from '../services/registry.service.js';
import { Batch } from '../entities/compound.entity.js';
import { searchCompounds } from '../services/compound-search.service.js';
import { cachedRead } from '../middleware/read-cache.js';
import type { ReadCache } from '../services/read-cache.js';

const Format = z.enum(['smiles', 'molfile'], { error: 'must be smiles or molfile' });
const Structure = z.string().min(1, { error: 'must not be empty' }).max(200_000, { error: 'is longer than 200,000 characters' });
const Text = (max: number) => z.string().trim().max(max);

const BatchBody = z.object({
  purity: z.number().min(0, { error: 'must be 0–100 %' }).max(100, { error: 'must be 0–100 %' }).nullable().optional(),
  amountMg: z.number().nonnegative({ error: 'must not be negative' }).nullable().optional(),
  source: Text(200).nullable().optional(),
  notebookRef: Text(100).nullable().optional(),
});

const RegisterBody = z.object({
  structure: Structure,
  format: Format.optional(),
  name: Text(200).nullable().optional(),
  aliases: z.array(Text(100)).max(50).optional(),
  seriesId: z.number().int().positive().nullable().optional(),
  batch: BatchBody.optional(),
  confirm: z.boolean().optional(),
});

const PreviewBody = z.object({ structure: Structure, format: Format.optional() });
const NewBatchBody = BatchBody.extend({ structure: Structure.optional(), format: Format.optional() });

const ListQuery = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  sort: z.enum(SORTABLE).default('registryNumber'),
  dir: z.enum(['asc', 'desc']).default('desc'),
  seriesId: z.coerce.number().int().positive().optional(),
  registrantId: z.coerce.number().int().positive().optional(),
  q: z.string().max(200).optional(),
});

const IdParam = z.object({ id: z.coerce.number().int().positive({ error: 'must be a positive whole number' }) });
const RefParam = z.object({ idOrRegistryNumber: z.string().regex(/^(\d+|[A-Za-z][A-Za-z0-9]{1,9}-\d{6,})$/, { error: 'must be an id or a registry number such as CPD-000001' }) });
const DepictQuery = z.object({
  w: z.coerce.number().int().min(40).max(1200).default(300),
  h: z.coerce.number().int().min(40).max(1200).default(220),
  /** Atom indices to highlight (a substructure match), comma-separated. */
  highlight: z.string().regex(/^\d{1,4}(,\d{1,4}){0,499}$/, { error: 'must be atom indices separated by commas' }).optional(),
});

const QueryFormat = z.enum(['smiles', 'molfile', 'smarts']);
const Range = z.object({ min: z.number().finite().optional(), max: z.number().finite().optional() }).strict().refine((r) => r.min === undefined || r.max === undefined || r.min <= r.max, { error: 'min must not exceed max' });
const DateText = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, { error: 'must be a date YYYY-MM-DD' });
const SearchBody = z
  .object({
    substructure: z
      .union([z.string(), z.object({ structure: z.string(), format: QueryFormat.optional() }).strict()])
      .transform((v) => (typeof v === 'string' ? { structure: v } : v))
      .refine((v) => v.structure.trim().length > 0, { error: 'is empty: draw or paste a structure' })
      .refine((v) => v.structure.length <= 100_000, { error: 'is too long (over 100,000 characters)' })
      .optional(),
    similarity: z
      .object({
        structure: z.string().trim().min(1, { error: 'is empty: draw or paste a structure' }).max(100_000),
        format: QueryFormat.optional(),
        threshold: z.number().min(0, { error: 'must be between 0 and 1' }).max(1, { error: 'must be between 0 and 1' }).default(0.7),
        limit: z.number().int().min(1).max(5000).default(100),
      })
      .strict()
      .optional(),
    text: z.string().max(200).optional(),
    filters: z
      .object({
        projectId: z.number().int().positive().optional(),
        seriesId: z.number().int().positive().optional(),
        registrantId: z.number().int().positive().optional(),
        registeredFrom: DateText.optional(),
        registeredTo: DateText.optional(),
        mw: Range.optional(),
        clogp: Range.optional(),
        tpsa: Range.optional(),
        heavyAtoms: Range.optional(),
        hbd: Range.optional(),
        hba: Range.optional(),
      })
      .strict()
      .optional(),
    page: z.number().int().min(1).default(1),
    pageSize: z.number().int().min(1).max(200).default(25),
    timeLimitMs: z.number().int().min(100).max(60_000).default(10_000),
    count: z.enum(['exact', 'first-page']).default('exact'),
  })
  .strict();

const ImportOptionsBody = z
  .object({
    structureColumn: z.string().max(200).optional(),
    nameColumn: z.string().max(200).optional(),
    aliasColumn: z.string().max(200).optional(),
    seriesColumn: z.string().max(200).optional(),
    purityColumn: z.string().max(200).optional(),
    amountColumn: z.string().max(200).optional(),
    sourceColumn: z.string().max(200).optional(),
    notebookColumn: z.string().max(200).optional(),
    seriesId: z.coerce.number().int().positive().optional(),
  })
  .strict();

export const IMPORT_TEMPLATE = 'smiles,name,alias,series,purity,amount_mg,source,notebook\nCC(C)NCC(O)COc1cccc2ccccc12,Example analogue,EX-1,,98.5,12.0,in-house,NB-0001-01\n';

function upload(maxBytes: number): RequestHandler {
  const handler = multer({ storage: multer.memoryStorage(), limits: { fileSize: maxBytes, files: 1, fields: 20 } }).single('file');
  return (req, res, next) => {
    // busboy's stream events lose the async context: bind the callback so the request's
    // EntityManager (RequestContext) is still there after the upload.
    handler(req, res, AsyncResource.bind((err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new HttpError(413, 'too_large', `The file is larger than the limit of ${Math.round(maxBytes / 1024 / 1024)} MB; split it into smaller files.`));
        return next(HttpError.badRequest(`file: ${err.message}`));
      }
      next(err);
    }));
  };
}

function importOptions(raw: unknown) {
  let value = raw;
  if (typeof raw === 'string') {
    try {
      value = JSON.parse(raw);
    } catch {
      throw HttpError.badRequest('options: must be a JSON object (the column mapping).');
    }
  }
  return parse(ImportOptionsBody, value ?? {}, 'body');
}

export function compoundsRouter(auth: AuthService, deps: { prefix: string; importMaxBytes: number; imports: ImportRunner; readCache: ReadCache }) {
  const router = Router();
  router.use(authenticate(auth));

  router.get('/', requireCapability('read'), async (req, res) => {
    res.json(await listCompounds(em(), parse(ListQuery, req.query, 'query')));
  });

  router.post('/', requireCapability('register'), async (req, res) => {
    const body = parse(RegisterBody, req.body, 'body');
    const { compoundId, warnings } = await registerCompound(em(), currentUser(req).id, deps.prefix, body);
    res.status(201).json({ ...(await compoundDetail(em(), String(compoundId))), warnings });
  });

  router.post('/search', requireCapability('read'), cachedRead(deps.readCache), async (req, res) => {
    res.json(await searchCompounds(em(), parse(SearchBody, req.body, 'body')));
  });
  router.post('/preview', requireCapability('read'), async (req, res) => {
    const body = parse(PreviewBody, req.body, 'body');
    res.json(await previewStructure(em(), body.structure, body.format));
  });

  router.get('/import/template.csv', requireCapability('read'), (_req, res) => {
    res.type('text/csv').attachment('ligandry-compound-import-template.csv').send(IMPORT_TEMPLATE);
  });

  router.post('/import/inspect', requireCapability('register'), upload(deps.importMaxBytes), async (req, res) => {
    if (!req.file) throw HttpError.badRequest('file: attach the SDF or CSV file as the "file" field.');
    res.json(describeFile(decodeUpload(req.file.buffer)));
  });

  router.post('/import', requireCapability('register'), upload(deps.importMaxBytes), async (req, res) => {
    if (!req.file) throw HttpError.badRequest('file: attach the SDF or CSV file as the "file" field.');
    const options = importOptions(req.body?.options);
    const job = await createImportJob(em(), currentUser(req).id, req.file.originalname || 'upload', decodeUpload(req.file.buffer), options);
    void deps.imports.enqueue(job.id);
    res.status(202).location(`/api/compounds/import/${job.id}`).json(jobView(job));
  });

  router.get('/import/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(IdParam, req.params, 'path');
    const job = await em().findOne(ImportJob, { id }, { populate: ['report'] });
    if (!job) throw HttpError.notFound(`No import job ${id}.`);
    res.json({ ...jobView(job), report: job.status === 'done' || job.status === 'failed' ? job.report : undefined });
  });

  router.get('/import/:id/report.csv', requireCapability('read'), async (req, res) => {
    const { id } = parse(IdParam, req.params, 'path');
    const job = await em().findOne(ImportJob, { id }, { populate: ['report'] });
    if (!job) throw HttpError.notFound(`No import job ${id}.`);
    res.type('text/csv').attachment(`import-${id}-report.csv`).send(reportCsv(job));
  });

  router.get('/:idOrRegistryNumber', requireCapability('read'), cachedRead(deps.readCache), async (req, res) => {
    const { idOrRegistryNumber } = parse(RefParam, req.params, 'path');
    res.json(await compoundDetail(em(), idOrRegistryNumber));
  });

  router.get('/:id/depiction.svg', requireCapability('read'), async (req, res) => {
    const { id } = parse(IdParam, req.params, 'path');
    const { w, h, highlight } = parse(DepictQuery, req.query, 'query');
    const compound = await findCompound(em(), String(id));
    res.type('image/svg+xml').set('Cache-Control', 'private, max-age=3600').send(depictIdCode(compound.idCode, w, h, highlight ? highlight.split(',').map(Number) : []));
  });

  router.get('/:id/batches', requireCapability('read'), async (req, res) => {
    const { id } = parse(IdParam, req.params, 'path');
    const compound = await findCompound(em(), String(id));
    const batches = await em().find(Batch, { compound }, { populate: ['registrant'], orderBy: { sequence: 'asc' } });
    res.json({ items: batches.map(batchView) });
  });

  router.post('/:id/batches', requireCapability('register'), async (req, res) => {
    const { id } = parse(IdParam, req.params, 'path');
    const body = parse(NewBatchBody, req.body, 'body');
    const batch = await addBatch(em(), currentUser(req).id, id, body);
    const loaded = await em().findOneOrFail(Batch, { id: batch.id }, { populate: ['registrant'] });
    res.status(201).json(batchView(loaded));
  });

  return router;
}
