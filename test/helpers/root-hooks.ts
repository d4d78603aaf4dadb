// Mocha root hooks: one fresh, migrated test database for the whole run, with fixture users.
import { closeTestOrm, recreateTestDatabase } from './db.js';
import { seedFixtureUsers } from './fixtures.js';

export const mochaHooks = {
  async beforeAll(this: Mocha.Context) {
    this.timeout(60_000);
    const orm = await recreateTestDatabase();
    await seedFixtureUsers(orm.em.fork());
  },
  async afterAll() {
    await closeTestOrm();
  },
};
