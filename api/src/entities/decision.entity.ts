import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { Compound } from './compound.entity.js';
import { Project } from './project.entity.js';
import { User } from './user.entity.js';
import type { DecisionSnapshot } from '../domain/selectivity.js';

export const DECISIONS = ['progress', 'hold', 'stop'] as const;
export type DecisionKind = (typeof DECISIONS)[number];

/**
 * A lead's decision on a compound in a project, with its rationale and the data it rested on at
 * the time. Decisions are never edited: a new one supersedes the last. Later results that change
 * the picture flag the current decision for another look.
 */
export const Decision = defineEntity({
  name: 'Decision',
  tableName: 'decision',
  indexes: [{ properties: ['project', 'compound'] }],
  properties: {
    ...baseProperties,
    project: () => p.manyToOne(Project),
    compound: () => p.manyToOne(Compound),
    decision: p.enum([...DECISIONS]),
    rationale: p.text(),
    author: () => p.manyToOne(User),
    snapshot: p.json<DecisionSnapshot>(),
    /** Later data changed the picture: why (null while it still holds). */
    flaggedReason: p.text().nullable(),
    flaggedAt: p.datetime().nullable(),
    /** False once a newer decision on the same compound and project exists. */
    current: p.boolean().default(true),
  },
});
export type IDecision = InferEntity<typeof Decision>;
