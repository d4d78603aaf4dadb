import { Migrator } from '@mikro-orm/migrations';
import { defineConfig, type Options } from '@mikro-orm/postgresql';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { defaultPgPort } from '../api/src/config.js';
import { entities } from '../api/src/entities/index.js';

const here = dirname(fileURLToPath(import.meta.url));

export interface DatabaseTarget {
  host?: string;
  port?: number;
  dbName?: string;
}

/** MikroORM options for a database of the private cluster (trust auth on 127.0.0.1 only). */
export function ormConfig(target: DatabaseTarget = {}, extra: Partial<Options> = {}): Options {
  return defineConfig({
    entities,
    host: target.host ?? process.env.PGHOST ?? '127.0.0.1',
    port: target.port ?? defaultPgPort(),
    user: 'postgres',
    dbName: target.dbName ?? process.env.DATABASE_NAME ?? 'ligandry',
    extensions: [Migrator],
    preferTs: import.meta.url.endsWith('.ts'),
    forceUtcTimezone: true,
    pool: { min: 0, max: 10 },
    migrations: {
      path: join(here, 'migrations'),
      pathTs: join(here, 'migrations'),
      glob: '!(*.d).{js,ts}',
      tableName: 'mikro_orm_migrations',
      transactional: true,
      allOrNothing: true,
      // Only migration:create (the CLI, run with MIKRO_ORM_CLI_ALWAYS_ALLOW_TS=1) writes the snapshot;
      // applying migrations (npm start, npm test) must not rewrite the committed file from a database.
      snapshot: process.env.MIKRO_ORM_CLI_ALWAYS_ALLOW_TS === '1',
      snapshotName: '.snapshot-schema',
      emit: 'ts',
    },
    ...extra,
  });
}

export default ormConfig();
