// Applies pending migrations and, when DEMO is on, seeds the demo scenario (idempotent).
import { MikroORM } from '@mikro-orm/postgresql';
import { ormConfig } from '../mikro-orm.config.js';
import { seedDemo } from '../seeders/demo.js';
import { loadSettings } from '../../api/src/config.js';

const orm = await MikroORM.init(ormConfig());
try {
  const applied = await orm.getMigrator().up();
  console.log(`[db] migrations: ${applied.length ? applied.map((m) => m.name).join(', ') : 'up to date'}`);
  const demo = !['0', 'false', 'no', 'off', ''].includes((process.env.DEMO ?? '0').toLowerCase());
  if (demo) {
    const report = await seedDemo(orm.em.fork(), loadSettings().registryPrefix);
    console.log(`[db] demo scenario seeded: ${report}`);
  }
} finally {
  await orm.close();
}
