// The role table is shared with the server (one source of truth); the server still checks every write.
export { CAPABILITIES, ROLE_LABELS, ROLES, can } from '../../../../api/src/domain/roles';
export type { Capability, Role } from '../../../../api/src/domain/roles';
