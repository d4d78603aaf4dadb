// Ligand-type calls per compound × target (DESIGN §3; rule in domain/ligand-call.ts): evidence
// items built from the compound's APPROVED results at the target, per-assay thresholds, the call
// stored with its rule, evidence and conflicts; manual overrides with a reason (audited), flagged
// `contradicted` when a later computed call disagrees. Calls are computed suggestions for a
// qualified pharmacologist to confirm.
//
// Evidence from a result (EvidenceItem):
// - binding: pKi, pIC50. functional-antagonist: pKB (a Schild result: pKB when valid, else pA2),
//   pIC50, and the Schild flags. allosteric-modulation: the modulator's foldShift, emaxChange and
//   its α alone; the run's reference agonist curve counts as agonist-mode evidence.
// - functional-agonist: pEC50, emax, α and, in a constitutively active system, basalChange — the
//   high-concentration response relative to the BASAL wells in % of the reference window (see
//   mechanism.service.ts basalChangeOf). A curve that falls below basal (an inverse agonist) has a
//   negative Emax and α; ligand-call.ts then reads basalChange. A flat curve has no Emax or α: its
//   basalChange is given as its Emax so the rule sees α ≈ 0 with the basal unchanged.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Assay, ProjectTarget, Result, type IAssay, type IResult, type ResultValue } from '../entities/assay.entity.js';
import { Compound } from '../entities/compound.entity.js';
import { LigandCall, type CallEvidence, type ILigandCall } from '../entities/ligand-call.entity.js';
import { User } from '../entities/user.entity.js';
import { callLigandType, DEFAULT_CALL_THRESHOLDS, overrideIsContradicted, type CallThresholds, type EvidenceItem, type LigandCall as Call, type PValue } from '../domain/ligand-call.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';

export const CALL_CAUTION = 'Ligand-type calls are computed suggestions from the approved results and the rule shown; a qualified pharmacologist confirms them before they guide any decision.';
export const THRESHOLDS_NOTE = 'Default thresholds are common practice in receptor pharmacology, not a published standard; each assay may set its own.';

const p = (v: ResultValue | undefined): PValue | null => (v && Number.isFinite(v.value) ? { value: v.value, qualifier: v.qualifier } : null);
const num = (v: ResultValue | undefined): number | null => (v && Number.isFinite(v.value) ? v.value : null);

/** The evidence item of one approved result (see the file header). */
export function evidenceItem(r: IResult): EvidenceItem {
  const a = r.assay;
  const v = r.values ?? {};
  const kind = a.kind === 'allosteric-modulation' && r.isReference ? 'functional-agonist' : a.kind;
  const analysis = (r.analysis ?? null) as { kind?: string; schild?: { flags?: string[]; pA2?: { value: number } | null } } | null;
  const item: EvidenceItem = { resultId: String(r.id), assayId: String(a.id), assayKind: kind, constitutiveActivity: a.constitutiveActivity };
  switch (kind) {
    case 'binding':
      item.pKi = p(v.pKi);
      item.pIC50 = p(v.pIC50);
      break;
    case 'functional-antagonist':
      // A Schild result: pKB when valid, else pA2; with a saturating shift only the analysis holds pA2.
      item.pKB = p(v.pKB) ?? p(v.pA2) ?? (analysis?.kind === 'schild' && analysis.schild?.pA2 ? { value: analysis.schild.pA2.value, qualifier: '=' } : null);
      item.pIC50 = p(v.pIC50);
      if (analysis?.kind === 'schild') item.schildFlags = analysis.schild?.flags ?? [];
      break;
    case 'allosteric-modulation':
      item.foldShift = num(v.foldShift);
      item.emaxChange = num(v.emaxChange);
      item.alpha = num(v.alpha);
      item.pEC50 = p(v.pEC50);
      break;
    case 'functional-agonist':
      item.pEC50 = p(v.pEC50);
      item.emax = num(v.emax);
      item.alpha = num(v.alpha);
      item.basalChange = num(v.basalChange);
      if (item.alpha === null && item.emax === null && item.basalChange !== null) item.emax = item.basalChange;
      break;
  }
  return item;
}

/** An assay's effective thresholds and its own overrides. */
export function assayThresholds(a: IAssay): { defaults: CallThresholds; overrides: Partial<CallThresholds>; effective: CallThresholds } {
  const overrides = (a.callThresholds ?? {}) as Partial<CallThresholds>;
  return { defaults: { ...DEFAULT_CALL_THRESHOLDS }, overrides, effective: { ...DEFAULT_CALL_THRESHOLDS, ...overrides } };
}

export function callView(c: ILigandCall) {
  return {
    id: c.id,
    compound: { id: c.compound.id, registryNumber: c.compound.registryNumber, name: c.compound.name ?? null },
    target: { id: c.target.id, name: c.target.name, geneSymbol: c.target.geneSymbol },
    call: c.call,
    source: c.source,
    computedCall: c.computedCall,
    rule: c.rule,
    evidence: c.evidence,
    conflicts: c.conflicts ?? [],
    computedAt: c.computedAt.toISOString(),
    override: c.source === 'manual' ? { reason: c.overrideReason ?? null, by: c.overriddenBy ? { id: c.overriddenBy.id, name: c.overriddenBy.name } : null, at: c.overriddenAt?.toISOString() ?? null } : null,
    contradicted: c.contradicted,
    version: c.version,
    caution: CALL_CAUTION,
  };
}

/**
 * Recomputes the calls of the given compounds at every target where they have approved results
 * (and updates calls that exist elsewhere). Runs in the caller's transaction when there is one.
 * Unchanged calls are not written. Returns the number of calls evaluated.
 */
export async function recomputeCalls(em: EntityManager, compoundIds: number[], actorId: number | null): Promise<number> {
  if (!compoundIds.length) return 0;
  const results = await em.find(Result, { compound: { $in: compoundIds }, status: 'approved' }, { populate: ['assay', 'assay.target'], orderBy: { id: 'asc' } });
  const existing = await em.find(LigandCall, { compound: { $in: compoundIds } });
  const groups = new Map<string, IResult[]>();
  for (const r of results) {
    const key = `${r.compound.id}:${r.assay.target.id}`;
    groups.set(key, [...(groups.get(key) ?? []), r]);
  }
  for (const c of existing) {
    const key = `${c.compound.id}:${c.target.id}`;
    if (!groups.has(key)) groups.set(key, []);
  }
  const byKey = new Map(existing.map((c) => [`${c.compound.id}:${c.target.id}`, c]));
  const now = new Date();
  let written = 0;
  const events: { call: ILigandCall; action: string; data: Record<string, unknown> }[] = [];
  for (const [key, rs] of groups) {
    const [compoundId, targetId] = key.split(':').map(Number);
    const byAssay: Record<string, Partial<CallThresholds>> = {};
    for (const r of rs) if (r.assay.callThresholds) byAssay[String(r.assay.id)] = r.assay.callThresholds as Partial<CallThresholds>;
    const computed = callLigandType(rs.map(evidenceItem), { byAssay });
    const codes = new Map(rs.map((r) => [String(r.id), r.assay.code]));
    const evidence: CallEvidence[] = computed.evidence.map((e) => ({ resultId: Number(e.resultId), assayId: Number(e.assayId), assayCode: codes.get(e.resultId) ?? '', note: e.note }));
    const conflicts = computed.conflicts?.map((c) => ({ resultIds: c.resultIds.map(Number), note: c.note })) ?? null;
    let call = byKey.get(key);
    if (!call) {
      call = em.create(LigandCall, { compound: compoundId, target: targetId, call: computed.call, source: 'rule', computedCall: computed.call, rule: computed.rule, evidence, conflicts, computedAt: now, contradicted: false } as never) as ILigandCall;
      em.persist(call);
      events.push({ call, action: 'call.compute', data: { compoundId, targetId, call: computed.call, rule: computed.rule } });
    } else {
      const before = { call: call.call, computedCall: call.computedCall, contradicted: call.contradicted };
      const same = call.computedCall === computed.call && call.rule === computed.rule && canonical(call.evidence) === canonical(evidence) && canonical(call.conflicts ?? null) === canonical(conflicts);
      if (same) {
        // Nothing new: the stored call stands (no write, so re-seeding and repeated recomputes leave it untouched).
        written++;
        continue;
      }
      call.computedCall = computed.call;
      call.rule = computed.rule;
      call.evidence = evidence;
      call.conflicts = conflicts;
      call.computedAt = now;
      if (call.source === 'rule') call.call = computed.call;
      else call.contradicted = call.contradicted || overrideIsContradicted(call.call as Call, computed.call);
      if (before.computedCall !== call.computedCall || before.call !== call.call || before.contradicted !== call.contradicted) {
        events.push({ call, action: call.contradicted && !before.contradicted ? 'call.contradicted' : 'call.compute', data: { compoundId, targetId, before, after: { call: call.call, computedCall: call.computedCall, contradicted: call.contradicted }, rule: computed.rule } });
      }
    }
    written++;
  }
  await em.flush();
  if (events.length) {
    for (const e of events) audit(em, actorId, e.action, 'LigandCall', e.call.id, e.data);
    await em.flush();
  }
  return written;
}

/** JSON with sorted keys (jsonb reorders an object's keys, so plain JSON.stringify would not compare). */
function canonical(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (x && typeof x === 'object' && !Array.isArray(x) ? Object.fromEntries(Object.entries(x).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : x));
}

/** Compound ids of a project (its series' compounds). */
async function projectCompoundIds(em: EntityManager, projectId: number): Promise<number[]> {
  const compounds = await em.find(Compound, { series: { project: projectId } }, { fields: ['id'] });
  return compounds.map((c) => c.id);
}

async function compoundId(em: EntityManager, key: string): Promise<number> {
  const c = /^\d+$/.test(key) ? await em.findOne(Compound, { id: Number(key) }) : await em.findOne(Compound, { registryNumber: key.toUpperCase() });
  if (!c) throw HttpError.notFound(`No compound ${key}.`);
  return c.id;
}

/** POST /api/calls/recompute: for one compound, or for every compound of a project (and every compound with approved results when `all`). */
export async function recomputeFor(em: EntityManager, actorId: number, q: { compound?: string; project?: number }) {
  const ids = q.compound ? [await compoundId(em, q.compound)] : await projectCompoundIds(em, q.project!);
  return em.transactional(async (tx) => ({ compounds: ids.length, calls: await recomputeCalls(tx, ids, actorId) }));
}

export interface CallQuery {
  compound?: string;
  target?: number;
  project?: number;
  contradicted?: boolean;
  source?: 'rule' | 'manual';
  limit: number;
  offset: number;
}

export async function listCalls(em: EntityManager, q: CallQuery) {
  const where: Record<string, unknown> = {};
  if (q.compound) where.compound = await compoundId(em, q.compound);
  if (q.target) where.target = q.target;
  if (q.contradicted !== undefined) where.contradicted = q.contradicted;
  if (q.source) where.source = q.source;
  if (q.project) {
    const panel = await em.find(ProjectTarget, { project: q.project });
    where.target = q.target ? (panel.some((pt) => pt.target.id === q.target) ? q.target : -1) : { $in: panel.map((pt) => pt.target.id) };
    if (!q.compound) where.compound = { series: { project: q.project } };
  }
  const [items, total] = await em.findAndCount(LigandCall, where, { populate: ['compound', 'target', 'overriddenBy'], orderBy: { compound: { registryNumber: 'asc' }, target: { name: 'asc' } }, limit: q.limit, offset: q.offset });
  return { total, items: items.map(callView), caution: CALL_CAUTION, thresholdsNote: THRESHOLDS_NOTE, defaults: DEFAULT_CALL_THRESHOLDS };
}

export async function getCall(em: EntityManager, id: number) {
  const c = await em.findOne(LigandCall, { id }, { populate: ['compound', 'target', 'overriddenBy'] });
  if (!c) throw HttpError.notFound(`No ligand-type call with id ${id}.`);
  return c;
}

/** A manual call with its reason (audited); clears `contradicted`. */
export async function overrideCall(em: EntityManager, actorId: number, id: number, input: { call: Call; reason: string; version?: number }) {
  return em.transactional(async (tx) => {
    const c = await getCall(tx, id);
    if (input.version !== undefined && input.version !== c.version) throw HttpError.conflict('stale_version', 'The call was changed by someone else; reload and try again.');
    const before = { call: c.call, source: c.source, reason: c.overrideReason ?? null };
    c.call = input.call;
    c.source = 'manual';
    c.overrideReason = input.reason;
    c.overriddenBy = tx.getReference(User, actorId);
    c.overriddenAt = new Date();
    c.contradicted = false;
    audit(tx, actorId, 'call.override', 'LigandCall', c.id, { compound: c.compound.registryNumber, target: c.target.geneSymbol, before, after: { call: input.call, reason: input.reason }, computedCall: c.computedCall });
    await tx.flush();
    return c.id;
  });
}

/** Back to the computed call (audited). */
export async function clearOverride(em: EntityManager, actorId: number, id: number, reason: string | undefined) {
  return em.transactional(async (tx) => {
    const c = await getCall(tx, id);
    if (c.source !== 'manual') throw HttpError.conflict('not_overridden', `Call ${id} is not a manual override.`);
    const before = { call: c.call, reason: c.overrideReason ?? null };
    c.call = c.computedCall;
    c.source = 'rule';
    c.overrideReason = null;
    c.overriddenBy = null;
    c.overriddenAt = null;
    c.contradicted = false;
    audit(tx, actorId, 'call.clear-override', 'LigandCall', c.id, { compound: c.compound.registryNumber, target: c.target.geneSymbol, before, after: { call: c.call }, reason: reason ?? null });
    await tx.flush();
    return c.id;
  });
}

/** Per-assay thresholds: replaces the assay's overrides (null or {} = the defaults) and recomputes the calls its approved results feed. */
export async function setAssayThresholds(em: EntityManager, actorId: number, assayId: number, overrides: Partial<CallThresholds> | null, version?: number) {
  return em.transactional(async (tx) => {
    const assay = await tx.findOne(Assay, { id: assayId }, { populate: ['target'] });
    if (!assay) throw HttpError.notFound(`No assay with id ${assayId}.`);
    if (version !== undefined && version !== assay.version) throw HttpError.conflict('stale_version', 'The assay was changed by someone else; reload and try again.');
    const effective = { ...DEFAULT_CALL_THRESHOLDS, ...(overrides ?? {}) };
    const problems: { field: string; message: string }[] = [];
    if (!(effective.partialAgonistAlpha < effective.fullAgonistAlpha)) problems.push({ field: 'thresholds.partialAgonistAlpha', message: `must be below fullAgonistAlpha (${effective.fullAgonistAlpha})` });
    if (!(effective.namFoldShift < 1 && effective.pamFoldShift > 1)) problems.push({ field: 'thresholds.namFoldShift', message: 'namFoldShift must be below 1 and pamFoldShift above 1' });
    if (problems.length) throw HttpError.badRequest(`Invalid thresholds: ${problems.map((p) => `${p.field} ${p.message}`).join('; ')}`, problems);
    const before = assay.callThresholds ?? null;
    assay.callThresholds = overrides && Object.keys(overrides).length ? (overrides as Record<string, number>) : null;
    audit(tx, actorId, 'assay.call-thresholds', 'Assay', assay.id, { before, after: assay.callThresholds });
    await tx.flush();
    const compounds = await tx.find(Result, { assay, status: 'approved' }, { fields: ['compound'] });
    const recomputed = await recomputeCalls(tx, [...new Set(compounds.map((r) => r.compound.id))], actorId);
    return { ...assayThresholds(assay), recomputed, note: THRESHOLDS_NOTE };
  });
}

/**
 * The call in force per compound × target, for the SAR table: key `${compoundId}:${targetId}`.
 */
export async function callsFor(em: EntityManager, compoundIds: number[], targetIds: number[]): Promise<Map<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>> {
  const out = new Map<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>();
  if (!compoundIds.length || !targetIds.length) return out;
  const rows = await em.find(LigandCall, { compound: { $in: compoundIds }, target: { $in: targetIds } }, { fields: ['compound', 'target', 'call', 'source', 'contradicted'] });
  for (const r of rows) out.set(`${r.compound.id}:${r.target.id}`, { call: r.call, source: r.source, contradicted: r.contradicted });
  return out;
}
