import { defineEntity, p } from '@mikro-orm/core';

/**
 * One row (id 1) whose counter rises with every committed change to the data the pages read.
 * Deferred triggers (see the migration that creates this table) bump it at commit time, in the
 * writer's own transaction, so a reader sees the new counter together with the new data. The
 * read cache (services/read-cache.ts) keys its answers by this counter.
 */
export const DataVersion = defineEntity({
  name: 'DataVersion',
  tableName: 'data_version',
  properties: {
    id: p.integer().primary().autoincrement(false),
    value: p.bigint('number').default(0),
    changedAt: p.datetime().nullable(),
  },
});
