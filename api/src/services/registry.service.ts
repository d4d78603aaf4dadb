import { LockMode, UniqueConstraintViolationException, type EntityManager } from '@mikro-orm/postgresql';
import { analyseStructure, StructureError, type ParsedStructure, type StructureFormat } from '../domain/chem.js';
import { batchNumber, registryNumber } from '../domain/registry-numbers.js';
import { AuditEvent } from '../entities/audit-event.entity.js';
import { Batch, Compound, type IBatch, type ICompound } from '../entities/compound.entity.js';
import { Series } from '../entities/project.entity.js';
import { User } from '../entities/user.entity.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';

export interface BatchInput {
  purity?: number | null;
  amountMg?: number | null;
  source?: string | null;
  notebookRef?: string | null;
}

export interface RegisterInput {
  structure: string;
  format?: StructureFormat;
  name?: string | null;
  aliases?: string[];
  seriesId?: number | null;
  batch?: BatchInput;
  /** The registrant saw the stereo / tautomer warnings and registers anyway. */
  confirm?: boolean;
}

export interface CompoundRef {
  id: number;
  registryNumber: string;
  smiles: string;
}

export interface StructureWarning {
  kind: 'stereoisomer' | 'tautomer' | 'undefined-stereo' | 'partial-stereo';
  message: string;
  match?: CompoundRef;
}

export interface Preview {
  parsed: Omit<ParsedStructure, 'molfile'> & { molfile: string };
  duplicate: CompoundRef | null;
  warnings: StructureWarning[];
}

function ref(c: ICompound): CompoundRef {
  return { id: c.id, registryNumber: c.registryNumber, smiles: c.smiles };
}

function analyse(text: string, format?: StructureFormat): ParsedStructure {
  try {
    return analyseStructure(text, format);
  } catch (err) {
    if (err instanceof StructureError) throw HttpError.badRequest(`structure: ${err.message}`, [{ field: 'structure', message: err.message }]);
    throw err;
  }
}

/** Exact duplicate and the warnings a registrant must see before registering. */
export async function checkStructure(em: EntityManager, parsed: ParsedStructure): Promise<{ duplicate: CompoundRef | null; warnings: StructureWarning[] }> {
  const exact = await em.findOne(Compound, { idCode: parsed.idCode });
  if (exact) return { duplicate: ref(exact), warnings: [] };
  const warnings: StructureWarning[] = [];
  const stereoMatches = await em.find(Compound, { noStereoIdCode: parsed.noStereoIdCode }, { limit: 5, orderBy: { number: 'asc' } });
  for (const m of stereoMatches) {
    warnings.push({ kind: 'stereoisomer', match: ref(m), message: `${m.registryNumber} has the same constitution with other or undefined stereochemistry (a stereoisomer, enantiomer or racemate of this structure).` });
  }
  if (parsed.tautomerIdCode) {
    const tautomers = await em.find(Compound, { tautomerIdCode: parsed.tautomerIdCode, noStereoIdCode: { $ne: parsed.noStereoIdCode } }, { limit: 5, orderBy: { number: 'asc' } });
    for (const m of tautomers) {
      warnings.push({ kind: 'tautomer', match: ref(m), message: `${m.registryNumber} may be a tautomer of this structure.` });
    }
  }
  const { stereoStatus, stereoCentres } = parsed.properties;
  if (stereoStatus === 'undefined') {
    warnings.push({ kind: 'undefined-stereo', message: `None of the ${stereoCentres} stereocentre(s) is defined: this registers the structure with unknown configuration (or as a racemate), distinct from each defined stereoisomer.` });
  } else if (stereoStatus === 'partial') {
    warnings.push({ kind: 'partial-stereo', message: `Some of the ${stereoCentres} stereocentres are not defined.` });
  }
  return { duplicate: null, warnings };
}

export async function previewStructure(em: EntityManager, text: string, format?: StructureFormat): Promise<Preview> {
  const parsed = analyse(text, format);
  const check = await checkStructure(em, parsed);
  return { parsed, ...check };
}

/** Next value of a gap-free counter; the row stays locked until the transaction ends. */
async function nextNumber(tx: EntityManager, name: string): Promise<number> {
  const rows = await tx.execute<{ value: number }[]>(
    `insert into registry_counter (name, value) values (?, 1)
     on conflict (name) do update set value = registry_counter.value + 1
     returning value`,
    [name],
  );
  return Number(rows[0].value);
}

function duplicateError(existing: CompoundRef): HttpError {
  return HttpError.conflict('duplicate_structure', `This parent structure is already registered as ${existing.registryNumber}; add a new batch to it instead.`, {
    existing,
    registryNumber: existing.registryNumber,
  });
}

export interface Registered {
  compound: ICompound;
  batch: IBatch;
}

/**
 * Registers an analysed structure as a new compound with its first batch, in one transaction.
 * Throws 409 duplicate_structure when the parent exists (also when a concurrent registration
 * won the race: the unique index on the ID code decides).
 */
export async function registerParsed(em: EntityManager, userId: number, prefix: string, parsed: ParsedStructure, input: Omit<RegisterInput, 'structure' | 'format' | 'confirm'>, submitted: string, source: string): Promise<Registered> {
  try {
    return await em.transactional(async (tx) => {
      const series = input.seriesId ? await tx.findOne(Series, { id: input.seriesId }) : null;
      if (input.seriesId && !series) throw HttpError.badRequest(`seriesId: no series with id ${input.seriesId}`, [{ field: 'seriesId', message: `no series with id ${input.seriesId}` }]);
      const n = await nextNumber(tx, 'compound');
      const reg = registryNumber(prefix, n);
      const registrant = tx.getReference(User, userId);
      const p = parsed.properties;
      const compound = tx.create(Compound, {
        number: n,
        registryNumber: reg,
        idCode: parsed.idCode,
        noStereoIdCode: parsed.noStereoIdCode,
        tautomerIdCode: parsed.tautomerIdCode || null,
        smiles: parsed.smiles,
        molfile: parsed.molfile,
        name: input.name?.trim() || null,
        aliases: [...new Set((input.aliases ?? []).map((a) => a.trim()).filter(Boolean))],
        formula: p.formula,
        mw: p.mw,
        monoisotopicMass: p.monoisotopicMass,
        clogp: p.clogp,
        tpsa: p.tpsa,
        hbd: p.hbd,
        hba: p.hba,
        rotatableBonds: p.rotatableBonds,
        heavyAtoms: p.heavyAtoms,
        stereoCentres: p.stereoCentres,
        stereoStatus: p.stereoStatus,
        series,
        registrant,
        batchCount: 1,
      });
      const batch = tx.create(Batch, {
        compound,
        sequence: 1,
        batchNumber: batchNumber(reg, 1),
        saltLabel: parsed.salt.label,
        saltComponents: parsed.salt.components,
        batchFormula: parsed.salt.batchFormula,
        formulaWeight: parsed.salt.batchFormulaWeight,
        submittedStructure: submitted,
        purity: input.batch?.purity ?? null,
        amountMg: input.batch?.amountMg ?? null,
        source: input.batch?.source ?? null,
        notebookRef: input.batch?.notebookRef ?? null,
        registrant,
      });
      tx.persist([compound, batch]);
      await tx.flush();
      tx.persist(
        tx.create(AuditEvent, { actorId: userId, action: 'compound.register', entityType: 'Compound', entityId: String(compound.id), data: { registryNumber: reg, batchNumber: batch.batchNumber, smiles: parsed.smiles, salt: parsed.salt.label, source } }),
      );
      return { compound, batch };
    });
  } catch (err) {
    if (err instanceof UniqueConstraintViolationException && /id_code/.test(String(err.message))) {
      const existing = await em.fork().findOne(Compound, { idCode: parsed.idCode });
      if (existing) throw duplicateError(ref(existing));
    }
    throw err;
  }
}

export async function registerCompound(em: EntityManager, userId: number, prefix: string, input: RegisterInput): Promise<Registered & { warnings: StructureWarning[] }> {
  const parsed = analyse(input.structure, input.format);
  const { duplicate, warnings } = await checkStructure(em, parsed);
  if (duplicate) throw duplicateError(duplicate);
  if (warnings.length && !input.confirm) {
    throw HttpError.conflict('confirmation_required', `Check the structure before registering: ${warnings.map((w) => w.message).join(' ')} Send "confirm": true to register it anyway.`, { warnings });
  }
  const registered = await registerParsed(em, userId, prefix, parsed, input, input.structure, 'single');
  return { ...registered, warnings };
}

/** Adds a batch to an existing compound; a structure, when given, must have the same parent and sets the salt form. */
export async function addBatch(em: EntityManager, userId: number, compoundId: number, input: BatchInput & { structure?: string; format?: StructureFormat }): Promise<IBatch> {
  const parsed = input.structure ? analyse(input.structure, input.format) : null;
  return em.transactional(async (tx) => {
    const compound = await tx.findOne(Compound, { id: compoundId }, { lockMode: LockMode.PESSIMISTIC_WRITE });
    if (!compound) throw HttpError.notFound(`No compound with id ${compoundId}.`);
    if (parsed && parsed.idCode !== compound.idCode) {
      throw HttpError.badRequest(`structure: its parent (${parsed.smiles}) is not ${compound.registryNumber} (${compound.smiles}); register it as a new compound instead.`, [{ field: 'structure', message: 'parent differs from the compound' }]);
    }
    compound.batchCount += 1;
    const sequence = compound.batchCount;
    const batch = tx.create(Batch, {
      compound,
      sequence,
      batchNumber: batchNumber(compound.registryNumber, sequence),
      saltLabel: parsed?.salt.label ?? 'parent (no salt or solvate)',
      saltComponents: parsed?.salt.components ?? [],
      batchFormula: parsed?.salt.batchFormula ?? compound.formula,
      formulaWeight: parsed?.salt.batchFormulaWeight ?? Number(compound.mw),
      submittedStructure: input.structure ?? compound.smiles,
      purity: input.purity ?? null,
      amountMg: input.amountMg ?? null,
      source: input.source ?? null,
      notebookRef: input.notebookRef ?? null,
      registrant: tx.getReference(User, userId),
    });
    tx.persist(batch);
    await tx.flush();
    audit(tx, userId, 'batch.create', 'Batch', batch.id, { compound: compound.registryNumber, batchNumber: batch.batchNumber, salt: batch.saltLabel });
    return batch;
  });
}
