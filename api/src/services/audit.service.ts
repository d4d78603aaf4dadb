import type { EntityManager } from '@mikro-orm/postgresql';
import { AuditEvent } from '../entities/audit-event.entity.js';

/** Queues an audit event in the caller's unit of work (flushed with the change it records). */
export function audit(em: EntityManager, actorId: number | null, action: string, entityType: string, entityId: string | number, data?: Record<string, unknown>) {
  em.persist(em.create(AuditEvent, { actorId, action, entityType, entityId: String(entityId), data: data ?? null }));
}
