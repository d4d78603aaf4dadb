// Roles and what each may do (DESIGN §1). Pure data and functions: routes ask `can(role, action)`
// through the requireCapability middleware; the web app mirrors this table to hide what a role
// may not do, but the server is the authority.

export const ROLES = ['admin', 'chemist', 'pharmacologist', 'lead', 'viewer'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Administrator',
  chemist: 'Medicinal chemist',
  pharmacologist: 'Pharmacologist',
  lead: 'Project lead',
  viewer: 'Viewer',
};

/** Every capability a route can demand, with the roles that hold it. */
export const CAPABILITIES = {
  /** Read registry, assays, results, SAR and selectivity. */
  read: ['admin', 'chemist', 'pharmacologist', 'lead', 'viewer'],
  /** Users, roles, invitations, targets and settings. */
  manageUsers: ['admin'],
  /** Create and edit projects (programmes). */
  manageProjects: ['admin', 'lead'],
  /** Register compounds and batches, define series. */
  register: ['admin', 'chemist'],
  /** Edit the receptor panel and a project's primary target and anti-targets. */
  manageTargets: ['admin', 'pharmacologist'],
  /** Define assays, upload raw data, fit, call ligand type, submit. */
  enterResults: ['admin', 'pharmacologist'],
  /** Approve or reject submitted results. */
  review: ['admin', 'lead'],
  /** Decide which compounds progress (progress, hold, stop) and set a project's ranking and window. */
  decide: ['admin', 'lead'],
  /** Export tables. */
  export: ['admin', 'chemist', 'pharmacologist', 'lead', 'viewer'],
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof CAPABILITIES;

export function isRole(value: unknown): value is Role {
  return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}

export function can(role: Role, capability: Capability): boolean {
  return (CAPABILITIES[capability] as readonly Role[]).includes(role);
}

export interface AdminChange {
  /** Active admins before the change, by id. */
  activeAdminIds: readonly number[];
  targetId: number;
  nextRole: Role;
  nextActive: boolean;
}

/** True when the change would leave no active administrator. */
export function removesLastAdmin(change: AdminChange): boolean {
  const { activeAdminIds, targetId, nextRole, nextActive } = change;
  if (!activeAdminIds.includes(targetId)) return false;
  const staysAdmin = nextRole === 'admin' && nextActive;
  return !staysAdmin && activeAdminIds.length <= 1;
}
