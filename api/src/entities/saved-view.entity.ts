import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { Project } from './project.entity.js';
import { User } from './user.entity.js';

/** What a saved SAR view holds: the query and the grid's layout (validated by the router's schema). */
export interface SarViewState {
  seriesIds: number[];
  targetIds: number[];
  parameters: string[];
  substructure: string | null;
  text: string | null;
  includeSubmitted: boolean;
  /** ag-grid column state (order, width, visibility, sort) and filter model, kept as the grid gave them. */
  columnState: Record<string, unknown>[];
  filterModel: Record<string, unknown>;
}

/** A named SAR table view of a project, private to its owner or shared with the project. */
export const SavedView = defineEntity({
  name: 'SavedView',
  tableName: 'saved_view',
  uniques: [{ properties: ['owner', 'project', 'name'] }],
  properties: {
    ...baseProperties,
    name: p.string().length(120),
    owner: () => p.manyToOne(User),
    project: () => p.manyToOne(Project),
    shared: p.boolean().default(false),
    state: p.json<SarViewState>(),
    version: p.integer().version(),
  },
});
export type ISavedView = InferEntity<typeof SavedView>;
