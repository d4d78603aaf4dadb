// Targets, assays, runs (raw-data upload and fits), results and review, and the development mailbox.
import { AsyncResource } from 'node:async_hooks';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { ASSAY_KINDS, RESULT_STATUSES, TARGET_FAMILIES } from '../entities/assay.entity.js';
import { LONG_TEMPLATE_CSV, PLATE_MAP_TEMPLATE_CSV, PLATE_MATRIX_TEMPLATE_CSV } from '../domain/raw-data.js';
import { ALLOSTERIC_TEMPLATE_CSV, SCHILD_TEMPLATE_CSV } from '../domain/run-conditions.js';
import { HttpError } from '../http-error.js';
import { authenticate, currentUser, em, requireCapability } from '../middleware/auth.js';
import { parse } from '../middleware/validate.js';
import { assayView, createAssay, createTarget, getAssay, listAssays, listTargets, updateAssay, updateTarget } from '../services/assay.service.js';
import type { AuthService } from '../services/auth.service.js';
import type { Mailer } from '../services/mail.service.js';
import { CAUTION, createManualResult, getResult, listResults, resultView, reviewResult, submitResults } from '../services/result.service.js';
import { createRun, draftResultIds, getRun, getRunFile, listRuns, measurementView, refitResult } from '../services/run.service.js';
import { assayThresholds, setAssayThresholds, THRESHOLDS_NOTE } from '../services/call.service.js';
import { runAnalysisView } from '../services/mechanism.service.js';

const Id = z.object({ id: z.coerce.number().int().positive() });
const text = (max: number) => z.string().trim().min(1).max(max);
const optionalText = (max: number) => z.string().trim().max(max).nullable().optional();
const molar = z.number().positive().max(1).nullable().optional();

const TargetBody = z.object({ name: text(120), geneSymbol: text(30), family: z.enum(TARGET_FAMILIES), species: text(60), description: optionalText(4000) }).strict();
const TargetPatch = TargetBody.partial().extend({ version: z.number().int().optional(), retired: z.boolean().optional() }).strict();

const AssayBody = z
  .object({
    code: z.string().trim().regex(/^[A-Za-z0-9-]{1,30}$/, { error: 'must be 1–30 letters, digits or hyphens' }),
    name: text(160),
    targetId: z.number().int().positive(),
    kind: z.enum(ASSAY_KINDS),
    readout: text(80),
    species: text(60),
    cellSystem: optionalText(160),
    constitutiveActivity: z.boolean().optional(),
    radioligand: optionalText(120),
    radioligandConcM: molar,
    radioligandKdM: molar,
    referenceCompound: optionalText(40),
    agonistConcM: molar,
    agonistEc50M: molar,
    agonistHill: z.number().min(0.1).max(10).nullable().optional(),
    description: optionalText(4000),
  })
  .strict();
const AssayPatch = AssayBody.omit({ code: true }).partial().extend({ version: z.number().int().optional(), retired: z.boolean().optional() }).strict();
const AssayQuery = z.object({ targetId: z.coerce.number().int().positive().optional() });

const RunFields = z.object({
  runDate: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, { error: 'must be a date YYYY-MM-DD' }).refine((d) => !Number.isNaN(Date.parse(d)), { error: 'is not a real date' }),
  notes: z.string().max(4000).optional(),
  dropBadRows: z.enum(['true', 'false', '1', '0']).optional(),
});

const Fixed = z.object({ top: z.number().finite().optional(), bottom: z.number().finite().optional(), hillSlope: z.number().min(-10).max(10).refine((v) => v !== 0, { error: 'cannot be 0' }).optional() }).strict();
const Refit = z.object({ exclude: z.array(z.number().int().positive()).max(5000).optional(), include: z.array(z.number().int().positive()).max(5000).optional(), fixed: Fixed.optional(), version: z.number().int().optional() }).strict();

const ResultQuery = z.object({
  status: z.enum(RESULT_STATUSES).optional(),
  assayId: z.coerce.number().int().positive().optional(),
  runId: z.coerce.number().int().positive().optional(),
  compound: z.string().trim().max(40).optional(),
  points: z.enum(['true', 'false']).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
const ManualValue = z.object({ value: z.number().finite(), qualifier: z.enum(['=', '<', '>']).default('='), sd: z.number().min(0).nullable().optional(), n: z.number().int().min(1).max(1000).nullable().optional() }).strict();
const pValue = ManualValue.refine((v) => v.value >= 2 && v.value <= 14, { error: 'a p-value must lie between 2 and 14 (−log10 of a molar value)' });
const ManualBody = z
  .object({
    assayId: z.number().int().positive(),
    sample: text(40),
    values: z.object({ pKi: pValue.optional(), pIC50: pValue.optional(), pEC50: pValue.optional(), pKB: pValue.optional(), emax: ManualValue.refine((v) => v.value >= -200 && v.value <= 300, { error: 'Emax must lie between −200 and 300 %' }).optional(), alpha: ManualValue.refine((v) => v.value >= -2 && v.value <= 3, { error: 'α must lie between −2 and 3' }).optional(), hillSlope: ManualValue.optional() }).strict(),
    note: text(2000),
  })
  .strict();
// Call thresholds (domain/ligand-call.ts CallThresholds; defaults are common practice).
const CallThresholdsBody = z
  .object({
    thresholds: z
      .object({
        fullAgonistAlpha: z.number().gt(0).max(2).optional(),
        partialAgonistAlpha: z.number().min(0).lt(2).optional(),
        basalChange: z.number().gt(0).max(100).optional(),
        activityFloor: z.number().min(2).max(14).optional(),
        pamFoldShift: z.number().gt(1).max(1000).optional(),
        namFoldShift: z.number().gt(0).lt(1).optional(),
        emaxChange: z.number().gt(0).max(1).optional(),
        allostericAgonistAlpha: z.number().gt(0).max(2).optional(),
      })
      .strict()
      .nullable(),
    version: z.number().int().optional(),
  })
  .strict();
const Review = z.object({ comment: z.string().max(4000).optional(), version: z.number().int().optional() }).strict();
const SubmitMany = z.object({ ids: z.array(z.number().int().positive()).min(1).max(1000) }).strict();

const TEMPLATES: Record<string, string> = {
  'raw-data-long.csv': LONG_TEMPLATE_CSV,
  'plate-matrix-96.csv': PLATE_MATRIX_TEMPLATE_CSV,
  'plate-map-96.csv': PLATE_MAP_TEMPLATE_CSV,
  'schild-long.csv': SCHILD_TEMPLATE_CSV,
  'allosteric-long.csv': ALLOSTERIC_TEMPLATE_CSV,
};

const MAX_RAW_BYTES = 20 * 1024 * 1024;

function rawUpload(): RequestHandler {
  const handler = multer({ storage: multer.memoryStorage(), limits: { fileSize: MAX_RAW_BYTES, files: 3, fields: 10 } }).fields([
    { name: 'file', maxCount: 1 },
    { name: 'matrix', maxCount: 1 },
    { name: 'map', maxCount: 1 },
  ]);
  return (req, res, next) => {
    handler(req, res, AsyncResource.bind((err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new HttpError(413, 'too_large', `A raw-data file is larger than ${MAX_RAW_BYTES / 1024 / 1024} MB.`));
        return next(HttpError.badRequest(`${err.field ?? 'file'}: ${err.message} (expected fields: file, or matrix and map)`));
      }
      next(err);
    }));
  };
}

export function targetsRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (_req, res) => {
    res.json({ items: await listTargets(em()) });
  });
  router.post('/', requireCapability('manageTargets'), async (req, res) => {
    res.status(201).json(await createTarget(em(), currentUser(req).id, parse(TargetBody, req.body, 'body')));
  });
  router.patch('/:id', requireCapability('manageTargets'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await updateTarget(em(), currentUser(req).id, id, parse(TargetPatch, req.body, 'body')));
  });
  return router;
}

export function assaysRouter(auth: AuthService) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    const q = parse(AssayQuery, req.query, 'query');
    res.json({ items: await listAssays(em(), q.targetId) });
  });
  router.get('/templates/:name', requireCapability('read'), (req, res) => {
    const body = TEMPLATES[String(req.params.name)];
    if (!body) throw HttpError.notFound(`No template ${req.params.name}; there are ${Object.keys(TEMPLATES).join(', ')}.`);
    res.type('text/csv').attachment(String(req.params.name)).send(body);
  });
  router.post('/', requireCapability('enterResults'), async (req, res) => {
    res.status(201).json(await createAssay(em(), currentUser(req).id, parse(AssayBody, req.body, 'body')));
  });
  router.get('/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json({ ...assayView(await getAssay(em(), id)), runs: await listRuns(em(), id) });
  });
  router.patch('/:id', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(await updateAssay(em(), currentUser(req).id, id, parse(AssayPatch, req.body, 'body')));
  });
  router.get('/:id/call-thresholds', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json({ ...assayThresholds(await getAssay(em(), id)), note: THRESHOLDS_NOTE });
  });
  router.put('/:id/call-thresholds', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const body = parse(CallThresholdsBody, req.body, 'body');
    res.json(await setAssayThresholds(em(), currentUser(req).id, id, body.thresholds, body.version));
  });
  router.post('/:id/runs', requireCapability('enterResults'), rawUpload(), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const fields = parse(RunFields, req.body, 'body');
    const files = (req.files ?? {}) as Record<string, Express.Multer.File[]>;
    const created = await createRun(em(), currentUser(req).id, id, {
      runDate: fields.runDate,
      notes: fields.notes || null,
      dropBadRows: fields.dropBadRows === 'true' || fields.dropBadRows === '1',
      files: { long: files.file?.[0], matrix: files.matrix?.[0], map: files.map?.[0] },
    });
    res.status(201).json(created);
  });
  return router;
}

export function runsRouter(auth: AuthService, mailer: Mailer) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const { run, files, measurements, results } = await getRun(em(), id);
    res.json({
      id: run.id,
      runDate: run.runDate,
      format: run.format,
      notes: run.notes ?? null,
      operator: { id: run.operator.id, name: run.operator.name },
      assay: assayView(run.assay),
      normalisation: run.normalisation,
      droppedRows: run.droppedRows ?? [],
      files: files.map((f) => ({ id: f.id, role: f.role, fileName: f.fileName, size: f.size })),
      measurements: measurements.map(measurementView),
      results: results.map(resultView),
      caution: CAUTION,
    });
  });
  for (const kind of ['schild', 'allosteric'] as const) {
    router.get(`/:id/${kind}`, requireCapability('read'), async (req, res) => {
      const { id } = parse(Id, req.params, 'path');
      const view = await runAnalysisView(em(), id, kind);
      if (!view) throw HttpError.notFound(`No run with id ${id}.`);
      res.json({ ...view, caution: CAUTION });
    });
  }
  router.get('/:id/files/:fileId', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const fileId = parse(z.object({ fileId: z.coerce.number().int().positive() }), req.params, 'path').fileId;
    const file = await getRunFile(em(), id, fileId);
    // Always served as CSV text and as a download, whatever type the uploader's browser claimed.
    res.type('text/csv').set('X-Content-Type-Options', 'nosniff').attachment(file.fileName).send(file.content);
  });
  router.post('/:id/submit', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    const drafts = await draftResultIds(em(), id);
    if (!drafts.length) throw HttpError.conflict('nothing_to_submit', `Run ${id} has no draft results to submit.`);
    res.json({ submitted: await submitResults(em(), mailer, currentUser(req).id, drafts) });
  });
  return router;
}

export function resultsRouter(auth: AuthService, mailer: Mailer) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('read'), async (req, res) => {
    const q = parse(ResultQuery, req.query, 'query');
    res.json(await listResults(em(), q, q.points === 'true'));
  });
  router.post('/', requireCapability('enterResults'), async (req, res) => {
    const id = await createManualResult(em(), currentUser(req).id, parse(ManualBody, req.body, 'body'));
    res.status(201).json(resultView(await getResult(em().fork(), id)));
  });
  router.post('/submit', requireCapability('enterResults'), async (req, res) => {
    const { ids } = parse(SubmitMany, req.body, 'body');
    res.json({ submitted: await submitResults(em(), mailer, currentUser(req).id, ids) });
  });
  router.get('/:id', requireCapability('read'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    res.json(resultView(await getResult(em(), id)));
  });
  router.patch('/:id', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    await refitResult(em(), currentUser(req).id, id, parse(Refit, req.body, 'body'));
    res.json(resultView(await getResult(em().fork(), id)));
  });
  router.post('/:id/submit', requireCapability('enterResults'), async (req, res) => {
    const { id } = parse(Id, req.params, 'path');
    await submitResults(em(), mailer, currentUser(req).id, [id]);
    res.json(resultView(await getResult(em().fork(), id)));
  });
  for (const [path, decision] of [['approve', 'approved'], ['reject', 'rejected']] as const) {
    router.post(`/:id/${path}`, requireCapability('review'), async (req, res) => {
      const { id } = parse(Id, req.params, 'path');
      const body = parse(Review, req.body, 'body');
      await reviewResult(em(), mailer, currentUser(req).id, id, decision, body.comment, body.version);
      res.json(resultView(await getResult(em().fork(), id)));
    });
  }
  return router;
}

/** The fake SMTP server's mailbox, for admins, never in production. */
export function mailRouter(auth: AuthService, mailer: Mailer, production: boolean) {
  const router = Router();
  router.use(authenticate(auth));
  router.get('/', requireCapability('manageUsers'), (_req, res) => {
    if (production || !mailer.isFake) throw HttpError.notFound('The development mailbox exists only with the local fake SMTP server (not in production).');
    res.json({ items: mailer.messages().map(({ raw: _raw, ...m }) => m) });
  });
  return router;
}
