import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { Target } from './assay.entity.js';
import { Compound } from './compound.entity.js';
import { User } from './user.entity.js';

/** One item of evidence behind a call: an approved result and the rule it met. */
export interface CallEvidence {
  resultId: number;
  assayId: number;
  assayCode: string;
  note: string;
}

/**
 * The ligand-type call of a compound at a target (DESIGN §3): computed from its approved results
 * by the rule of domain/ligand-call.ts, or set by hand with a reason. A computed suggestion, to be
 * confirmed by a qualified pharmacologist.
 */
export const LigandCall = defineEntity({
  name: 'LigandCall',
  tableName: 'ligand_call',
  uniques: [{ properties: ['compound', 'target'] }],
  indexes: [{ properties: ['target'] }],
  properties: {
    ...baseProperties,
    compound: () => p.manyToOne(Compound),
    target: () => p.manyToOne(Target),
    /** The call in force: the manual one when overridden, else the computed one. */
    call: p.string().length(40),
    source: p.enum(['rule', 'manual']),
    /** The latest computed call, its rule, evidence and conflicts (kept under a manual override too). */
    computedCall: p.string().length(40),
    rule: p.text(),
    evidence: p.json<CallEvidence[]>(),
    conflicts: p.json<{ resultIds: number[]; note: string }[]>().nullable(),
    computedAt: p.datetime(),
    overrideReason: p.text().nullable(),
    overriddenBy: () => p.manyToOne(User).nullable(),
    overriddenAt: p.datetime().nullable(),
    /** A later computed call disagrees with the manual override: flagged for review. */
    contradicted: p.boolean().default(false),
    version: p.integer().version(),
  },
});
export type ILigandCall = InferEntity<typeof LigandCall>;
