import { AuditEvent } from './audit-event.entity.js';
import { User } from './user.entity.js';

export { AuditEvent, User };
export const entities = [User, AuditEvent];
