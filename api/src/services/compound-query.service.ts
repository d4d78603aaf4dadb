import type { EntityManager, FilterQuery } from '@mikro-orm/postgresql';
import Fuse from 'fuse.js';
import { looksLikeRegistryNumber } from '../domain/registry-numbers.js';
import { AuditEvent } from '../entities/audit-event.entity.js';
import { Batch, Compound, type IBatch, type ICompound } from '../entities/compound.entity.js';
import { HttpError } from '../http-error.js';
import { User } from '../entities/user.entity.js';

export interface CompoundSummary {
  id: number;
  registryNumber: string;
  name: string | null;
  aliases: string[];
  smiles: string;
  idCode: string;
  formula: string;
  mw: number;
  clogp: number;
  tpsa: number;
  hbd: number;
  hba: number;
  rotatableBonds: number;
  heavyAtoms: number;
  stereoCentres: number;
  stereoStatus: string;
  monoisotopicMass: number;
  series: { id: number; code: string; name: string } | null;
  registrant: { id: number; name: string };
  batchCount: number;
  createdAt: string;
}

export interface BatchView {
  id: number;
  batchNumber: string;
  saltLabel: string;
  saltComponents: IBatch['saltComponents'];
  batchFormula: string;
  formulaWeight: number;
  purity: number | null;
  amountMg: number | null;
  source: string | null;
  notebookRef: string | null;
  registrant: { id: number; name: string };
  createdAt: string;
}

export function compoundSummary(c: ICompound): CompoundSummary {
  const series = c.series ?? null;
  return {
    id: c.id,
    registryNumber: c.registryNumber,
    name: c.name ?? null,
    aliases: c.aliases ?? [],
    smiles: c.smiles,
    idCode: c.idCode,
    formula: c.formula,
    mw: Number(c.mw),
    monoisotopicMass: Number(c.monoisotopicMass),
    clogp: Number(c.clogp),
    tpsa: Number(c.tpsa),
    hbd: c.hbd,
    hba: c.hba,
    rotatableBonds: c.rotatableBonds,
    heavyAtoms: c.heavyAtoms,
    stereoCentres: c.stereoCentres,
    stereoStatus: c.stereoStatus,
    series: series ? { id: series.id, code: series.code, name: series.name } : null,
    registrant: { id: c.registrant.id, name: c.registrant.name ?? '' },
    batchCount: c.batchCount,
    createdAt: c.createdAt.toISOString(),
  };
}

export function batchView(b: IBatch): BatchView {
  return {
    id: b.id,
    batchNumber: b.batchNumber,
    saltLabel: b.saltLabel,
    saltComponents: b.saltComponents,
    batchFormula: b.batchFormula,
    formulaWeight: Number(b.formulaWeight),
    purity: b.purity == null ? null : Number(b.purity),
    amountMg: b.amountMg == null ? null : Number(b.amountMg),
    source: b.source ?? null,
    notebookRef: b.notebookRef ?? null,
    registrant: { id: b.registrant.id, name: b.registrant.name ?? '' },
    createdAt: b.createdAt.toISOString(),
  };
}

export const SORTABLE = ['registryNumber', 'name', 'mw', 'clogp', 'tpsa', 'heavyAtoms', 'createdAt'] as const;
export type SortKey = (typeof SORTABLE)[number];

export interface ListQuery {
  page: number;
  pageSize: number;
  sort: SortKey;
  dir: 'asc' | 'desc';
  seriesId?: number;
  registrantId?: number;
  q?: string;
}

/** Fuzzy text over registry numbers, names and aliases (fuse.js), then paging in the database. */
export async function textMatches(em: EntityManager, q: string, where: FilterQuery<ICompound>): Promise<number[]> {
  const rows = await em.find(Compound, where, { fields: ['id', 'registryNumber', 'name', 'aliases'], orderBy: { number: 'asc' } });
  const fuse = new Fuse(rows.map((r) => ({ id: r.id, registryNumber: r.registryNumber, name: r.name ?? '', aliases: r.aliases ?? [] })), {
    keys: [
      { name: 'registryNumber', weight: 3 },
      { name: 'name', weight: 2 },
      { name: 'aliases', weight: 2 },
    ],
    threshold: looksLikeRegistryNumber(q) ? 0.1 : 0.35,
    ignoreLocation: true,
    includeScore: true,
  });
  return fuse.search(q.trim(), { limit: 5000 }).map((r) => r.item.id);
}

export async function listCompounds(em: EntityManager, query: ListQuery) {
  const where: FilterQuery<ICompound> = {};
  if (query.seriesId) where.series = query.seriesId;
  if (query.registrantId) where.registrant = query.registrantId;
  const offset = (query.page - 1) * query.pageSize;
  if (query.q?.trim()) {
    const ids = await textMatches(em, query.q, where);
    const pageIds = ids.slice(offset, offset + query.pageSize);
    const found = pageIds.length ? await em.find(Compound, { id: { $in: pageIds } }, { populate: ['series', 'registrant'] }) : [];
    const byId = new Map(found.map((c) => [c.id, c]));
    return { items: pageIds.map((id) => byId.get(id)!).filter(Boolean).map(compoundSummary), total: ids.length, page: query.page, pageSize: query.pageSize, sort: 'relevance' };
  }
  const orderField = query.sort === 'registryNumber' ? 'number' : query.sort;
  const [items, total] = await em.findAndCount(Compound, where, {
    populate: ['series', 'registrant'],
    orderBy: orderField === 'number' ? { number: query.dir } : { [orderField]: query.dir, number: 'asc' },
    limit: query.pageSize,
    offset,
  });
  return { items: items.map(compoundSummary), total, page: query.page, pageSize: query.pageSize, sort: query.sort };
}

export async function findCompound(em: EntityManager, idOrRegistry: string): Promise<ICompound> {
  const byNumber = /^\d+$/.test(idOrRegistry);
  const compound = await em.findOne(Compound, byNumber ? { id: Number(idOrRegistry) } : { registryNumber: idOrRegistry.toUpperCase() }, { populate: ['series', 'registrant', 'molfile'] });
  if (!compound) throw HttpError.notFound(`No compound ${byNumber ? `with id ${idOrRegistry}` : idOrRegistry}.`);
  return compound;
}

export async function compoundDetail(em: EntityManager, idOrRegistry: string) {
  const compound = await findCompound(em, idOrRegistry);
  const batches = await em.find(Batch, { compound }, { populate: ['registrant'], orderBy: { sequence: 'asc' } });
  const events = await em.find(
    AuditEvent,
    { $or: [{ entityType: 'Compound', entityId: String(compound.id) }, { entityType: 'Batch', entityId: { $in: batches.map((b) => String(b.id)) } }] },
    { orderBy: { at: 'desc', id: 'desc' }, limit: 200 },
  );
  const actorIds = [...new Set(events.map((e) => e.actorId).filter((id): id is number => id != null))];
  const users = actorIds.length ? await em.find(User, { id: { $in: actorIds } }, { fields: ['id', 'name'] }) : [];
  const actors = new Map(users.map((u) => [u.id, u.name]));
  return {
    ...compoundSummary(compound),
    molfile: compound.molfile,
    batches: batches.map(batchView),
    history: events.map((e) => ({ at: e.at.toISOString(), action: e.action, actor: e.actorId != null ? (actors.get(e.actorId) ?? `user ${e.actorId}`) : 'system', data: e.data })),
  };
}
