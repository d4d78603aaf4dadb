import { LockMode, type EntityManager, type Knex } from '@mikro-orm/postgresql';
import { analyseStructure, StructureError, type ParsedStructure, type StructureFormat } from '../domain/chem.js';
import { batchNumber } from '../domain/registry-numbers.js';
import { FINGERPRINT_VERSION, fingerprintFromIdCode, toBitString } from '../domain/structure-search.js';
import { Batch, Compound, type IBatch, type ICompound } from '../entities/compound.entity.js';
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

export interface MatchRow {
  id: number;
  registry_number: string;
  smiles: string;
  id_code: string;
  no_stereo_id_code: string;
  tautomer_id_code: string | null;
}

/** Exact duplicate and the warnings a registrant must see before registering (one indexed query). */
/** A transaction of the import (knex), in which a record is checked and registered. */
export type ImportTransaction = Knex.Transaction;

async function rowsOf<T>(em: EntityManager, trx: ImportTransaction | undefined, sql: string, params: unknown[]): Promise<T[]> {
  if (!trx) return em.execute<T[]>(sql, params as never[]);
  const result = await trx.raw<{ rows: T[] }>(sql, params as Knex.RawBinding[]);
  return result.rows;
}

export async function checkStructure(em: EntityManager, parsed: ParsedStructure, trx?: ImportTransaction): Promise<{ duplicate: CompoundRef | null; warnings: StructureWarning[] }> {
  const rows = await rowsOf<MatchRow>(em, trx,
    `select id, registry_number, smiles, id_code, no_stereo_id_code, tautomer_id_code from compound
      where id_code = ? or no_stereo_id_code = ? or (tautomer_id_code is not null and tautomer_id_code = ?)
      order by number limit 20`,
    [parsed.idCode, parsed.noStereoIdCode, parsed.tautomerIdCode || '-'],
  );
  return judgeMatches(parsed, rows);
}

/**
 * The exact duplicate and the warnings for a structure, from registry rows that may also match
 * other structures (the import checks a whole chunk with one query): only rows sharing this
 * structure's ID code, stereo-free code or tautomer code count.
 */
export function judgeMatches(parsed: ParsedStructure, rows: MatchRow[]): { duplicate: CompoundRef | null; warnings: StructureWarning[] } {
  const toRef = (r: MatchRow): CompoundRef => ({ id: r.id, registryNumber: r.registry_number, smiles: r.smiles });
  const exact = rows.find((r) => r.id_code === parsed.idCode);
  if (exact) return { duplicate: toRef(exact), warnings: [] };
  const warnings: StructureWarning[] = [];
  for (const m of rows.filter((r) => r.no_stereo_id_code === parsed.noStereoIdCode).slice(0, 5)) {
    warnings.push({ kind: 'stereoisomer', match: toRef(m), message: `${m.registry_number} has the same constitution with other or undefined stereochemistry (a stereoisomer, enantiomer or racemate of this structure).` });
  }
  const tautomers = parsed.tautomerIdCode ? rows.filter((r) => r.no_stereo_id_code !== parsed.noStereoIdCode && r.tautomer_id_code === parsed.tautomerIdCode) : [];
  for (const m of tautomers.slice(0, 5)) {
    warnings.push({ kind: 'tautomer', match: toRef(m), message: `${m.registry_number} may be a tautomer of this structure.` });
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

function duplicateError(existing: CompoundRef): HttpError {
  return HttpError.conflict('duplicate_structure', `This parent structure is already registered as ${existing.registryNumber}; add a new batch to it instead.`, {
    existing,
    registryNumber: existing.registryNumber,
  });
}

export interface Registered {
  compoundId: number;
  registryNumber: string;
  batchNumber: string;
}

/**
 * Registers an analysed structure as a new compound with its first batch and its audit event, in
 * one transaction (plain SQL: this is the import's hot path). Throws 409 duplicate_structure when
 * the parent exists, also when a concurrent registration won the race: the unique index on the
 * ID code decides, and the rolled-back transaction leaves no gap in the numbers.
 */
export async function registerParsed(em: EntityManager, userId: number, prefix: string, parsed: ParsedStructure, input: Omit<RegisterInput, 'structure' | 'format' | 'confirm'>, submitted: string, source: string, trx?: ImportTransaction): Promise<Registered> {
  const knex: Knex = trx ?? em.getConnection().getKnex();
  if (input.seriesId) {
    const found = await rowsOf<{ id: number }>(em, trx, 'select id from series where id = ?', [input.seriesId]);
    if (!found.length) throw HttpError.badRequest(`seriesId: no series with id ${input.seriesId}`, [{ field: 'seriesId', message: `no series with id ${input.seriesId}` }]);
  }
  // Inside an import transaction each record has its own savepoint: a failed record rolls back
  // alone (with its number), the others of the chunk commit together. Alone, the one statement
  // of registerMany is its own transaction.
  if (trx) await knex.raw('savepoint registration');
  try {
    const [registered] = await registerMany(knex, userId, prefix, [{ parsed, input, submitted }], source);
    if (trx) await knex.raw('release savepoint registration');
    return registered;
  } catch (err) {
    if (trx) await knex.raw('rollback to savepoint registration');
    const e = err as { code?: string; constraint?: string };
    if (e.code === '23505' && /id_code/.test(String(e.constraint))) {
      const existing = await rowsOf<MatchRow>(em, trx, 'select id, registry_number, smiles from compound where id_code = ?', [parsed.idCode]);
      if (existing.length) throw duplicateError({ id: existing[0].id, registryNumber: existing[0].registry_number, smiles: existing[0].smiles });
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

export interface BulkEntry {
  parsed: ParsedStructure;
  input: Omit<RegisterInput, 'structure' | 'format' | 'confirm'>;
  submitted: string;
}

/**
 * Registers new structures (already checked: none registered, no two alike) in one statement,
 * inside the caller's transaction or as a transaction of its own: numbers are taken in order from the counter, each compound
 * gets its first batch and audit event. A unique violation (a concurrent registration of the
 * same structure) rejects the whole statement; the caller then falls back to one record at a
 * time. Numbers are formatted as registryNumber()/batchNumber() do (checked by a test).
 */
export async function registerMany(trx: Knex, userId: number, prefix: string, entries: BulkEntry[], source: string): Promise<Registered[]> {
  if (!entries.length) return [];
  const rows = entries.map((e, i) => {
    const p = e.parsed.properties;
    return {
      ord: i + 1,
      id_code: e.parsed.idCode,
      no_stereo: e.parsed.noStereoIdCode,
      tautomer: e.parsed.tautomerIdCode || null,
      fp: e.parsed.fingerprint ?? toBitString(fingerprintFromIdCode(e.parsed.idCode)),
      smiles: e.parsed.smiles,
      molfile: e.parsed.molfile,
      name: e.input.name?.trim() || null,
      aliases: [...new Set((e.input.aliases ?? []).map((a) => a.trim()).filter(Boolean))],
      formula: p.formula,
      mw: p.mw,
      mono: p.monoisotopicMass,
      clogp: p.clogp,
      tpsa: p.tpsa,
      hbd: p.hbd,
      hba: p.hba,
      rot: p.rotatableBonds,
      heavy: p.heavyAtoms,
      sc: p.stereoCentres,
      ss: p.stereoStatus,
      series_id: e.input.seriesId ?? null,
      salt_label: e.parsed.salt.label,
      salt_components: e.parsed.salt.components,
      batch_formula: e.parsed.salt.batchFormula,
      batch_weight: e.parsed.salt.batchFormulaWeight,
      submitted: e.submitted,
      purity: e.input.batch?.purity ?? null,
      amount_mg: e.input.batch?.amountMg ?? null,
      source: e.input.batch?.source ?? null,
      notebook_ref: e.input.batch?.notebookRef ?? null,
    };
  });
  const result = await trx.raw<{ rows: { id: number; ord: number; registry_number: string; batch_number: string }[] }>(
    `with n as (
       insert into registry_counter (name, value) values ('compound', :k)
       on conflict (name) do update set value = registry_counter.value + :k
       returning value
     ), r as (
       select x.*, n.value - :k + x.ord as number
       from n, jsonb_to_recordset(:rows::jsonb) as x(ord int, id_code text, no_stereo text, tautomer text, fp text, smiles text,
         molfile text, name text, aliases text[], formula text, mw float8, mono float8, clogp float8, tpsa float8, hbd int,
         hba int, rot int, heavy int, sc int, ss text, series_id int, salt_label text, salt_components jsonb,
         batch_formula text, batch_weight float8, submitted text, purity float8, amount_mg float8, source text, notebook_ref text)
     ), c as (
       insert into compound (created_at, updated_at, number, registry_number, id_code, no_stereo_id_code, tautomer_id_code,
         fingerprint, fingerprint_version, smiles, molfile, name, aliases, formula, mw, monoisotopic_mass, clogp, tpsa, hbd, hba, rotatable_bonds,
         heavy_atoms, stereo_centres, stereo_status, series_id, registrant_id, batch_count, version)
       select now(), now(), number, :prefix || '-' || lpad(number::text, greatest(6, length(number::text)), '0'),
         id_code, no_stereo, tautomer, fp::bit(1024), :fpVersion, smiles, molfile, name, coalesce(aliases, '{}'), formula, mw, mono, clogp, tpsa, hbd, hba,
         rot, heavy, sc, ss, series_id, :userId, 1, 1
       from r order by ord
       returning id, number, registry_number
     ), b as (
       insert into batch (created_at, updated_at, compound_id, sequence, batch_number, salt_label, salt_components,
         batch_formula, formula_weight, submitted_structure, purity, amount_mg, source, notebook_ref, registrant_id)
       select now(), now(), c.id, 1, c.registry_number || '-01', r.salt_label, r.salt_components, r.batch_formula,
         r.batch_weight, r.submitted, r.purity, r.amount_mg, r.source, r.notebook_ref, :userId
       from c join r using (number)
       returning compound_id, batch_number
     ), a as (
       insert into audit_event (at, actor_id, action, entity_type, entity_id, data)
       select now(), :userId, 'compound.register', 'Compound', c.id::text,
         jsonb_build_object('registryNumber', c.registry_number, 'batchNumber', b.batch_number, 'smiles', r.smiles,
           'salt', r.salt_label, 'source', :source::text)
       from c join b on b.compound_id = c.id join r using (number)
     )
     select c.id, r.ord, c.registry_number, b.batch_number
     from c join b on b.compound_id = c.id join r using (number)
     order by r.ord`,
    { k: entries.length, rows: JSON.stringify(rows), prefix, userId, source, fpVersion: FINGERPRINT_VERSION },
  );
  return result.rows.map((row) => ({ compoundId: Number(row.id), registryNumber: row.registry_number, batchNumber: row.batch_number }));
}

/** Exact and stereo matches of many structures at once (the import's check, one query a chunk). */
export async function findMatches(trx: Knex.Transaction, parsed: ParsedStructure[]): Promise<MatchRow[]> {
  if (!parsed.length) return [];
  const result = await trx.raw<{ rows: MatchRow[] }>(
    `select id, registry_number, smiles, id_code, no_stereo_id_code, tautomer_id_code from compound
      where id_code in (select jsonb_array_elements_text(?::jsonb)) or no_stereo_id_code in (select jsonb_array_elements_text(?::jsonb))
      order by number`,
    [JSON.stringify(parsed.map((p) => p.idCode)), JSON.stringify(parsed.map((p) => p.noStereoIdCode))],
  );
  return result.rows;
}
