import { p } from '@mikro-orm/core';

/**
 * Properties every entity shares: a serial id and creation/update timestamps.
 * Entities are declared with `defineEntity` and these builders (no decorators: see
 * DEVELOPERS.md), so the base is a property set spread into each definition.
 */
export const baseProperties = {
  id: p.integer().primary().autoincrement(),
  createdAt: p.datetime().onCreate(() => new Date()),
  updatedAt: p.datetime().onCreate(() => new Date()).onUpdate(() => new Date()),
};
