// The demo scenario (DESIGN §10): this part seeds one account per role. Idempotent: an
// account that exists is left as it is. Later parts of the scenario add themselves here.
import type { EntityManager } from '@mikro-orm/postgresql';
import { hashPassword } from '../../api/src/services/password.js';
import { User } from '../../api/src/entities/user.entity.js';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import type { Role } from '../../api/src/domain/roles.js';
import { seedDemoRegistry } from './demo-registry.js';
import { seedDemoAssays } from './demo-assays.js';

export const DEMO_PASSWORD = 'demo-password-1';

export const DEMO_ACCOUNTS: { email: string; name: string; role: Role }[] = [
  { email: 'admin@demo.test', name: 'Ada Admin', role: 'admin' },
  { email: 'chemist@demo.test', name: 'Cleo Chemist', role: 'chemist' },
  { email: 'pharmacologist@demo.test', name: 'Piet Pharmacologist', role: 'pharmacologist' },
  { email: 'lead@demo.test', name: 'Lena Lead', role: 'lead' },
  { email: 'viewer@demo.test', name: 'Vik Viewer', role: 'viewer' },
];

export async function seedDemoAccounts(em: EntityManager): Promise<number> {
  return em.transactional(async (tx) => {
    let created = 0;
    const hash = await hashPassword(DEMO_PASSWORD);
    for (const account of DEMO_ACCOUNTS) {
      const existing = await tx.findOne(User, { email: account.email });
      if (existing) continue;
      const user = tx.create(User, { ...account, passwordHash: hash });
      tx.persist(user);
      await tx.flush();
      tx.persist(tx.create(AuditEvent, { actorId: null, action: 'user.create', entityType: 'User', entityId: String(user.id), data: { email: user.email, role: user.role, source: 'demo seed' } }));
      created++;
    }
    return created;
  });
}

export async function seedDemo(em: EntityManager, prefix: string): Promise<string> {
  const accounts = await seedDemoAccounts(em);
  const compounds = await seedDemoRegistry(em.fork(), prefix);
  const runs = await seedDemoAssays(em.fork(), prefix);
  return `${accounts} demo account(s), ${compounds} demo compound(s), ${runs} demo run(s) created`;
}
