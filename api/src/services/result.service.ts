// Results: lists, values entered by hand, and the review path draft → submitted → approved |
// rejected, with e-mails to the leads on submission and to the submitter on the decision.
import type { EntityManager, FilterQuery } from '@mikro-orm/postgresql';
import { Comment, Measurement, Result, type IResult, type ResultStatus, type ResultValue, type ResultValues } from '../entities/assay.entity.js';
import { Batch, Compound } from '../entities/compound.entity.js';
import { User } from '../entities/user.entity.js';
import { HttpError } from '../http-error.js';
import { reviewDecisions } from './selectivity.service.js';
import { audit } from './audit.service.js';
import { recomputeCalls } from './call.service.js';
import { assayView, getOpenAssay } from './assay.service.js';
import { measurementView } from './run.service.js';
import type { Mailer } from './mail.service.js';

export const CAUTION = 'Fitted values and derived parameters are computed suggestions: a qualified pharmacologist confirms them before they guide any decision.';

export function resultView(r: IResult) {
  return {
    id: r.id,
    assayId: r.assay.id,
    runId: r.run?.id ?? null,
    runDate: r.run && r.run.runDate ? r.run.runDate : null,
    batch: { id: r.batch.id, batchNumber: r.batch.batchNumber },
    compound: { id: r.compound.id, registryNumber: r.compound.registryNumber, name: r.compound.name ?? null },
    condition: r.condition ?? null,
    source: r.source,
    isReference: r.isReference,
    status: r.status,
    values: r.values,
    fit: r.fit ?? null,
    fixed: r.fixed ?? null,
    analysis: r.analysis ?? null,
    note: r.note ?? null,
    submittedBy: r.submittedBy ? { id: r.submittedBy.id, name: r.submittedBy.name } : null,
    submittedAt: r.submittedAt?.toISOString() ?? null,
    reviewedBy: r.reviewedBy ? { id: r.reviewedBy.id, name: r.reviewedBy.name } : null,
    reviewedAt: r.reviewedAt?.toISOString() ?? null,
    reviewComment: r.reviewComment ?? null,
    version: r.version,
    updatedAt: r.updatedAt.toISOString(),
  };
}

export interface ResultQuery {
  status?: ResultStatus;
  assayId?: number;
  runId?: number;
  compound?: string;
  limit: number;
  offset: number;
}

const POPULATE = ['assay', 'assay.target', 'run', 'batch', 'compound', 'submittedBy', 'reviewedBy'] as const;

/** Results with their assay and, on request, their curve points (the review queue shows curves). */
export async function listResults(em: EntityManager, q: ResultQuery, withPoints = false) {
  const where: FilterQuery<IResult> = {};
  if (q.status) where.status = q.status;
  if (q.assayId) where.assay = q.assayId;
  if (q.runId) where.run = q.runId;
  if (q.compound) {
    const key = q.compound.toUpperCase();
    where.compound = /^\d+$/.test(key) ? Number(key) : { registryNumber: key };
  }
  const [items, total] = await em.findAndCount(Result, where, { populate: POPULATE as never, orderBy: { submittedAt: 'asc', id: 'asc' }, limit: q.limit, offset: q.offset });
  const points = new Map<number, ReturnType<typeof measurementView>[]>();
  const withRun = items.filter((r) => r.run);
  if (withPoints && withRun.length) {
    const curveKey = (run: number, batch: number | undefined, condition: string | null | undefined) => `${run}\u0000${batch}\u0000${condition ?? ''}`;
    const ms = await em.find(Measurement, { $or: withRun.map((r) => ({ run: r.run!.id, batch: r.batch.id, condition: r.condition ?? null })) }, { orderBy: { id: 'asc' } });
    const byCurve = new Map<string, ReturnType<typeof measurementView>[]>();
    for (const m of ms) {
      const key = curveKey(m.run.id, m.batch?.id, m.condition);
      byCurve.set(key, [...(byCurve.get(key) ?? []), measurementView(m)]);
    }
    for (const r of withRun) points.set(r.id, byCurve.get(curveKey(r.run!.id, r.batch.id, r.condition)) ?? []);
  }
  return {
    total,
    items: items.map((r) => ({ ...resultView(r), assay: assayView(r.assay), points: withPoints ? (points.get(r.id) ?? []) : undefined })),
    caution: CAUTION,
  };
}

export interface ManualValue {
  value: number;
  qualifier: '=' | '<' | '>';
  sd?: number | null;
  n?: number | null;
}

export interface ManualEntry {
  assayId: number;
  sample: string;
  values: Partial<Record<'pKi' | 'pIC50' | 'pEC50' | 'pKB' | 'emax' | 'alpha' | 'hillSlope', ManualValue>>;
  note: string;
}

const UNITS: Record<string, string> = { pKi: '-log M', pIC50: '-log M', pEC50: '-log M', pKB: '-log M', emax: '%', alpha: '', hillSlope: '' };

/** Values measured elsewhere, entered through the validated form (a draft, like a fitted result). */
export async function createManualResult(em: EntityManager, actorId: number, input: ManualEntry) {
  const keys = Object.keys(input.values) as (keyof ManualEntry['values'])[];
  if (!keys.length) throw HttpError.badRequest('values: enter at least one value (pKi, pIC50, pEC50, pKB, Emax, α or Hill slope)', [{ field: 'values', message: 'empty' }]);
  const assay = await getOpenAssay(em, input.assayId);
  const allowed: Record<string, string[]> = {
    binding: ['pKi', 'pIC50', 'hillSlope'],
    'functional-agonist': ['pEC50', 'emax', 'alpha', 'hillSlope'],
    'functional-antagonist': ['pIC50', 'pKB', 'emax', 'hillSlope'],
    'allosteric-modulation': ['pEC50', 'emax', 'alpha', 'hillSlope'],
  };
  const wrong = keys.filter((k) => !allowed[assay.kind].includes(k));
  if (wrong.length) throw HttpError.badRequest(`values: ${wrong.join(', ')} do not belong to a ${assay.kind} assay (allowed: ${allowed[assay.kind].join(', ')})`, wrong.map((k) => ({ field: `values.${k}`, message: `not a ${assay.kind} parameter` })));
  const sample = input.sample.trim().toUpperCase();
  let batch = await em.findOne(Batch, { batchNumber: sample }, { populate: ['compound'] });
  if (!batch) {
    const compound = await em.findOne(Compound, { registryNumber: sample });
    if (!compound) throw HttpError.badRequest(`sample: no batch or compound ${input.sample}`, [{ field: 'sample', message: `no batch or compound ${input.sample} in the registry` }]);
    const batches = await em.find(Batch, { compound }, { populate: ['compound'] });
    if (batches.length !== 1) throw HttpError.badRequest(`sample: ${compound.registryNumber} has ${batches.length} batches; name the batch`, [{ field: 'sample', message: 'name the batch' }]);
    batch = batches[0];
  }
  const values: ResultValues = {};
  for (const k of keys) {
    const v = input.values[k]!;
    const entry: ResultValue = { value: v.value, qualifier: v.qualifier, unit: UNITS[k], se: v.sd != null && v.n ? v.sd / Math.sqrt(v.n) : null, ci95: null, n: v.n ?? null };
    values[k] = entry;
  }
  return em.transactional(async (tx) => {
    const result = tx.create(Result, { assay, run: null, batch: batch!, compound: batch!.compound, condition: null, source: 'manual', isReference: false, status: 'draft', values, fit: null, fixed: null, note: input.note, createdBy: actorId } as never) as IResult;
    await tx.persist(result).flush();
    audit(tx, actorId, 'result.manual', 'Result', result.id, { assay: assay.code, sample: batch!.batchNumber, values: input.values, note: input.note });
    await tx.flush();
    return result.id;
  });
}

export async function getResult(em: EntityManager, id: number) {
  const r = await em.findOne(Result, { id }, { populate: POPULATE as never });
  if (!r) throw HttpError.notFound(`No result with id ${id}.`);
  return r as IResult;
}

/** Submits drafts for review (one result, or every draft of a run); mails the leads. */
export async function submitResults(em: EntityManager, mailer: Mailer, actorId: number, ids: number[]) {
  const submitted = await em.transactional(async (tx) => {
    const results = await tx.find(Result, { id: { $in: ids } }, { populate: ['assay', 'compound', 'batch'] });
    if (results.length !== ids.length) throw HttpError.notFound(`No result with id ${ids.filter((id) => !results.some((r) => r.id === id)).join(', ')}.`);
    const notDraft = results.filter((r) => r.status !== 'draft');
    if (notDraft.length) throw HttpError.conflict('not_draft', `Only drafts can be submitted: ${notDraft.map((r) => `result ${r.id} is ${r.status}`).join('; ')}.`);
    const now = new Date();
    for (const r of results) {
      r.status = 'submitted';
      r.submittedBy = tx.getReference(User, actorId);
      r.submittedAt = now;
      r.reviewComment = null;
      audit(tx, actorId, 'result.submit', 'Result', r.id, { compound: r.compound.registryNumber, assay: r.assay.code });
    }
    await tx.flush();
    return results;
  });
  if (submitted.length) {
    const leads = await em.find(User, { role: 'lead', active: true });
    const submitter = await em.findOneOrFail(User, { id: actorId });
    const lines = submitted.map((r) => `- ${r.compound.registryNumber} (${r.batch.batchNumber}) in ${r.assay.code}${r.condition ? `, ${r.condition}` : ''}: ${summariseValues(r.values)}`);
    mailer.sendLater({
      to: leads.map((u) => u.email),
      subject: `[Ligandry] ${submitted.length} result(s) submitted for review by ${submitter.name}`,
      text: `${submitter.name} submitted ${submitted.length} result(s) for review:\n\n${lines.join('\n')}\n\nOpen the Review page to approve or reject them.\n\n${CAUTION}\n`,
    });
  }
  return submitted.map((r) => r.id);
}

export function summariseValues(values: ResultValues): string {
  const order: (keyof ResultValues)[] = ['pKi', 'pKB', 'pIC50', 'pEC50', 'emax', 'alpha'];
  const parts = order.filter((k) => values[k]).map((k) => {
    const v = values[k]!;
    const q = v.qualifier === '=' ? '' : `${v.qualifier} `;
    return `${k} ${q}${k === 'emax' ? v.value.toFixed(0) + ' %' : v.value.toFixed(2)}`;
  });
  return parts.length ? parts.join(', ') : 'no value (see the fit flags)';
}

/** A lead approves or rejects a submitted result with a comment (required to reject); mails the submitter. */
export async function reviewResult(em: EntityManager, mailer: Mailer, actorId: number, id: number, decision: 'approved' | 'rejected', comment: string | undefined, version?: number) {
  if (decision === 'rejected' && !comment?.trim()) throw HttpError.badRequest('comment: say why the result is rejected', [{ field: 'comment', message: 'is required to reject' }]);
  const result = await em.transactional(async (tx) => {
    const r = await tx.findOne(Result, { id }, { populate: ['assay', 'compound', 'batch', 'submittedBy'] });
    if (!r) throw HttpError.notFound(`No result with id ${id}.`);
    if (version !== undefined && version !== r.version) throw HttpError.conflict('stale_version', 'The result was changed by someone else; reload and try again.');
    if (r.status !== 'submitted') throw HttpError.conflict('not_submitted', `Only submitted results can be reviewed; result ${id} is ${r.status}.`);
    r.status = decision;
    r.reviewedBy = tx.getReference(User, actorId);
    r.reviewedAt = new Date();
    r.reviewComment = comment?.trim() || null;
    if (comment?.trim()) tx.persist(tx.create(Comment, { entityType: 'Result', entityId: String(id), author: actorId, text: comment.trim() }));
    audit(tx, actorId, decision === 'approved' ? 'result.approve' : 'result.reject', 'Result', id, { comment: comment ?? null });
    await tx.flush();
    // An approved result is new evidence: the compound's ligand-type calls follow it in this transaction.
    if (decision === 'approved') await recomputeCalls(tx, [r.compound.id], actorId);
    return r;
  });
  // New approved data may change the picture a lead's decision rested on: look again (after commit).
  if (decision === 'approved') await reviewDecisions(em.fork(), [result.compound.id]);
  if (result.submittedBy) {
    const reviewer = await em.findOneOrFail(User, { id: actorId });
    mailer.sendLater({
      to: [result.submittedBy.email],
      subject: `[Ligandry] ${result.compound.registryNumber} in ${result.assay.code}: ${decision}`,
      text: `${reviewer.name} ${decision} the result for ${result.compound.registryNumber} (${result.batch.batchNumber}) in ${result.assay.code}${result.condition ? `, ${result.condition}` : ''}: ${summariseValues(result.values)}.\n${comment?.trim() ? `\nComment: ${comment.trim()}\n` : ''}\n${CAUTION}\n`,
    });
  }
  return result.id;
}
