// Accounts every API and browser test can sign in with (not the demo accounts: DEMO is off in tests).
import type { EntityManager } from '@mikro-orm/postgresql';
import { ROLES, type Role } from '../../api/src/domain/roles.js';
import { User } from '../../api/src/entities/user.entity.js';
import { hashPassword } from '../../api/src/services/password.js';

export const FIXTURE_PASSWORD = 'fixture-password-1';

export function fixtureEmail(role: Role): string {
  return `${role}@fixture.test`;
}

export const FIXTURE_NAMES: Record<Role, string> = {
  admin: 'Fixture Admin',
  chemist: 'Fixture Chemist',
  pharmacologist: 'Fixture Pharmacologist',
  lead: 'Fixture Lead',
  viewer: 'Fixture Viewer',
};

export async function seedFixtureUsers(em: EntityManager): Promise<void> {
  const passwordHash = await hashPassword(FIXTURE_PASSWORD);
  await em.transactional(async (tx) => {
    for (const role of ROLES) {
      tx.persist(tx.create(User, { email: fixtureEmail(role), name: FIXTURE_NAMES[role], role, passwordHash }));
    }
  });
}
