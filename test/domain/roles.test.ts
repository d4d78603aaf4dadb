import { expect } from 'chai';
import { can, isRole, removesLastAdmin, ROLES, type Capability, type Role } from '../../api/src/domain/roles.js';

// The role table of DESIGN §1 (product design, not a published source).
const expected: Record<Capability, Role[]> = {
  read: ['admin', 'chemist', 'pharmacologist', 'lead', 'viewer'],
  manageUsers: ['admin'],
  manageProjects: ['admin', 'lead'],
  register: ['admin', 'chemist'],
  manageTargets: ['admin', 'pharmacologist'],
  enterResults: ['admin', 'pharmacologist'],
  review: ['admin', 'lead'],
  // Issue 8: only leads and admins decide which compounds progress.
  decide: ['admin', 'lead'],
  export: ['admin', 'chemist', 'pharmacologist', 'lead', 'viewer'],
};

describe('domain/roles', () => {
  for (const [capability, roles] of Object.entries(expected) as [Capability, Role[]][]) {
    for (const role of ROLES) {
      const allowed = roles.includes(role);
      it(`${role} ${allowed ? 'may' : 'may not'} ${capability}`, () => {
        expect(can(role, capability)).to.equal(allowed);
      });
    }
  }

  it('recognises only the five roles', () => {
    expect(ROLES.every(isRole)).to.equal(true);
    expect(isRole('superuser')).to.equal(false);
    expect(isRole(undefined)).to.equal(false);
  });

  const cases: [string, Parameters<typeof removesLastAdmin>[0], boolean][] = [
    ['demoting the only admin', { activeAdminIds: [1], targetId: 1, nextRole: 'viewer', nextActive: true }, true],
    ['deactivating the only admin', { activeAdminIds: [1], targetId: 1, nextRole: 'admin', nextActive: false }, true],
    ['renaming the only admin', { activeAdminIds: [1], targetId: 1, nextRole: 'admin', nextActive: true }, false],
    ['demoting one of two admins', { activeAdminIds: [1, 2], targetId: 1, nextRole: 'lead', nextActive: true }, false],
    ['deactivating a non-admin', { activeAdminIds: [1], targetId: 7, nextRole: 'chemist', nextActive: false }, false],
    ['no active admin at all and a chemist changes', { activeAdminIds: [], targetId: 3, nextRole: 'viewer', nextActive: true }, false],
  ];
  for (const [name, change, result] of cases) {
    it(`last-admin rule: ${name} → ${result ? 'refused' : 'allowed'}`, () => {
      expect(removesLastAdmin(change)).to.equal(result);
    });
  }
});
