import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';

/** A drug-discovery programme: groups series (its targets come with the assay module). */
export const Project = defineEntity({
  name: 'Project',
  tableName: 'project',
  properties: {
    ...baseProperties,
    /** Short code, unique ("TERN"). */
    code: p.string().length(20).unique(),
    name: p.string().length(120),
    description: p.text().nullable(),
    /** Selectivity window in log units over the primary target (2 = 100-fold); a margin below it is flagged. */
    selectivityWindow: p.double().$type<number>().default(2),
    /** Ranking weights and the calls required at the primary target (domain/selectivity.ts); null: the defaults. */
    ranking: p.json<{ potency: number; margin: number; lipe: number; requiredCalls: string[] }>().nullable(),
  },
});
export type IProject = InferEntity<typeof Project>;

/** A chemical series in a project, with an optional core (R1…Rn attachment points) for R-groups. */
export const Series = defineEntity({
  name: 'Series',
  tableName: 'series',
  uniques: [{ properties: ['project', 'code'] }],
  properties: {
    ...baseProperties,
    project: () => p.manyToOne(Project),
    code: p.string().length(20),
    name: p.string().length(120),
    description: p.text().nullable(),
    /** Core as a molfile or SMILES with R-group pseudo-atoms; null when the series has none. */
    core: p.text().nullable(),
  },
});
export type ISeries = InferEntity<typeof Series>;
