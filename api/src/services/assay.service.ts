// Receptor panel, project panels and assay protocols.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Assay, ProjectTarget, Target, type AssayKind, type IAssay, type IProjectTarget, type ITarget } from '../entities/assay.entity.js';
import { Compound } from '../entities/compound.entity.js';
import { Project } from '../entities/project.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';

export function targetView(t: ITarget) {
  return { id: t.id, name: t.name, geneSymbol: t.geneSymbol, family: t.family, species: t.species, description: t.description ?? null, retired: !!t.retiredAt, version: t.version };
}

export interface TargetInput {
  name: string;
  geneSymbol: string;
  family: ITarget['family'];
  species: string;
  description?: string | null;
}

export async function listTargets(em: EntityManager) {
  const targets = await em.find(Target, {}, { orderBy: { name: 'asc' } });
  const counts = await em.getConnection().execute<{ target_id: number; n: string }[]>('select target_id, count(*) as n from assay group by target_id');
  const byId = new Map(counts.map((c) => [c.target_id, Number(c.n)]));
  return targets.map((t) => ({ ...targetView(t), assayCount: byId.get(t.id) ?? 0 }));
}

export async function createTarget(em: EntityManager, actorId: number, input: TargetInput) {
  return em.transactional(async (tx) => {
    if (await tx.findOne(Target, { geneSymbol: input.geneSymbol, species: input.species })) {
      throw HttpError.conflict('duplicate_target', `The panel already has ${input.geneSymbol} (${input.species}).`);
    }
    const target = tx.create(Target, { ...input, description: input.description ?? null });
    await tx.persist(target).flush();
    audit(tx, actorId, 'target.create', 'Target', target.id, { ...input });
    return targetView(target);
  });
}

export async function updateTarget(em: EntityManager, actorId: number, id: number, change: Partial<TargetInput> & { version?: number; retired?: boolean }) {
  return em.transactional(async (tx) => {
    const target = await tx.findOne(Target, { id });
    if (!target) throw HttpError.notFound(`No target with id ${id}.`);
    if (change.version !== undefined && change.version !== target.version) throw HttpError.conflict('stale_version', 'The target was changed by someone else; reload and try again.');
    const { version: _v, retired, ...fields } = change;
    const before = targetView(target);
    if (retired !== undefined && retired !== !!target.retiredAt) {
      target.retiredAt = retired ? new Date() : null;
      audit(tx, actorId, retired ? 'target.retire' : 'target.restore', 'Target', id, { geneSymbol: target.geneSymbol, species: target.species });
    }
    tx.assign(target, fields);
    await tx.flush();
    audit(tx, actorId, 'target.update', 'Target', id, { before, after: fields });
    return targetView(target);
  });
}

function panelView(pt: IProjectTarget) {
  return { targetId: pt.target.id, role: pt.role, agonismUnwanted: pt.agonismUnwanted, target: targetView(pt.target) };
}

export async function projectPanel(em: EntityManager, projectId: number) {
  const project = await em.findOne(Project, { id: projectId });
  if (!project) throw HttpError.notFound(`No project with id ${projectId}.`);
  const panel = await em.find(ProjectTarget, { project }, { populate: ['target'], orderBy: { role: 'desc', target: { name: 'asc' } } });
  return { id: project.id, code: project.code, name: project.name, description: project.description ?? null, targets: panel.map(panelView) };
}

export async function setProjectPanel(em: EntityManager, actorId: number, projectId: number, entries: { targetId: number; role: 'primary' | 'anti-target'; agonismUnwanted?: boolean }[]) {
  const primaries = entries.filter((e) => e.role === 'primary').length;
  if (primaries > 1) throw HttpError.badRequest('targets: a project has one primary target, not ' + primaries, [{ field: 'targets', message: 'more than one primary target' }]);
  const ids = entries.map((e) => e.targetId);
  if (new Set(ids).size !== ids.length) throw HttpError.badRequest('targets: a target is listed twice', [{ field: 'targets', message: 'a target is listed twice' }]);
  await em.transactional(async (tx) => {
    const project = await tx.findOne(Project, { id: projectId });
    if (!project) throw HttpError.notFound(`No project with id ${projectId}.`);
    const targets = await tx.find(Target, { id: { $in: ids } });
    const missing = ids.filter((id) => !targets.some((t) => t.id === id));
    if (missing.length) throw HttpError.badRequest(`targets: no target with id ${missing.join(', ')}`, missing.map((id) => ({ field: 'targets', message: `no target with id ${id}` })));
    await tx.nativeDelete(ProjectTarget, { project });
    for (const e of entries) tx.persist(tx.create(ProjectTarget, { project, target: e.targetId, role: e.role, agonismUnwanted: e.agonismUnwanted ?? false }));
    audit(tx, actorId, 'project.panel', 'Project', projectId, { targets: entries });
    await tx.flush();
  });
  return projectPanel(em.fork(), projectId);
}

export function assayView(a: IAssay) {
  return {
    id: a.id,
    code: a.code,
    name: a.name,
    target: targetView(a.target),
    kind: a.kind,
    readout: a.readout,
    species: a.species,
    cellSystem: a.cellSystem ?? null,
    constitutiveActivity: a.constitutiveActivity,
    radioligand: a.radioligand ?? null,
    radioligandConcM: a.radioligandConcM ?? null,
    radioligandKdM: a.radioligandKdM ?? null,
    referenceCompound: a.referenceCompound ? { id: a.referenceCompound.id, registryNumber: a.referenceCompound.registryNumber, name: a.referenceCompound.name ?? null } : null,
    agonistConcM: a.agonistConcM ?? null,
    agonistEc50M: a.agonistEc50M ?? null,
    agonistHill: a.agonistHill ?? null,
    description: a.description ?? null,
    callThresholds: a.callThresholds ?? null,
    retired: !!a.retiredAt,
    version: a.version,
  };
}

export interface AssayInput {
  code: string;
  name: string;
  targetId: number;
  kind: AssayKind;
  readout: string;
  species: string;
  cellSystem?: string | null;
  constitutiveActivity?: boolean;
  radioligand?: string | null;
  radioligandConcM?: number | null;
  radioligandKdM?: number | null;
  referenceCompound?: string | null;
  agonistConcM?: number | null;
  agonistEc50M?: number | null;
  agonistHill?: number | null;
  description?: string | null;
}

/** What each kind of assay needs for its computations (DESIGN §2), as field problems. */
export function assayProblems(a: AssayInput): { field: string; message: string }[] {
  const problems: { field: string; message: string }[] = [];
  const need = (field: keyof AssayInput, why: string) => {
    if (a[field] === null || a[field] === undefined || a[field] === '') problems.push({ field, message: `is required for ${why}` });
  };
  if (a.kind === 'binding') {
    need('radioligandConcM', 'a binding assay (Cheng–Prusoff needs the radioligand concentration)');
    need('radioligandKdM', 'a binding assay (Cheng–Prusoff needs the radioligand Kd)');
  }
  if (a.kind === 'functional-agonist' || a.kind === 'allosteric-modulation') need('referenceCompound', 'a functional assay (intrinsic activity is measured against the reference full agonist)');
  if (a.kind === 'functional-antagonist' || a.kind === 'allosteric-modulation') {
    need('agonistConcM', 'this mode (the agonist concentration the test compounds work against)');
  }
  if (a.kind === 'functional-antagonist') {
    need('agonistEc50M', 'an antagonist-mode assay (the generalised Cheng–Prusoff relation needs the agonist EC50)');
  }
  return problems;
}

async function resolveReference(em: EntityManager, ref: string | null | undefined) {
  if (!ref) return null;
  const compound = /^\d+$/.test(ref) ? await em.findOne(Compound, { id: Number(ref) }) : await em.findOne(Compound, { registryNumber: ref.toUpperCase() });
  if (!compound) throw HttpError.badRequest(`referenceCompound: no compound ${ref}`, [{ field: 'referenceCompound', message: `no compound ${ref} in the registry` }]);
  return compound;
}

export async function listAssays(em: EntityManager, targetId?: number) {
  const assays = await em.find(Assay, targetId ? { target: targetId } : {}, { populate: ['target', 'referenceCompound'], orderBy: { target: { name: 'asc' }, code: 'asc' } });
  const counts = await em.getConnection().execute<{ assay_id: number; runs: string; last: string | null }[]>('select assay_id, count(*) as runs, max(run_date) as last from run group by assay_id');
  const byId = new Map(counts.map((c) => [c.assay_id, c]));
  return assays.map((a) => ({ ...assayView(a), runCount: Number(byId.get(a.id)?.runs ?? 0), lastRunDate: byId.get(a.id)?.last ?? null }));
}

export async function getAssay(em: EntityManager, id: number) {
  const assay = await em.findOne(Assay, { id }, { populate: ['target', 'referenceCompound'] });
  if (!assay) throw HttpError.notFound(`No assay with id ${id}.`);
  return assay;
}

/** An assay that new results may be added to: a retired one is kept for the results it has, and takes no more. */
export async function getOpenAssay(em: EntityManager, id: number) {
  const assay = await getAssay(em, id);
  if (assay.retiredAt) throw HttpError.conflict('assay_retired', `Assay ${assay.code} is retired: it keeps its results but takes no new ones. Restore it first.`);
  return assay;
}

export async function createAssay(em: EntityManager, actorId: number, input: AssayInput) {
  const problems = assayProblems(input);
  if (problems.length) throw HttpError.badRequest(`Invalid assay: ${problems.map((p) => `${p.field} ${p.message}`).join('; ')}`, problems);
  return em.transactional(async (tx) => {
    const code = input.code.toUpperCase();
    if (await tx.findOne(Assay, { code })) throw HttpError.conflict('duplicate_code', `An assay with the code ${code} already exists.`);
    const target = await tx.findOne(Target, { id: input.targetId });
    if (!target) throw HttpError.badRequest(`targetId: no target with id ${input.targetId}`, [{ field: 'targetId', message: `no target with id ${input.targetId}` }]);
    if (target.retiredAt) throw HttpError.badRequest(`targetId: ${target.geneSymbol} (${target.species}) is retired; restore it first`, [{ field: 'targetId', message: 'is retired' }]);
    const referenceCompound = await resolveReference(tx, input.referenceCompound);
    const { targetId: _t, referenceCompound: _r, ...fields } = input;
    const assay = tx.create(Assay, { ...fields, code, target, referenceCompound, createdBy: actorId, constitutiveActivity: input.constitutiveActivity ?? false } as never);
    await tx.persist(assay).flush();
    audit(tx, actorId, 'assay.create', 'Assay', assay.id, { ...input, code });
    return assayView(assay);
  });
}

export async function updateAssay(em: EntityManager, actorId: number, id: number, change: Partial<AssayInput> & { version?: number; retired?: boolean }) {
  return em.transactional(async (tx) => {
    const assay = await getAssay(tx, id);
    if (change.version !== undefined && change.version !== assay.version) throw HttpError.conflict('stale_version', 'The assay was changed by someone else; reload and try again.');
    const before = assayView(assay);
    const { version: _v, targetId, referenceCompound, code: _c, retired, ...fields } = change;
    if (retired !== undefined && retired !== !!assay.retiredAt) {
      assay.retiredAt = retired ? new Date() : null;
      audit(tx, actorId, retired ? 'assay.retire' : 'assay.restore', 'Assay', id, { code: assay.code });
    }
    const merged: AssayInput = { ...before, targetId: targetId ?? before.target.id, referenceCompound: referenceCompound === undefined ? before.referenceCompound?.registryNumber ?? null : referenceCompound, ...fields } as AssayInput;
    const problems = assayProblems(merged);
    if (problems.length) throw HttpError.badRequest(`Invalid assay: ${problems.map((p) => `${p.field} ${p.message}`).join('; ')}`, problems);
    if (targetId !== undefined) {
      const target = await tx.findOne(Target, { id: targetId });
      if (!target) throw HttpError.badRequest(`targetId: no target with id ${targetId}`, [{ field: 'targetId', message: `no target with id ${targetId}` }]);
      assay.target = target;
    }
    if (referenceCompound !== undefined) assay.referenceCompound = await resolveReference(tx, referenceCompound);
    tx.assign(assay, fields);
    await tx.flush();
    audit(tx, actorId, 'assay.update', 'Assay', id, { before, change });
    return assayView(assay);
  });
}
