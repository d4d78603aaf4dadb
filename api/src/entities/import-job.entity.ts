import { defineEntity, p, type InferEntity } from '@mikro-orm/core';
import { baseProperties } from './base.entity.js';
import { User } from './user.entity.js';

export interface ImportOutcome {
  /** 1-based record (SDF) or data row (CSV) number. */
  index: number;
  status: 'created' | 'duplicate' | 'error' | 'batch-added';
  registryNumber?: string;
  batchNumber?: string;
  message?: string;
  name?: string;
}

/** A bulk registration: the uploaded file (kept), its progress and its per-record report. */
export const ImportJob = defineEntity({
  name: 'ImportJob',
  tableName: 'import_job',
  properties: {
    ...baseProperties,
    format: p.enum(['sdf', 'csv']),
    fileName: p.string().length(255),
    content: p.text().lazy(true, false),
    /** Column mapping (CSV) or field mapping (SDF), series, batch defaults. */
    options: p.json<Record<string, unknown>>(),
    status: p.enum(['queued', 'running', 'done', 'failed']),
    total: p.integer().default(0),
    processed: p.integer().default(0),
    created: p.integer().default(0),
    duplicates: p.integer().default(0),
    errors: p.integer().default(0),
    report: p.json<ImportOutcome[]>().lazy(true, false),
    failure: p.text().nullable(),
    user: () => p.manyToOne(User),
    finishedAt: p.datetime().nullable(),
  },
});
export type IImportJob = InferEntity<typeof ImportJob>;
