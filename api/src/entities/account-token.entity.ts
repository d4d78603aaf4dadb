import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity.js';

export const ACCOUNT_TOKEN_PURPOSES = ['invitation', 'password-reset'] as const;
export type AccountTokenPurpose = (typeof ACCOUNT_TOKEN_PURPOSES)[number];

/**
 * A single-use link sent by e-mail (invitation or password reset). Only the SHA-256 of the
 * secret is stored, so a copy of the database cannot be used to take over an account.
 */
export const AccountToken = defineEntity({
  name: 'AccountToken',
  tableName: 'account_token',
  indexes: [{ properties: ['user', 'purpose'] }],
  properties: {
    id: p.integer().primary().autoincrement(),
    createdAt: p.datetime().onCreate(() => new Date()),
    user: () => p.manyToOne(User),
    purpose: p.enum([...ACCOUNT_TOKEN_PURPOSES]),
    /** Hex SHA-256 of the secret in the link. */
    tokenHash: p.string().length(64).unique(),
    expiresAt: p.datetime(),
    /** Set when used or superseded by a newer link; a used token never works again. */
    usedAt: p.datetime().nullable(),
    /** The admin who sent an invitation; null for a reset the user asked for. */
    createdById: p.integer().nullable(),
  },
});

export type IAccountToken = InferEntity<typeof AccountToken>;
