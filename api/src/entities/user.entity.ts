import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import { ROLES } from '../domain/roles.js';
import { baseProperties } from './base.entity.js';
import { UserRepository } from './user.repository.js';

export const User = defineEntity({
  name: 'User',
  tableName: 'app_user',
  repository: () => UserRepository,
  checks: [{ name: 'app_user_email_lower', expression: 'email = lower(email)' }],
  properties: {
    ...baseProperties,
    /** Stored lower-cased; unique (case-insensitive by construction, checked by a constraint). */
    email: p.string().length(254).unique(),
    name: p.string().length(120),
    role: p.enum([...ROLES]),
    passwordHash: p.string().hidden().lazy(true, false),
    active: p.boolean().default(true),
    /** Bumped on deactivation, role or password change: older tokens stop working. */
    tokenVersion: p.integer().default(0),
    lastSignInAt: p.datetime().nullable(),
    /** Set while an invitation is pending (no password chosen yet); cleared on acceptance. */
    invitedAt: p.datetime().nullable(),
    passwordChangedAt: p.datetime().nullable(),
    version: p.integer().version(),
  },
});

export type IUser = InferEntity<typeof User>;

/** The User repository with its custom queries. */
export function usersOf(em: EntityManager): UserRepository {
  return em.getRepository(User) as unknown as UserRepository;
}
