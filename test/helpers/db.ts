// The test database: dropped and re-created from the migrations on every run, so tests never
// depend on what a previous run or the demo left behind.
import { MikroORM } from '@mikro-orm/postgresql';
import pg from 'pg';
import { ormConfig } from '../../database/mikro-orm.config.js';
import { loadSettings, type Settings } from '../../api/src/config.js';

let orm: MikroORM | undefined;

export function testSettings(): Settings {
  const settings = loadSettings();
  if (!/test/.test(settings.databaseName)) {
    throw new Error(`refusing to run tests against database "${settings.databaseName}": its name must contain "test" (npm test sets DATABASE_NAME)`);
  }
  return settings;
}

export async function recreateTestDatabase(): Promise<MikroORM> {
  const settings = testSettings();
  const admin = new pg.Client({ host: settings.pgHost, port: settings.pgPort, user: 'postgres', database: 'postgres' });
  await admin.connect();
  try {
    await admin.query(`DROP DATABASE IF EXISTS "${settings.databaseName}" WITH (FORCE)`);
    await admin.query(`CREATE DATABASE "${settings.databaseName}" ENCODING 'UTF8' TEMPLATE template0`);
  } finally {
    await admin.end();
  }
  orm = await MikroORM.init(ormConfig({ host: settings.pgHost, port: settings.pgPort, dbName: settings.databaseName }));
  await orm.getMigrator().up();
  return orm;
}

export function testOrm(): MikroORM {
  if (!orm) throw new Error('the test ORM is not initialised (root hook missing?)');
  return orm;
}

export async function closeTestOrm(): Promise<void> {
  await orm?.close(true);
  orm = undefined;
}
