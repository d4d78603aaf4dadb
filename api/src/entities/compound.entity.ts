import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { Series } from './project.entity.js';
import { User } from './user.entity.js';

/** A registered parent structure: unique by its OpenChemLib ID code (stereo-aware). */
export const Compound = defineEntity({
  name: 'Compound',
  tableName: 'compound',
  indexes: [
    { properties: ['noStereoIdCode'] },
    { properties: ['tautomerIdCode'] },
    { properties: ['series'] },
    { properties: ['registrant'] },
    // Structure search's SQL screen reads this narrow copy (index-only scan, in registry order)
    // instead of the wide table: 43 ms against 108 ms over 100,000 compounds (npm run bench:search).
    { name: 'compound_screen_index', expression: 'create index "compound_screen_index" on "compound" ("number") include ("id", "fingerprint_version", "fingerprint", "id_code")' },
  ],
  properties: {
    ...baseProperties,
    /** Gap-free number behind the registry number. */
    number: p.integer().unique(),
    registryNumber: p.string().length(32).unique(),
    idCode: p.text().unique(),
    noStereoIdCode: p.text(),
    tautomerIdCode: p.text().nullable(),
    smiles: p.text(),
    molfile: p.text().lazy(true, false),
    name: p.string().length(200).nullable(),
    aliases: p.array().default([]),
    formula: p.string().length(120),
    mw: p.double(),
    monoisotopicMass: p.double(),
    clogp: p.double(),
    tpsa: p.double(),
    hbd: p.integer(),
    hba: p.integer(),
    rotatableBonds: p.integer(),
    heavyAtoms: p.integer(),
    stereoCentres: p.integer(),
    stereoStatus: p.enum(['achiral', 'defined', 'undefined', 'partial']),
    /** Substructure screening fingerprint (domain/structure-search.ts); null until computed. */
    fingerprint: p.string().columnType('bit(1024)').nullable().lazy(true, false),
    /** FINGERPRINT_VERSION the fingerprint was computed with; another version is not used to screen. */
    fingerprintVersion: p.smallint().nullable(),
    series: () => p.manyToOne(Series).nullable(),
    /** Key (hash) of the series core the R-groups below were decomposed against; stale when it differs. */
    rgroupKey: p.string().length(64).nullable().lazy(true, false),
    /** R-group decomposition against the series core: {groups: {R1: SMILES…} | null, problem}. */
    rgroups: p.json<{ groups: Record<string, string> | null; problem: string | null }>().nullable().lazy(true, false),
    registrant: () => p.manyToOne(User),
    /** Batches made so far (the next batch number, locked with the row). */
    batchCount: p.integer().default(0),
    version: p.integer().version(),
  },
});
export type ICompound = InferEntity<typeof Compound>;

/** One physical sample (lot) of a compound, with its salt or solvate form. */
export const Batch = defineEntity({
  name: 'Batch',
  tableName: 'batch',
  uniques: [{ properties: ['compound', 'sequence'] }],
  properties: {
    ...baseProperties,
    compound: () => p.manyToOne(Compound),
    sequence: p.integer(),
    batchNumber: p.string().length(40).unique(),
    saltLabel: p.string().length(200),
    /** [{name, smiles, formula, mw, count}] — every stripped fragment, named or not. */
    saltComponents: p.json<{ name: string | null; smiles: string; formula: string; mw: number; count: number }[]>(),
    batchFormula: p.string().length(200),
    formulaWeight: p.double(),
    /** Structure as submitted (before the parent was kept), for the record. */
    submittedStructure: p.text().lazy(true, false),
    purity: p.double().nullable(),
    amountMg: p.double().nullable(),
    source: p.string().length(200).nullable(),
    notebookRef: p.string().length(100).nullable(),
    registrant: () => p.manyToOne(User),
  },
});
export type IBatch = InferEntity<typeof Batch>;

/** Gap-free counters (compound numbers): incremented under a row lock inside the registering transaction. */
export const RegistryCounter = defineEntity({
  name: 'RegistryCounter',
  tableName: 'registry_counter',
  properties: {
    name: p.string().length(40).primary(),
    value: p.integer().default(0),
  },
});
