import { defineEntity, p, type InferEntity } from '@mikro-orm/core';

/** Who changed what and when (DESIGN §2): written in the same transaction as the change. */
export const AuditEvent = defineEntity({
  name: 'AuditEvent',
  tableName: 'audit_event',
  indexes: [{ properties: ['entityType', 'entityId'] }],
  properties: {
    id: p.bigint('number').primary().autoincrement(),
    at: p.datetime().onCreate(() => new Date()),
    /** The acting user's id; null for the system (seeders, migrations). */
    actorId: p.integer().nullable(),
    action: p.string().length(80),
    entityType: p.string().length(60),
    entityId: p.string().length(60),
    data: p.json<Record<string, unknown>>().nullable(),
  },
});

export type IAuditEvent = InferEntity<typeof AuditEvent>;
