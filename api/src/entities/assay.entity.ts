import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { Batch, Compound } from './compound.entity.js';
import { Project } from './project.entity.js';
import { User } from './user.entity.js';

export const TARGET_FAMILIES = ['GPCR', 'ion channel', 'nuclear receptor', 'transporter', 'enzyme', 'other'] as const;
export const ASSAY_KINDS = ['binding', 'functional-agonist', 'functional-antagonist', 'allosteric-modulation'] as const;
export type AssayKind = (typeof ASSAY_KINDS)[number];
export const RESULT_STATUSES = ['draft', 'submitted', 'approved', 'rejected'] as const;
export type ResultStatus = (typeof RESULT_STATUSES)[number];
export const CONTROL_KINDS = ['basal', 'max', 'blank'] as const;

/** A receptor of the panel (DESIGN §2). */
export const Target = defineEntity({
  name: 'Target',
  tableName: 'target',
  uniques: [{ properties: ['geneSymbol', 'species'] }],
  properties: {
    ...baseProperties,
    name: p.string().length(120),
    geneSymbol: p.string().length(30),
    family: p.enum([...TARGET_FAMILIES]),
    species: p.string().length(60),
    description: p.text().nullable(),
    /** Retired instead of deleted (results depend on it): kept, shown as retired, no new assays. */
    retiredAt: p.datetime().nullable(),
    version: p.integer().version(),
  },
});
export type ITarget = InferEntity<typeof Target>;

/** A project's panel: its primary target and its anti-targets. */
export const ProjectTarget = defineEntity({
  name: 'ProjectTarget',
  tableName: 'project_target',
  uniques: [{ properties: ['project', 'target'] }],
  properties: {
    ...baseProperties,
    project: () => p.manyToOne(Project),
    target: () => p.manyToOne(Target),
    role: p.enum(['primary', 'anti-target']),
    /** Agonism at this receptor is unwanted on its own (an agonism anti-target). */
    agonismUnwanted: p.boolean().default(false),
  },
});
export type IProjectTarget = InferEntity<typeof ProjectTarget>;

/** An assay protocol: what is measured at which receptor and what its computations need. */
export const Assay = defineEntity({
  name: 'Assay',
  tableName: 'assay',
  properties: {
    ...baseProperties,
    /** Short code, unique ("T1A-BIND"). */
    code: p.string().length(30).unique(),
    name: p.string().length(160),
    target: () => p.manyToOne(Target),
    kind: p.enum([...ASSAY_KINDS]),
    readout: p.string().length(80),
    species: p.string().length(60),
    cellSystem: p.string().length(160).nullable(),
    constitutiveActivity: p.boolean().default(false),
    /** Binding: radioligand name, its concentration and Kd (mol/L). */
    radioligand: p.string().length(120).nullable(),
    radioligandConcM: p.double().$type<number>().nullable(),
    radioligandKdM: p.double().$type<number>().nullable(),
    /** Functional and modulator modes: the reference full agonist. */
    referenceCompound: () => p.manyToOne(Compound).nullable(),
    /** Antagonist and modulator modes: the agonist's concentration (mol/L), its EC50 (mol/L) and Hill slope. */
    agonistConcM: p.double().$type<number>().nullable(),
    agonistEc50M: p.double().$type<number>().nullable(),
    agonistHill: p.double().$type<number>().nullable(),
    description: p.text().nullable(),
    /**
     * Ligand-type call thresholds of this assay, merged over DEFAULT_CALL_THRESHOLDS
     * (domain/ligand-call.ts; common practice, not a published standard). Null: the defaults.
     */
    callThresholds: p.json<Record<string, number>>().nullable(),
    createdBy: () => p.manyToOne(User),
    /** Retired instead of deleted (results depend on it): kept and shown as retired. */
    retiredAt: p.datetime().nullable(),
    version: p.integer().version(),
  },
});
export type IAssay = InferEntity<typeof Assay>;

/** One experiment of an assay on a date by an operator. */
export const Run = defineEntity({
  name: 'Run',
  tableName: 'run',
  indexes: [{ properties: ['assay'] }],
  properties: {
    ...baseProperties,
    assay: () => p.manyToOne(Assay),
    runDate: p.string().length(10),
    operator: () => p.manyToOne(User),
    format: p.enum(['long', 'plate']),
    notes: p.text().nullable(),
    /** How the responses were normalised: method, basal and maximum signals, their source. */
    normalisation: p.json<Record<string, unknown>>(),
    /** Rows dropped at upload at the user's request (their line numbers and problems). */
    droppedRows: p.json<{ where: string; message: string }[]>().nullable(),
  },
});
export type IRun = InferEntity<typeof Run>;

/** An uploaded raw-data file, kept as the run's attachment. */
export const RunFile = defineEntity({
  name: 'RunFile',
  tableName: 'run_file',
  properties: {
    ...baseProperties,
    run: () => p.manyToOne(Run),
    role: p.enum(['long', 'matrix', 'map']),
    fileName: p.string().length(255),
    mediaType: p.string().length(120),
    size: p.integer(),
    content: p.blob().lazy(true, false),
  },
});
export type IRunFile = InferEntity<typeof RunFile>;

/** One concentration–response point (or a control well) of a run. */
export const Measurement = defineEntity({
  name: 'Measurement',
  tableName: 'measurement',
  indexes: [{ properties: ['run'] }, { properties: ['batch'] }],
  properties: {
    id: p.bigint('number').primary().autoincrement(),
    run: () => p.manyToOne(Run),
    batch: () => p.manyToOne(Batch).nullable(),
    control: p.enum([...CONTROL_KINDS]).nullable(),
    concentrationM: p.double().$type<number>().nullable(),
    response: p.double().$type<number>(),
    normalised: p.double().$type<number>().nullable(),
    replicate: p.integer().nullable(),
    well: p.string().length(4).nullable(),
    condition: p.string().length(120).nullable(),
    excluded: p.boolean().default(false),
    line: p.integer().nullable(),
  },
});
export type IMeasurement = InferEntity<typeof Measurement>;

/** A value with its unit, qualifier and uncertainty (DESIGN §2). */
export interface ResultValue {
  value: number;
  qualifier: '=' | '<' | '>';
  unit: string;
  se?: number | null;
  ci95?: [number, number] | null;
  n?: number | null;
}
/**
 * Keys of a result's values. Curve fits: pEC50, pIC50, pKi, pKB, emax, alpha, hillSlope, top,
 * bottom. Mechanism analyses (services/mechanism.service.ts): logTau, logKA, logTauKA
 * (operational model, log(τ/KA) in log M⁻¹); pA2, schildSlope (and pKB when the slope is
 * compatible with 1) of a Schild analysis; foldShift (EC50(0)/EC50([B]) at the highest modulator
 * concentration), emaxChange (fraction), logKB and logCooperativity (log α of the allosteric
 * ternary complex model) of an allosteric-modulation analysis; basalChange (% of the reference
 * window) of an agonist-mode curve in a constitutively active system.
 */
export const RESULT_VALUE_KEYS = ['pEC50', 'pIC50', 'pKi', 'pKB', 'emax', 'alpha', 'hillSlope', 'top', 'bottom', 'logTau', 'logKA', 'logTauKA', 'pA2', 'schildSlope', 'foldShift', 'emaxChange', 'logKB', 'logCooperativity', 'basalChange'] as const;
export type ResultValueKey = (typeof RESULT_VALUE_KEYS)[number];
export type ResultValues = Partial<Record<ResultValueKey, ResultValue>>;

/** Fitted and derived parameters for a batch × run (× condition), or values entered by hand. */
export const Result = defineEntity({
  name: 'Result',
  tableName: 'result',
  indexes: [{ properties: ['status'] }, { properties: ['compound'] }, { properties: ['run'] }, { properties: ['assay'] }],
  properties: {
    ...baseProperties,
    assay: () => p.manyToOne(Assay),
    run: () => p.manyToOne(Run).nullable(),
    batch: () => p.manyToOne(Batch),
    compound: () => p.manyToOne(Compound),
    condition: p.string().length(120).nullable(),
    source: p.enum(['fit', 'manual']),
    /** The run's reference full agonist curve (α = 1 by definition). */
    isReference: p.boolean().default(false),
    status: p.enum([...RESULT_STATUSES]).default('draft'),
    values: p.json<ResultValues>(),
    /** The fit: parameters, flags, messages, fixed parameters (null for manual entries). */
    fit: p.json<Record<string, unknown>>().nullable(),
    fixed: p.json<{ top?: number; bottom?: number; hillSlope?: number }>().nullable(),
    /**
     * The run-level mechanism analysis behind the mechanism values (operational model, Schild,
     * allosteric modulation): its kind, inputs, outputs, flags and messages. Null when none.
     */
    analysis: p.json<Record<string, unknown>>().nullable(),
    /** Manual entry: where the values were measured and on how many experiments. */
    note: p.text().nullable(),
    createdBy: () => p.manyToOne(User),
    submittedBy: () => p.manyToOne(User).nullable(),
    submittedAt: p.datetime().nullable(),
    reviewedBy: () => p.manyToOne(User).nullable(),
    reviewedAt: p.datetime().nullable(),
    reviewComment: p.text().nullable(),
    version: p.integer().version(),
  },
});
export type IResult = InferEntity<typeof Result>;

/** A comment on a record (result, compound, run). */
export const Comment = defineEntity({
  name: 'Comment',
  tableName: 'comment',
  indexes: [{ properties: ['entityType', 'entityId'] }],
  properties: {
    ...baseProperties,
    entityType: p.string().length(60),
    entityId: p.string().length(60),
    author: () => p.manyToOne(User),
    text: p.text(),
  },
});
export type IComment = InferEntity<typeof Comment>;
