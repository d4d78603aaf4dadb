// Bulk registration from an SDF or CSV file: the file is kept with the job, records are analysed
// in the worker pool and each one is registered in its own transaction; the job row carries the
// progress and the per-record report, so any API process can answer for it.
import type { EntityManager, MikroORM } from '@mikro-orm/postgresql';
import { parse as parseCsv } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import type { Logger } from 'pino';
import { splitSdf } from '../domain/chem.js';
import { ImportJob, type IImportJob, type ImportOutcome } from '../entities/import-job.entity.js';
import { Series } from '../entities/project.entity.js';
import { HttpError } from '../http-error.js';
import type { ChemResult } from '../workers/chem-worker.js';
import { audit } from './audit.service.js';
import { analyseInPool, tautomersInPool, fingerprintsInPool } from './chem-pool.js';
import { FINGERPRINT_VERSION } from '../domain/structure-search.js';
import { checkStructure, findMatches, judgeMatches, registerMany, registerParsed, type BulkEntry, type ImportTransaction } from './registry.service.js';

export interface ImportOptions {
  /** CSV: column holding the SMILES (or molfile). SDF: ignored (the structure block is used). */
  structureColumn?: string;
  nameColumn?: string;
  aliasColumn?: string;
  /** Column whose value is a series code; rows with an unknown code are errors. */
  seriesColumn?: string;
  purityColumn?: string;
  amountColumn?: string;
  sourceColumn?: string;
  notebookColumn?: string;
  /** Series for every record without a series column. */
  seriesId?: number;
}

export interface ImportRecord {
  index: number;
  structure: string;
  format: 'smiles' | 'molfile';
  fields: Record<string, string>;
}

const CHUNK = 100;

export function detectImportFormat(text: string): 'sdf' | 'csv' {
  return /^M {2}END\s*$/m.test(text) || /^\$\$\$\$/m.test(text) ? 'sdf' : 'csv';
}

/** Decodes an upload as UTF-8 text, refusing binary content whatever the file is called. */
export function decodeUpload(buffer: Buffer): string {
  if (buffer.includes(0)) throw HttpError.badRequest('file: this is not a text file (it contains NUL bytes); upload an SDF or CSV file.');
  const text = buffer.toString('utf8').replace(/^\uFEFF/, '');
  if (text.includes('\uFFFD')) throw HttpError.badRequest('file: the file is not valid UTF-8 text; save it as UTF-8 and upload it again.');
  if (!text.trim()) throw HttpError.badRequest('file: the file is empty.');
  return text;
}

function guess(columns: string[], ...names: string[]): string | undefined {
  const lower = columns.map((c) => c.toLowerCase().trim());
  for (const n of names) {
    const i = lower.indexOf(n);
    if (i >= 0) return columns[i];
  }
  return undefined;
}

/** The columns (CSV) or data fields (SDF) of a file, and a suggested mapping. */
export function describeFile(text: string) {
  const format = detectImportFormat(text);
  let columns: string[];
  let count: number;
  if (format === 'sdf') {
    const records = splitSdf(text);
    columns = [...new Set(records.slice(0, 200).flatMap((r) => Object.keys(r.fields)))];
    count = records.length;
  } else {
    const rows = parseCsvRows(text);
    columns = rows.length ? Object.keys(rows[0]) : [];
    count = rows.length;
  }
  const mapping: ImportOptions = {
    structureColumn: format === 'csv' ? guess(columns, 'smiles', 'structure', 'molfile', 'canonical_smiles') : undefined,
    nameColumn: guess(columns, 'name', 'compound name', 'compound_name', 'title'),
    aliasColumn: guess(columns, 'alias', 'aliases', 'synonym', 'code'),
    seriesColumn: guess(columns, 'series', 'series code', 'series_code'),
    purityColumn: guess(columns, 'purity', 'purity %', 'purity_pct'),
    amountColumn: guess(columns, 'amount', 'amount_mg', 'amount (mg)', 'mg'),
    sourceColumn: guess(columns, 'source', 'supplier', 'vendor'),
    notebookColumn: guess(columns, 'notebook', 'notebook ref', 'notebook_ref', 'eln'),
  };
  return { format, columns, records: count, mapping };
}

function parseCsvRows(text: string): Record<string, string>[] {
  try {
    return parseCsv(text, { columns: (header: string[]) => header.map((h) => h.trim()), skip_empty_lines: true, trim: true, relax_column_count: true, bom: true }) as Record<string, string>[];
  } catch (err) {
    throw HttpError.badRequest(`file: the CSV could not be read: ${(err as Error).message}`);
  }
}

export function readRecords(text: string, options: ImportOptions): ImportRecord[] {
  const format = detectImportFormat(text);
  if (format === 'sdf') {
    return splitSdf(text).map((r) => ({ index: r.index, structure: r.molfile, format: 'molfile' as const, fields: r.fields }));
  }
  const rows = parseCsvRows(text);
  if (!rows.length) throw HttpError.badRequest('file: the CSV has a header but no data rows.');
  const columns = Object.keys(rows[0]);
  const structureColumn = options.structureColumn ?? guess(columns, 'smiles', 'structure', 'molfile');
  if (!structureColumn || !columns.includes(structureColumn)) {
    throw HttpError.badRequest(`structureColumn: choose the column that holds the SMILES; the file has ${columns.map((c) => `"${c}"`).join(', ')}.`, [{ field: 'structureColumn', message: 'no such column' }]);
  }
  for (const key of ['nameColumn', 'aliasColumn', 'seriesColumn', 'purityColumn', 'amountColumn', 'sourceColumn', 'notebookColumn'] as const) {
    const col = options[key];
    if (col && !columns.includes(col)) throw HttpError.badRequest(`${key}: the file has no column "${col}".`, [{ field: key, message: 'no such column' }]);
  }
  return rows.map((row, i) => {
    const structure = row[structureColumn] ?? '';
    return { index: i + 1, structure, format: /M {2}END/.test(structure) ? ('molfile' as const) : ('smiles' as const), fields: row };
  });
}

export function jobView(job: IImportJob) {
  return {
    id: job.id,
    format: job.format,
    fileName: job.fileName,
    status: job.status,
    total: job.total,
    processed: job.processed,
    created: job.created,
    duplicates: job.duplicates,
    errors: job.errors,
    failure: job.failure ?? null,
    createdAt: job.createdAt.toISOString(),
    finishedAt: job.finishedAt?.toISOString() ?? null,
  };
}

export function reportCsv(job: IImportJob): string {
  return stringify(
    (job.report ?? []).map((o) => ({ record: o.index, status: o.status, registry_number: o.registryNumber ?? '', batch_number: o.batchNumber ?? '', name: o.name ?? '', message: o.message ?? '' })),
    { header: true, columns: ['record', 'status', 'registry_number', 'batch_number', 'name', 'message'] },
  );
}

/** Creates the job (status queued) after checking the file; the runner does the work. */
export async function createImportJob(em: EntityManager, userId: number, fileName: string, text: string, given: ImportOptions): Promise<IImportJob> {
  const guessed = Object.fromEntries(Object.entries(describeFile(text).mapping).filter(([, v]) => v !== undefined));
  const options: ImportOptions = { ...guessed, ...given };
  const records = readRecords(text, options);
  if (options.seriesId && !(await em.findOne(Series, { id: options.seriesId }))) {
    throw HttpError.badRequest(`seriesId: no series with id ${options.seriesId}`, [{ field: 'seriesId', message: 'no such series' }]);
  }
  const job = em.create(ImportJob, {
    format: detectImportFormat(text),
    fileName: fileName.slice(0, 255),
    content: text,
    options: options as Record<string, unknown>,
    status: 'queued',
    total: records.length,
    report: [],
    user: userId,
  });
  await em.persist(job).flush();
  audit(em, userId, 'import.start', 'ImportJob', job.id, { fileName: job.fileName, format: job.format, total: job.total, options: job.options });
  await em.flush();
  return job;
}

function numberOrNull(value: string | undefined, what: string): number | null {
  if (value === undefined || value.trim() === '') return null;
  const n = Number(value.replace(',', '.'));
  if (!Number.isFinite(n)) throw new Error(`${what} "${value}" is not a number`);
  return n;
}

/** Writes the job's counters and appends the chunk's outcomes to its report, inside the chunk's transaction. */
async function saveProgress(trx: ImportTransaction, jobId: number, before: ImportOutcome[], chunk: ImportOutcome[]): Promise<void> {
  const all = [...before, ...chunk];
  const count = (status: ImportOutcome['status']) => all.filter((o) => o.status === status).length;
  await trx.raw(
    `update import_job set processed = ?, created = ?, duplicates = ?, errors = ?, report = coalesce(report, '[]'::jsonb) || ?::jsonb, updated_at = now() where id = ?`,
    [all.length, count('created'), count('duplicate'), count('error'), JSON.stringify(chunk), jobId],
  );
}

/** Runs queued imports of this process, one at a time. */
export class ImportRunner {
  private queue: Promise<void> = Promise.resolve();

  constructor(
    private readonly orm: MikroORM,
    private readonly prefix: string,
    private readonly logger: Logger,
  ) {}

  enqueue(jobId: number): Promise<void> {
    this.queue = this.queue
      .then(() => this.run(jobId))
      .then(() => this.fillTautomers())
      .then(() => undefined)
      .catch((err) => this.logger.error({ err, jobId }, 'import failed'));
    return this.queue;
  }

  /** Resolves when queued imports and their background pass are finished. */
  drain(): Promise<void> {
    return this.queue;
  }

  /** Fills the tautomer ID codes that imports leave empty (used by the tautomer warning). */
  async fillTautomers(batchSize = 200): Promise<number> {
    const em = this.orm.em.fork();
    let filled = 0;
    for (;;) {
      const rows = await em.execute<{ id: number; id_code: string }[]>('select id, id_code from compound where tautomer_id_code is null order by id limit ?', [batchSize]);
      if (!rows.length) return filled;
      const codes = await tautomersInPool(rows.map((r) => r.id_code));
      await em.getConnection().getKnex().transaction(async (trx) => {
        for (const [i, r] of rows.entries()) await trx('compound').where({ id: r.id }).update({ tautomer_id_code: codes[i] ?? '' });
      });
      filled += rows.length;
    }
  }

  /**
   * Computes the screening fingerprints that are missing or of an older construction
   * (FINGERPRINT_VERSION). Until a row has a current one, substructure search checks it atom
   * by atom anyway, so results stay exact meanwhile.
   */
  async fillFingerprints(batchSize = 500): Promise<number> {
    const em = this.orm.em.fork();
    let filled = 0;
    for (;;) {
      const rows = await em.execute<{ id: number; id_code: string }[]>('select id, id_code from compound where fingerprint_version is distinct from ? order by id limit ?', [FINGERPRINT_VERSION, batchSize]);
      if (!rows.length) return filled;
      const bits = await fingerprintsInPool(rows.map((r) => r.id_code));
      await em.getConnection().getKnex().raw(
        'update compound c set fingerprint = x.fp::bit(1024), fingerprint_version = ? from jsonb_to_recordset(?::jsonb) as x(id int, fp text) where c.id = x.id',
        [FINGERPRINT_VERSION, JSON.stringify(rows.map((r, i) => ({ id: r.id, fp: bits[i] })))],
      );
      filled += rows.length;
    }
  }

  /** Jobs left running by a stopped server are marked failed, with what was done kept. */
  async recoverInterrupted(): Promise<void> {
    const em = this.orm.em.fork();
    const stale = await em.find(ImportJob, { status: { $in: ['running', 'queued'] } });
    for (const job of stale) {
      job.status = 'failed';
      job.failure = `Interrupted by a server restart after ${job.processed} of ${job.total} records. Records already registered stay registered and are listed in the report; import the file again to finish (they will be reported as duplicates).`;
      job.finishedAt = new Date();
    }
    await em.flush();
  }

  private async run(jobId: number): Promise<void> {
    const em = this.orm.em.fork();
    const job = await em.findOneOrFail(ImportJob, { id: jobId }, { populate: ['content', 'report'] });
    job.status = 'running';
    await em.flush();
    const options = job.options as ImportOptions;
    const report: ImportOutcome[] = [];
    try {
      const records = readRecords(job.content, options);
      const seriesByCode = new Map<string, number>();
      if (options.seriesColumn) {
        for (const s of await em.find(Series, {})) seriesByCode.set(s.code.toUpperCase(), s.id);
      }
      // Chemistry of the next chunk runs in the worker pool while this chunk is written.
      const chunks: ImportRecord[][] = [];
      for (let start = 0; start < records.length; start += CHUNK) chunks.push(records.slice(start, start + CHUNK));
      const analyse = (chunk: ImportRecord[]) => analyseInPool(chunk.map((r) => ({ index: r.index, text: r.structure, format: r.format })));
      let next: Promise<ChemResult[]> = chunks.length ? analyse(chunks[0]) : Promise.resolve([]);
      let waitChem = 0;
      let writing = 0;
      for (let k = 0; k < chunks.length; k++) {
        const t0 = performance.now();
        const results = await next;
        const t1 = performance.now();
        waitChem += t1 - t0;
        if (k + 1 < chunks.length) next = analyse(chunks[k + 1]);
        const chunk = chunks[k];
        // One transaction a chunk: one query checks every structure, one statement registers the
        // new ones (registerMany). If a concurrent registration makes it fail, the chunk is redone
        // one record at a time, each under its own savepoint. A record is never half-written.
        const knex = this.orm.em.getConnection().getKnex();
        // The job's progress and report are written in the chunk's own transaction, so a server
        // killed at any moment leaves a job row that lists exactly what was registered.
        let outcomes: ImportOutcome[];
        try {
          outcomes = await knex.transaction(async (trx) => {
            const done = await this.registerChunk(chunk, results, job.user.id, options, seriesByCode, trx);
            await saveProgress(trx, job.id, report, done);
            return done;
          });
        } catch (err) {
          if ((err as { code?: string }).code !== '23505') throw err;
          outcomes = await this.registerOneByOne(chunk, results, job.user.id, options, seriesByCode, (trx, done) => saveProgress(trx, job.id, report, done));
        }
        report.push(...outcomes);
        job.processed = report.length;
        job.created = report.filter((o) => o.status === 'created').length;
        job.duplicates = report.filter((o) => o.status === 'duplicate').length;
        job.errors = report.filter((o) => o.status === 'error').length;
        await em.flush();
        writing += performance.now() - t1;
      }
      this.logger.info({ jobId, records: records.length, waitChemMs: Math.round(waitChem), writeMs: Math.round(writing) }, 'import timing');
      job.status = 'done';
    } catch (err) {
      job.status = 'failed';
      job.failure = err instanceof Error ? err.message : String(err);
      this.logger.error({ err, jobId }, 'import stopped');
    }
    job.report = report;
    job.finishedAt = new Date();
    audit(em, job.user.id, 'import.finish', 'ImportJob', job.id, { status: job.status, processed: job.processed, created: job.created, duplicates: job.duplicates, errors: job.errors });
    await em.flush();
  }

  /** The fallback of a chunk: each record checked and registered under its own savepoint. */
  registerOneByOne(
    chunk: ImportRecord[],
    results: ChemResult[],
    userId: number,
    options: ImportOptions,
    seriesByCode: Map<string, number>,
    beforeCommit?: (trx: ImportTransaction, outcomes: ImportOutcome[]) => Promise<void>,
  ): Promise<ImportOutcome[]> {
    return this.orm.em.getConnection().getKnex().transaction(async (trx) => {
      const out: ImportOutcome[] = [];
      for (let i = 0; i < chunk.length; i++) out.push(await this.registerOne(chunk[i], results[i], userId, options, seriesByCode, trx));
      await beforeCommit?.(trx, out);
      return out;
    });
  }

  /** Validates a record's fields; an outcome (error) or what to register. */
  private prepare(record: ImportRecord, result: ChemResult, options: ImportOptions, seriesByCode: Map<string, number>): ImportOutcome | BulkEntry {
    const f = record.fields;
    const name = (options.nameColumn ? f[options.nameColumn] : undefined)?.trim() || undefined;
    if (!record.structure.trim()) return { index: record.index, status: 'error', name, message: 'No structure in this record.' };
    if (!result.ok) return { index: record.index, status: 'error', name, message: result.message };
    try {
      let seriesId = options.seriesId ?? null;
      const seriesCode = options.seriesColumn ? f[options.seriesColumn]?.trim() : '';
      if (seriesCode) {
        const id = seriesByCode.get(seriesCode.toUpperCase());
        if (!id) return { index: record.index, status: 'error', name, message: `Unknown series "${seriesCode}".` };
        seriesId = id;
      }
      const aliases = options.aliasColumn && f[options.aliasColumn] ? f[options.aliasColumn].split(/[;|]/).map((a) => a.trim()).filter(Boolean) : [];
      const batch = {
        purity: numberOrNull(options.purityColumn ? f[options.purityColumn] : undefined, 'purity'),
        amountMg: numberOrNull(options.amountColumn ? f[options.amountColumn] : undefined, 'amount'),
        source: (options.sourceColumn ? f[options.sourceColumn] : undefined)?.slice(0, 200) || null,
        notebookRef: (options.notebookColumn ? f[options.notebookColumn] : undefined)?.slice(0, 100) || null,
      };
      if (batch.purity !== null && (batch.purity < 0 || batch.purity > 100)) return { index: record.index, status: 'error', name, message: `Purity ${batch.purity} is outside 0–100 %.` };
      return { parsed: result.parsed, input: { name, aliases, seriesId, batch }, submitted: record.structure };
    } catch (err) {
      return { index: record.index, status: 'error', name, message: err instanceof Error ? err.message : String(err) };
    }
  }

  private async registerChunk(chunk: ImportRecord[], results: ChemResult[], userId: number, options: ImportOptions, seriesByCode: Map<string, number>, trx: ImportTransaction): Promise<ImportOutcome[]> {
    const outcomes: (ImportOutcome | undefined)[] = new Array(chunk.length);
    const prepared: { i: number; entry: BulkEntry }[] = [];
    for (let i = 0; i < chunk.length; i++) {
      const p = this.prepare(chunk[i], results[i], options, seriesByCode);
      if ('status' in p) outcomes[i] = p;
      else prepared.push({ i, entry: p });
    }
    const matches = await findMatches(trx, prepared.map((p) => p.entry.parsed));
    const firstInChunk = new Map<string, number>();
    const toInsert: { i: number; entry: BulkEntry; warnings: string[] }[] = [];
    const sameAs: { i: number; first: number }[] = [];
    for (const { i, entry } of prepared) {
      const name = entry.input.name ?? undefined;
      const { duplicate, warnings } = judgeMatches(entry.parsed, matches);
      if (duplicate) {
        outcomes[i] = { index: chunk[i].index, status: 'duplicate', name, registryNumber: duplicate.registryNumber, message: `Already registered as ${duplicate.registryNumber}.` };
        continue;
      }
      const first = firstInChunk.get(entry.parsed.idCode);
      if (first !== undefined) {
        sameAs.push({ i, first });
        continue;
      }
      firstInChunk.set(entry.parsed.idCode, i);
      toInsert.push({ i, entry, warnings: warnings.map((w) => w.message) });
    }
    const registered = await registerMany(trx, userId, this.prefix, toInsert.map((t) => t.entry), 'import');
    toInsert.forEach((t, k) => {
      const r = registered[k];
      outcomes[t.i] = { index: chunk[t.i].index, status: 'created', name: t.entry.input.name ?? undefined, registryNumber: r.registryNumber, batchNumber: r.batchNumber, message: t.warnings.length ? `Check: ${t.warnings.join(' ')}` : undefined };
    });
    for (const { i, first } of sameAs) {
      const reg = outcomes[first]?.registryNumber;
      outcomes[i] = { index: chunk[i].index, status: 'duplicate', name: (options.nameColumn ? chunk[i].fields[options.nameColumn] : undefined)?.trim() || undefined, registryNumber: reg, message: `Same parent as record ${chunk[first].index}, registered as ${reg}.` };
    }
    return outcomes as ImportOutcome[];
  }

  private async registerOne(record: ImportRecord, result: ChemResult, userId: number, options: ImportOptions, seriesByCode: Map<string, number>, trx: ImportTransaction): Promise<ImportOutcome> {
    const prepared = this.prepare(record, result, options, seriesByCode);
    if ('status' in prepared) return prepared;
    const name = prepared.input.name ?? undefined;
    try {
      const em = this.orm.em.fork();
      const { duplicate, warnings } = await checkStructure(em, prepared.parsed, trx);
      if (duplicate) return { index: record.index, status: 'duplicate', name, registryNumber: duplicate.registryNumber, message: `Already registered as ${duplicate.registryNumber}.` };
      const done = await registerParsed(em, userId, this.prefix, prepared.parsed, prepared.input, prepared.submitted, 'import', trx);
      return { index: record.index, status: 'created', name, registryNumber: done.registryNumber, batchNumber: done.batchNumber, message: warnings.length ? `Check: ${warnings.map((w) => w.message).join(' ')}` : undefined };
    } catch (err) {
      if (err instanceof HttpError && err.code === 'duplicate_structure') {
        const existing = (err.details as { registryNumber: string }).registryNumber;
        return { index: record.index, status: 'duplicate', name, registryNumber: existing, message: `Already registered as ${existing}.` };
      }
      return { index: record.index, status: 'error', name, message: err instanceof Error ? err.message : String(err) };
    }
  }
}
