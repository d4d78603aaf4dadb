// Runs: raw-data upload → validation → sample resolution → normalisation → one 4PL fit per
// batch (× condition) → draft results, all in one transaction; refits after a point is excluded
// or a parameter fixed.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Measurement, Result, Run, RunFile, type IAssay, type IMeasurement, type IResult, type IRun, type ResultValues } from '../entities/assay.entity.js';
import { Batch, Compound, type IBatch } from '../entities/compound.entity.js';
import { fitFourPL, type CurvePoint, type FixedParams, type FourPlFit } from '../domain/curve-fit.js';
import { chooseNormalisation, mean, normalise, NormalisationError, type Normalisation } from '../domain/pharmacology.js';
import { parseLongCsv, parsePlate, type RawDataIssue, type RawPoint } from '../domain/raw-data.js';
import { alphaValue, deriveResultValues, describeConstraints, highConcentrationAsymptote, lowConcentrationAsymptote, plateauConstraints } from '../domain/result-values.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';
import { getOpenAssay } from './assay.service.js';
import { analyseRunMechanisms, analysisMeasurements, checkLigandConditions, mechanismCurveKeys } from './mechanism.service.js';

export interface UploadedFile {
  originalname: string;
  mimetype: string;
  buffer: Buffer;
}

export interface RunInput {
  runDate: string;
  notes?: string | null;
  dropBadRows: boolean;
  files: { long?: UploadedFile; matrix?: UploadedFile; map?: UploadedFile };
}

/** Text of an uploaded CSV, judged by its content (not its name): no NUL bytes, valid UTF-8. */
function textOf(file: UploadedFile, what: string): string {
  const buf = file.buffer;
  if (buf.length === 0) throw HttpError.badRequest(`${what}: the file is empty`, [{ field: 'file', message: `${what} is empty` }]);
  if (buf.includes(0)) throw HttpError.badRequest(`${what}: "${file.originalname}" is not a text (CSV) file`, [{ field: 'file', message: 'binary content; expected CSV text' }]);
  const text = new TextDecoder('utf-8', { fatal: false }).decode(buf);
  if (text.includes('\uFFFD')) throw HttpError.badRequest(`${what}: "${file.originalname}" is not UTF-8 text; save the CSV as UTF-8`, [{ field: 'file', message: 'not UTF-8' }]);
  return text;
}

interface ResolvedPoint extends RawPoint {
  batch: IBatch | null;
}

function issueDetails(issues: RawDataIssue[]) {
  return issues.map((i) => ({ field: i.where, message: i.message }));
}

/** Batch numbers and registry numbers (a compound with one batch) → batches; unknown ones become issues. */
async function resolveSamples(em: EntityManager, points: RawPoint[]): Promise<{ resolved: ResolvedPoint[]; issues: RawDataIssue[]; badLines: number[] }> {
  const names = [...new Set(points.filter((p) => p.sample).map((p) => p.sample!.toUpperCase()))];
  const batches = names.length ? await em.find(Batch, { batchNumber: { $in: names } }, { populate: ['compound'] }) : [];
  const byBatch = new Map(batches.map((b) => [b.batchNumber.toUpperCase(), b]));
  const rest = names.filter((n) => !byBatch.has(n));
  const compounds = rest.length ? await em.find(Compound, { registryNumber: { $in: rest } }) : [];
  const compoundBatches = compounds.length ? await em.find(Batch, { compound: { $in: compounds } }, { populate: ['compound'], orderBy: { sequence: 'asc' } }) : [];
  const byCompound = new Map<string, IBatch[]>();
  for (const b of compoundBatches) {
    const key = b.compound.registryNumber.toUpperCase();
    byCompound.set(key, [...(byCompound.get(key) ?? []), b]);
  }
  const issues: RawDataIssue[] = [];
  const badLines: number[] = [];
  const resolved: ResolvedPoint[] = [];
  for (const p of points) {
    if (!p.sample) {
      resolved.push({ ...p, batch: null });
      continue;
    }
    const key = p.sample.toUpperCase();
    let batch = byBatch.get(key) ?? null;
    let problem: string | null = null;
    if (!batch) {
      const list = byCompound.get(key);
      if (!list) problem = `unknown sample "${p.sample}": not a batch number (CPD-000001-01) or registry number in the registry`;
      else if (list.length > 1) problem = `sample "${p.sample}" has ${list.length} batches (${list.map((b) => b.batchNumber).join(', ')}): name the batch`;
      else batch = list[0];
    }
    if (problem) {
      const where = p.line !== null ? `row ${p.line}, column sample` : p.well ? `well ${p.well}` : 'file';
      issues.push({ where: p.well && p.line !== null ? `${where} (well ${p.well})` : where, message: problem });
      if (p.line !== null) badLines.push(p.line);
      continue;
    }
    resolved.push({ ...p, batch });
  }
  return { resolved, issues, badLines };
}

interface Curve {
  batch: IBatch;
  condition: string | null;
  points: IMeasurement[];
}

function curvePoints(points: IMeasurement[]): CurvePoint[] {
  return points
    .filter((m) => m.concentrationM !== null && m.concentrationM! > 0 && m.normalised !== null)
    .map((m) => ({ logConc: Math.log10(m.concentrationM!), response: m.normalised!, excluded: m.excluded }));
}

function fitSummary(fit: FourPlFit, fixed: FixedParams) {
  return { ...fit, fixed } as unknown as Record<string, unknown>;
}

function constants(assay: IAssay) {
  return {
    radioligandConcM: assay.radioligandConcM ?? null,
    radioligandKdM: assay.radioligandKdM ?? null,
    agonistConcM: assay.agonistConcM ?? null,
    agonistEc50M: assay.agonistEc50M ?? null,
    agonistHill: assay.agonistHill ?? null,
  };
}

/** Validates, resolves, normalises and fits; throws 400 with every problem when nothing may be stored. */
export async function createRun(em: EntityManager, actorId: number, assayId: number, input: RunInput) {
  const assay = await getOpenAssay(em, assayId);
  let parsed: { points: RawPoint[]; errors: RawDataIssue[]; badLines: number[] };
  let format: 'long' | 'plate';
  const stored: { role: 'long' | 'matrix' | 'map'; file: UploadedFile }[] = [];
  if (input.files.long) {
    if (input.files.matrix || input.files.map) throw HttpError.badRequest('Upload either one long CSV (file) or a plate matrix with its plate map (matrix + map), not both.');
    format = 'long';
    parsed = parseLongCsv(textOf(input.files.long, 'file'));
    stored.push({ role: 'long', file: input.files.long });
  } else if (input.files.matrix && input.files.map) {
    format = 'plate';
    parsed = parsePlate(textOf(input.files.matrix, 'matrix'), textOf(input.files.map, 'map'));
    stored.push({ role: 'matrix', file: input.files.matrix }, { role: 'map', file: input.files.map });
  } else {
    throw HttpError.badRequest('No raw data: upload a long CSV as "file", or a plate matrix as "matrix" with its plate map as "map".', [{ field: 'file', message: 'missing' }]);
  }
  const structural = parsed.errors.filter((e) => !/^row \d+/.test(e.where) && !/^well /.test(e.where));
  const samples = await resolveSamples(em, parsed.points); // the parsers already leave rows with problems out
  const conditions = await checkLigandConditions(em, assay.kind, samples.resolved);
  samples.resolved = conditions.keep as ResolvedPoint[];
  const issues = [...parsed.errors, ...samples.issues, ...conditions.issues];
  const badLines = [...new Set([...parsed.badLines, ...samples.badLines, ...conditions.badLines])].sort((a, b) => a - b);
  if (structural.length || (issues.length && !input.dropBadRows)) {
    const dropHint = structural.length ? '' : ` Fix the file, or upload it again leaving out the ${badLines.length} row(s) with problems (dropBadRows).`;
    throw new HttpError(400, 'invalid_raw_data', `The raw data has ${issues.length} problem(s); nothing was stored.${dropHint}`, issueDetails(issues));
  }
  const points = samples.resolved;
  if (!points.some((p) => p.batch)) throw new HttpError(400, 'invalid_raw_data', 'No sample rows are left to fit; nothing was stored.', issueDetails(issues));

  // Normalisation: controls, or the reference agonist's own raw curve.
  const controls = {
    basal: mean(points.filter((p) => p.control === 'basal').map((p) => p.response)),
    max: mean(points.filter((p) => p.control === 'max').map((p) => p.response)),
    blank: mean(points.filter((p) => p.control === 'blank').map((p) => p.response)),
  };
  const referenceId = assay.referenceCompound?.id ?? null;
  let referenceRaw: { bottom: number; top: number } | null = null;
  if (referenceId !== null) {
    const refPoints = points.filter((p) => p.batch?.compound.id === referenceId && !p.condition && p.concentrationM && p.concentrationM > 0);
    if (refPoints.length >= 5) {
      const f = fitFourPL(refPoints.map((p) => ({ logConc: Math.log10(p.concentrationM!), response: p.response })));
      if (f.ok) referenceRaw = { bottom: lowConcentrationAsymptote(f).value, top: highConcentrationAsymptote(f).value };
    }
  }
  let norm: Normalisation;
  try {
    norm = chooseNormalisation(assay.kind, controls, referenceRaw);
  } catch (err) {
    if (err instanceof NormalisationError) throw new HttpError(400, 'invalid_raw_data', `Cannot normalise the run: ${err.message}. Nothing was stored.`, [{ field: 'controls', message: err.message }]);
    throw err;
  }

  return em.transactional(async (tx) => {
    const run = tx.create(Run, {
      assay: assay.id,
      runDate: input.runDate,
      operator: actorId,
      format,
      notes: input.notes ?? null,
      normalisation: { ...norm, controls, referenceCompound: assay.referenceCompound?.registryNumber ?? null },
      droppedRows: issues.length ? issues : null,
    } as never) as IRun;
    tx.persist(run);
    for (const s of stored) {
      tx.persist(tx.create(RunFile, { run, role: s.role, fileName: s.file.originalname || `${s.role}.csv`, mediaType: s.file.mimetype || 'text/csv', size: s.file.buffer.length, content: s.file.buffer }));
    }
    const measurements: IMeasurement[] = points.map((p) => {
      const m = tx.create(Measurement, {
        run,
        batch: p.batch,
        control: p.control,
        concentrationM: p.concentrationM,
        response: p.response,
        normalised: normalise(p.response, norm),
        replicate: p.replicate,
        well: p.well,
        condition: p.condition,
        line: p.line,
      });
      tx.persist(m);
      return m;
    });
    const results = fitRunCurves(tx, assay, run, measurements, actorId);
    await tx.flush();
    await analyseRunMechanisms(tx, run.id, actorId);
    audit(tx, actorId, 'run.create', 'Run', run.id, { assay: assay.code, format, files: stored.map((s) => s.file.originalname), measurements: measurements.length, results: results.length, droppedRows: issues.length });
    await tx.flush();
    return { runId: run.id, results: results.length, droppedRows: issues.length };
  });
}

function groupCurves(measurements: IMeasurement[]): Curve[] {
  const curves = new Map<string, Curve>();
  for (const m of measurements) {
    if (!m.batch) continue;
    const key = `${m.batch.id}\u0000${m.condition ?? ''}`;
    const curve = curves.get(key) ?? { batch: m.batch as IBatch, condition: m.condition ?? null, points: [] };
    curve.points.push(m);
    curves.set(key, curve);
  }
  return [...curves.values()];
}

/** Fits every curve of a new run and creates the draft results (the reference first: α needs it). */
function fitRunCurves(tx: EntityManager, assay: IAssay, run: IRun, measurements: IMeasurement[], actorId: number): IResult[] {
  const referenceId = assay.referenceCompound?.id ?? null;
  const skip = mechanismCurveKeys(assay.kind, measurements);
  const curves = groupCurves(measurements).filter((c) => !skip.has(`${c.batch.id}\u0000${c.condition ?? ''}`)).sort((a, b) => Number(b.batch.compound.id === referenceId) - Number(a.batch.compound.id === referenceId));
  let referenceEmax: number | null = null;
  const results: IResult[] = [];
  for (const curve of curves) {
    const isReference = curve.batch.compound.id === referenceId && !curve.condition;
    const points = curvePoints(curve.points);
    let fit = fitFourPL(points);
    let fixed: FixedParams = {};
    const constraints = plateauConstraints(assay.kind, fit);
    if (Object.keys(constraints).length) {
      const constrained = fitFourPL(points, constraints);
      if (constrained.ok) {
        fit = { ...constrained, messages: [...constrained.messages, describeConstraints(constraints)] };
        fixed = constraints;
      }
    }
    if (isReference && fit.ok) referenceEmax = highConcentrationAsymptote(fit).value;
    const values = deriveResultValues(assay.kind, fit, constants(assay), isReference ? (fit.ok ? highConcentrationAsymptote(fit).value : null) : referenceEmax);
    const result = tx.create(Result, {
      assay,
      run,
      batch: curve.batch,
      compound: curve.batch.compound,
      condition: curve.condition,
      source: 'fit',
      isReference,
      status: 'draft',
      values,
      fit: fitSummary(fit, fixed),
      fixed: Object.keys(fixed).length ? fixed : null,
      createdBy: actorId,
    } as never) as IResult;
    tx.persist(result);
    results.push(result);
  }
  return results;
}

export interface RefitInput {
  exclude?: number[];
  include?: number[];
  fixed?: FixedParams;
  version?: number;
}

/** Excludes or restores points and changes fixed parameters, then refits (draft and rejected results only). */
export async function refitResult(em: EntityManager, actorId: number, resultId: number, change: RefitInput) {
  return em.transactional(async (tx) => {
    const result = await tx.findOne(Result, { id: resultId }, { populate: ['assay', 'run', 'batch', 'compound'] });
    if (!result) throw HttpError.notFound(`No result with id ${resultId}.`);
    if (!result.run) throw HttpError.badRequest('This result was entered by hand: there is no curve to refit; enter corrected values instead.');
    if (change.version !== undefined && change.version !== result.version) throw HttpError.conflict('stale_version', 'The result was changed by someone else; reload and try again.');
    if (result.status === 'submitted' || result.status === 'approved') throw HttpError.conflict('locked', `The result is ${result.status}: it can no longer be refitted.`);
    const points = await tx.find(Measurement, { run: result.run, batch: result.batch, condition: result.condition ?? null }, { orderBy: { id: 'asc' } });
    // A Schild or allosteric-modulation result also owns the agonist curves of its analysis.
    const analysisPoints = await analysisMeasurements(tx, result);
    if (!points.length && !analysisPoints.length) throw HttpError.badRequest('This result has no curve to refit.', [{ field: 'exclude', message: 'no curve' }]);
    if (!points.length && change.fixed && Object.keys(change.fixed).length) throw HttpError.badRequest('fixed: this result has no curve of its own (its values come from the agonist curves of the run\'s mechanism analysis, which are fitted freely)', [{ field: 'fixed', message: 'no curve of its own to hold parameters on' }]);
    const all = [...points, ...analysisPoints];
    const ids = new Set(all.map((m) => m.id));
    const unknown = [...(change.exclude ?? []), ...(change.include ?? [])].filter((id) => !ids.has(id));
    if (unknown.length) throw HttpError.badRequest(`exclude/include: point(s) ${unknown.join(', ')} do not belong to this curve`, [{ field: 'exclude', message: `unknown point id(s) ${unknown.join(', ')}` }]);
    const before = { values: result.values, fixed: result.fixed, excluded: all.filter((m) => m.excluded).map((m) => m.id) };
    for (const m of all) {
      if (change.exclude?.includes(m.id)) m.excluded = true;
      if (change.include?.includes(m.id)) m.excluded = false;
    }
    const fixed = change.fixed ?? result.fixed ?? {};
    let referenceEmax: number | null = null;
    if (points.length) {
      const fit = fitFourPL(curvePoints(points), fixed);
      referenceEmax = result.isReference ? (fit.ok ? highConcentrationAsymptote(fit).value : null) : await runReferenceEmax(tx, result.run.id);
      // Mechanism values (Schild, allosteric) are kept here and recomputed by the analysis below.
      const mechanism = Object.fromEntries(Object.entries(result.values).filter(([k]) => ['pA2', 'schildSlope', 'foldShift', 'emaxChange', 'logKB', 'logCooperativity'].includes(k)));
      result.values = { ...deriveResultValues(result.assay.kind, fit, constants(result.assay), referenceEmax), ...mechanism };
      result.fit = fitSummary(fit, fixed);
      result.fixed = Object.keys(fixed).length ? fixed : null;
    }
    if (result.status === 'rejected') result.status = 'draft';
    audit(tx, actorId, 'result.refit', 'Result', result.id, { before, exclude: change.exclude ?? [], include: change.include ?? [], fixed });
    await tx.flush();
    if (result.isReference && points.length) await updateAlphas(tx, result.run.id, referenceEmax);
    await analyseRunMechanisms(tx, result.run.id, actorId);
    return result.id;
  });
}

async function runReferenceEmax(em: EntityManager, runId: number): Promise<number | null> {
  const ref = await em.findOne(Result, { run: runId, isReference: true });
  const emax = (ref?.values as ResultValues | undefined)?.emax;
  return emax ? emax.value : null;
}

/** After the reference curve changed, α of the run's other draft results follows it. */
async function updateAlphas(em: EntityManager, runId: number, referenceEmax: number | null) {
  const others = await em.find(Result, { run: runId, isReference: false, status: { $in: ['draft', 'rejected'] } });
  for (const r of others) {
    const v = { ...(r.values as ResultValues) };
    const alpha = v.emax ? alphaValue(v.emax, referenceEmax) : null;
    if (alpha) v.alpha = alpha;
    else delete v.alpha;
    r.values = v;
  }
  await em.flush();
}

export async function listRuns(em: EntityManager, assayId: number) {
  const runs = await em.find(Run, { assay: assayId }, { populate: ['operator'], orderBy: { runDate: 'desc', id: 'desc' } });
  const counts = await em.getConnection().execute<{ run_id: number; status: string; n: string }[]>('select run_id, status, count(*) as n from result where assay_id = ? group by run_id, status', [assayId]);
  return runs.map((r) => {
    const byStatus: Record<string, number> = {};
    for (const c of counts.filter((c) => c.run_id === r.id)) byStatus[c.status] = Number(c.n);
    return { id: r.id, runDate: r.runDate, format: r.format, operator: { id: r.operator.id, name: r.operator.name }, notes: r.notes ?? null, results: byStatus, createdAt: r.createdAt.toISOString() };
  });
}

/** Ids of a run's draft results (404 when the run does not exist). */
export async function draftResultIds(em: EntityManager, runId: number): Promise<number[]> {
  if (!(await em.count(Run, { id: runId }))) throw HttpError.notFound(`No run with id ${runId}.`);
  const drafts = await em.find(Result, { run: runId, status: 'draft' }, { fields: ['id'], orderBy: { id: 'asc' } });
  return drafts.map((r) => r.id);
}

export function measurementView(m: IMeasurement) {
  return { id: m.id, batchId: m.batch?.id ?? null, control: m.control ?? null, concentrationM: m.concentrationM ?? null, response: m.response, normalised: m.normalised ?? null, replicate: m.replicate ?? null, well: m.well ?? null, condition: m.condition ?? null, excluded: m.excluded, line: m.line ?? null };
}

export async function getRun(em: EntityManager, id: number) {
  const run = await em.findOne(Run, { id }, { populate: ['operator', 'assay', 'assay.target', 'assay.referenceCompound'] });
  if (!run) throw HttpError.notFound(`No run with id ${id}.`);
  const files = await em.find(RunFile, { run }, { orderBy: { id: 'asc' } });
  const measurements = await em.find(Measurement, { run }, { orderBy: { id: 'asc' } });
  const results = await em.find(Result, { run }, { populate: ['batch', 'compound', 'submittedBy', 'reviewedBy'], orderBy: { isReference: 'desc', compound: { registryNumber: 'asc' }, condition: 'asc' } });
  return { run, files, measurements, results };
}

export async function getRunFile(em: EntityManager, runId: number, fileId: number) {
  const file = await em.findOne(RunFile, { id: fileId, run: runId }, { populate: ['content'] });
  if (!file) throw HttpError.notFound(`Run ${runId} has no file ${fileId}.`);
  return file;
}

