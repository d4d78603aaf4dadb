// Structure and text search over the registry (DESIGN §3): filters in SQL, a fingerprint screen
// in SQL (bit operations on compound.fingerprint), then the survivors checked atom by atom in the
// search threads (services/match-shards.ts), until done or out of time; similarity by Tanimoto in
// SQL. With `count: 'first-page'` a substructure search stops once the requested page is known
// (its hits are exact: the candidates are checked in the answer's order) and leaves the total to
// a second, `count: 'exact'` request.
import type { EntityManager, Knex } from '@mikro-orm/postgresql';
import { Compound } from '../entities/compound.entity.js';
import { FINGERPRINT_VERSION, parseQuery, QueryError, similarityFingerprint, toBitString, type ParsedQuery } from '../domain/structure-search.js';
import { HttpError } from '../http-error.js';
import { listSource, loadShards, matchAll, matchFirst, STORE_CAPACITY, SHARDS, type TargetSource } from './match-shards.js';
import { dataVersion } from './read-cache.js';
import { compoundSummary, textMatches } from './compound-query.service.js';

export type QueryFormat = 'smiles' | 'molfile' | 'smarts';

export interface Range {
  min?: number;
  max?: number;
}

export interface SearchFilters {
  projectId?: number;
  seriesId?: number;
  registrantId?: number;
  registeredFrom?: string;
  registeredTo?: string;
  mw?: Range;
  clogp?: Range;
  tpsa?: Range;
  heavyAtoms?: Range;
  hbd?: Range;
  hba?: Range;
}

export interface SearchRequest {
  substructure?: { structure: string; format?: QueryFormat };
  similarity?: { structure: string; format?: QueryFormat; threshold: number; limit: number };
  text?: string;
  filters?: SearchFilters;
  page: number;
  pageSize: number;
  timeLimitMs: number;
  /** 'exact' (default): every candidate is checked for the total; 'first-page': only until the page is known. */
  count?: 'exact' | 'first-page';
  /**
   * Reuse the complete hit list of the same substructure search while the data is unchanged
   * (default true: paging through a large answer checks nothing again). The benchmark turns it off.
   */
  reuse?: boolean;
}

export interface SearchStats {
  /** Rows the filters, text and similarity allow. */
  considered: number;
  /** Rows left after the fingerprint screen (substructure only). */
  screened: number | null;
  /** Rows checked atom by atom before the answer. */
  checked: number | null;
  /** True when the hits came from the same search's complete hit list (the data unchanged since). */
  reused?: boolean;
  elapsedMs: number;
}

const RANGE_COLUMNS: Record<keyof Pick<SearchFilters, 'mw' | 'clogp' | 'tpsa' | 'heavyAtoms' | 'hbd' | 'hba'>, string> = {
  mw: 'c.mw',
  clogp: 'c.clogp',
  tpsa: 'c.tpsa',
  heavyAtoms: 'c.heavy_atoms',
  hbd: 'c.hbd',
  hba: 'c.hba',
};

/** SQL conditions for the filters; every value is a bound parameter. */
export function filterSql(filters: SearchFilters = {}): { sql: string; params: Knex.Value[] } {
  const parts: string[] = ['true'];
  const params: Knex.Value[] = [];
  if (filters.projectId) {
    parts.push('c.series_id in (select id from series where project_id = ?)');
    params.push(filters.projectId);
  }
  if (filters.seriesId) {
    parts.push('c.series_id = ?');
    params.push(filters.seriesId);
  }
  if (filters.registrantId) {
    parts.push('c.registrant_id = ?');
    params.push(filters.registrantId);
  }
  if (filters.registeredFrom) {
    parts.push('c.created_at >= ?::date');
    params.push(filters.registeredFrom);
  }
  if (filters.registeredTo) {
    parts.push("c.created_at < ?::date + interval '1 day'");
    params.push(filters.registeredTo);
  }
  for (const [key, column] of Object.entries(RANGE_COLUMNS) as [keyof typeof RANGE_COLUMNS, string][]) {
    const range = filters[key];
    if (range?.min !== undefined) {
      parts.push(`${column} >= ?`);
      params.push(range.min);
    }
    if (range?.max !== undefined) {
      parts.push(`${column} <= ?`);
      params.push(range.max);
    }
  }
  return { sql: parts.join(' and '), params };
}

function parseOr400(structure: string, format: QueryFormat | undefined, field: string): ParsedQuery {
  try {
    return parseQuery(structure, format);
  } catch (err) {
    if (err instanceof QueryError) throw HttpError.badRequest(`${field}: ${err.message}`, [{ field, message: err.message }]);
    throw err;
  }
}

export interface SearchHit {
  id: number;
  atoms?: number[];
  similarity?: number;
}

/** The note a search gives when it ran out of time before checking every candidate. */
export function timeLimitNote(timeLimitMs: number, checked: number, candidates: number): string {
  return `The search ran out of its ${Math.round(timeLimitMs / 1000)} s time limit after checking ${checked} of ${candidates} candidates: the hits shown are those found so far. Narrow the query (a larger fragment, or filters) to search everything.`;
}

/**
 * The fingerprint screen as a condition on `compound c`: a row survives when every bit of the
 * query is set in its fingerprint; rows without a current fingerprint (not indexed yet) survive too
 * and are checked atom by atom like the others.
 */
function screenCondition(sub: ParsedQuery): { sql: string; params: Knex.Value[] } {
  const qBits = toBitString(sub.fingerprint);
  return { sql: '(c.fingerprint_version is distinct from ? or (c.fingerprint & ?::bit(1024)) = ?::bit(1024))', params: [FINGERPRINT_VERSION, qBits, qBits] };
}

/**
 * Compounds among `candidateIds` that hold the substructure: fingerprint screen in SQL, then the
 * atom-by-atom check. Used by the SAR table's substructure filter.
 */
export async function substructureFilter(em: EntityManager, query: { structure: string; format?: QueryFormat }, candidateIds: number[], timeLimitMs: number, now: () => number = Date.now) {
  const started = now();
  const sub = parseOr400(query.structure, query.format, 'substructure');
  const screen = screenCondition(sub);
  const survivors = (await em.getConnection().getKnex().raw<{ rows: { id: number; id_code: string }[] }>(
    `select c.id, c.id_code from compound c where c.id = any(?::int[]) and ${screen.sql} order by c.number`,
    [candidateIds, ...screen.params],
  )).rows;
  const found = await matchAll(query.structure, sub.kind, survivors.map((r) => [Number(r.id), r.id_code]), started + timeLimitMs, now);
  return { hits: found.hits, complete: found.complete, note: found.complete ? null : timeLimitNote(timeLimitMs, found.checked, survivors.length) };
}

interface HitList {
  version: string;
  ordered: SearchHit[];
  stats: SearchStats;
}

/** Complete hit lists of recent substructure searches (least recently stored first out). */
const hitLists = new Map<string, HitList>();
const HIT_LISTS_KEPT = 16;

function keepHitList(key: string, list: HitList): void {
  hitLists.delete(key);
  hitLists.set(key, list);
  while (hitLists.size > HIT_LISTS_KEPT) hitLists.delete(hitLists.keys().next().value!);
}

/** Runs the search; answers a page of compounds with what matched, the total and how it went. */
export async function searchCompounds(em: EntityManager, req: SearchRequest, now: () => number = Date.now) {
  const started = now();
  const deadline = started + req.timeLimitMs;
  const knex = em.getConnection().getKnex();
  const filters = filterSql(req.filters);
  const hasFilter = filters.params.length > 0;
  if (!req.substructure && !req.similarity && !req.text?.trim() && !hasFilter) {
    throw HttpError.badRequest('Empty query: give a substructure, a similarity structure, text or at least one filter.', [{ field: '(whole body)', message: 'empty query' }]);
  }
  const sub = req.substructure ? parseOr400(req.substructure.structure, req.substructure.format, 'substructure') : null;
  const simQuery = req.similarity ? parseOr400(req.similarity.structure, req.similarity.format, 'similarity.structure') : null;

  // The complete hit list of this very substructure search, when one was kept at this data version:
  // then nothing below is computed again (text, similarity, screen, atom-by-atom).
  const reuseKey = sub && req.reuse !== false ? JSON.stringify([req.substructure, req.similarity ?? null, req.text?.trim() ?? '', req.filters ?? {}]) : null;
  const version = reuseKey ? await dataVersion(em) : '';
  const kept = reuseKey ? hitLists.get(reuseKey) : undefined;
  const reused = kept?.version === version ? kept : undefined;

  const conditions = [filters.sql];
  const params: Knex.Value[] = [...filters.params];
  // Text narrows the candidates to fuzzy matches over numbers, names and aliases (relevance order kept).
  let textOrder: number[] | null = null;
  if (!reused && req.text?.trim()) {
    textOrder = await textMatches(em, req.text, {});
    conditions.push('c.id = any(?::int[])');
    params.push(textOrder);
  }
  const where = conditions.join(' and ');

  // Similarity: Tanimoto on the stored fingerprints, in SQL, best first, threshold and top-k.
  let similarity: Map<number, number> | null = null;
  if (!reused && simQuery && req.similarity) {
    const bits = toBitString(similarityFingerprint(simQuery.fragment));
    const rows = (await knex.raw<{ rows: { id: number; sim: number }[] }>(
      `select id, sim from (
         select c.id, c.number, bit_count(c.fingerprint & ?::bit(1024))::float8 / nullif(bit_count(c.fingerprint | ?::bit(1024)), 0) as sim
         from compound c where c.fingerprint_version = ? and ${where}
       ) s where sim >= ? order by sim desc, number asc limit ?`,
      [bits, bits, FINGERPRINT_VERSION, ...params, req.similarity.threshold, req.similarity.limit],
    )).rows;
    similarity = new Map(rows.map((r) => [Number(r.id), Number(r.sim)]));
  }

  let ordered: SearchHit[];
  let stats: SearchStats;
  let complete = true;
  let counting = false;
  let note: string | null = null;
  if (reused) {
    ordered = reused.ordered;
    stats = { ...reused.stats, reused: true, elapsedMs: 0 };
  } else if (sub) {
    const simIds = similarity ? [...similarity.keys()] : null;
    const extra = simIds ? ' and c.id = any(?::int[])' : '';
    const baseParams = [...params, ...(simIds ? [simIds] : [])];
    const condition = screenCondition(sub);
    const screen = `${where}${extra} and ${condition.sql}`;
    const screenParams = [...baseParams, ...condition.params];
    const count = async (sql: string, values: Knex.Value[]) => Number((await knex.raw<{ rows: { n: string }[] }>(`select count(*) as n from compound c where ${sql}`, values)).rows[0].n);
    // Counted on another connection while the screen runs.
    const consideredPromise = count(`${where}${extra}`, baseParams);
    consideredPromise.catch(() => undefined); // awaited below; a failure elsewhere first must not leave it unhandled
    const firstPageOnly = req.count === 'first-page';
    const wanted = req.page * req.pageSize;
    let candidates: [number, string][];
    let screened: number;
    let found: Awaited<ReturnType<typeof matchAll>>;
    if (firstPageOnly && !similarity && !textOrder) {
      // In registry order the survivors can be read a slice at a time (keyset on number, over the
      // screen's index) until the page is known; the screen's count gives the bound meanwhile.
      const screenedPromise = count(screen, screenParams);
      screenedPromise.catch(() => undefined);
      const fetched: [number, string][] = [];
      let lastNumber = -1;
      const source: TargetSource = async (n) => {
        const rows = (await knex.raw<{ rows: { id: number; id_code: string; number: number }[] }>(
          `select c.id, c.id_code, c.number from compound c where ${screen} and c.number > ? order by c.number limit ?`,
          [...screenParams, lastNumber, n],
        )).rows;
        if (rows.length) lastNumber = Number(rows[rows.length - 1].number);
        const slice = rows.map((r): [number, string] => [Number(r.id), r.id_code]);
        fetched.push(...slice);
        return slice;
      };
      found = await matchFirst(req.substructure!.structure, sub.kind, source, wanted, deadline, now);
      candidates = fetched;
      screened = await screenedPromise;
    } else {
      const survivors = (await knex.raw<{ rows: { id: number; id_code: string }[] }>(`select c.id, c.id_code from compound c where ${screen} order by c.number`, screenParams)).rows;
      screened = survivors.length;
      // Candidates in the answer's order: by similarity when asked for, else by text relevance, else by registry number.
      const codes = new Map(survivors.map((r) => [Number(r.id), r.id_code]));
      const order = similarity ? [...similarity.keys()] : textOrder ?? survivors.map((r) => Number(r.id));
      candidates = order.filter((id) => codes.has(id)).map((id): [number, string] => [id, codes.get(id)!]);
      found = firstPageOnly
        ? await matchFirst(req.substructure!.structure, sub.kind, listSource(candidates), wanted, deadline, now)
        : await matchAll(req.substructure!.structure, sub.kind, candidates, deadline, now);
    }
    const considered = await consideredPromise;
    const hits = found.hits;
    const checked = found.checked;
    if (found.timedOut) {
      complete = false;
      note = timeLimitNote(req.timeLimitMs, checked, screened);
    } else if (!found.complete) {
      // The page is known; the rest was left unchecked on purpose: the total comes with count "exact".
      counting = true;
    }
    ordered = candidates.filter(([id]) => hits.has(id)).map(([id]) => ({ id, atoms: hits.get(id), similarity: similarity?.get(id) }));
    stats = { considered, screened, checked, elapsedMs: 0 };
    if (reuseKey && found.complete) keepHitList(reuseKey, { version, ordered, stats });
  } else if (similarity) {
    ordered = [...similarity.entries()].map(([id, sim]) => ({ id, similarity: sim }));
    stats = { considered: ordered.length, screened: null, checked: null, elapsedMs: 0 };
  } else {
    const rows = (await knex.raw<{ rows: { id: number }[] }>(`select c.id from compound c where ${where} order by c.number`, params)).rows;
    const ids = rows.map((r) => Number(r.id));
    if (textOrder) {
      const allowed = new Set(ids);
      ordered = textOrder.filter((id) => allowed.has(id)).map((id) => ({ id }));
    } else ordered = ids.map((id) => ({ id }));
    stats = { considered: ordered.length, screened: null, checked: null, elapsedMs: 0 };
  }

  const offset = (req.page - 1) * req.pageSize;
  const page = ordered.slice(offset, offset + req.pageSize);
  const found = page.length ? await em.find(Compound, { id: { $in: page.map((h) => h.id) } }, { populate: ['series', 'registrant'] }) : [];
  const byId = new Map(found.map((c) => [c.id, c]));
  stats.elapsedMs = now() - started;
  return {
    items: page.filter((h) => byId.has(h.id)).map((h) => ({ ...compoundSummary(byId.get(h.id)!), match: h.atoms ?? null, similarity: h.similarity ?? null })),
    /** null while only the first page is known (count "first-page"): ask again with count "exact". */
    total: counting ? null : ordered.length,
    /** The total is at most this (the screen's survivors) while it is being counted. */
    totalAtMost: counting ? stats.screened : null,
    counting,
    page: req.page,
    pageSize: req.pageSize,
    complete,
    note,
    stats,
  };
}

/**
 * Decodes every registered compound into the search threads' stores, a page at a time (run in the
 * background after a start, so the first searches do not pay for decoding). Answers the molecules kept.
 */
export async function warmSearchStore(em: EntityManager, pageSize = 5000): Promise<number> {
  if (STORE_CAPACITY === 0) return 0;
  const knex = em.getConnection().getKnex();
  let after = 0;
  let kept = 0;
  let sample: [number, string][] = [];
  for (;;) {
    const rows = (await knex.raw<{ rows: { id: number; id_code: string }[] }>('select id, id_code from compound where id > ? order by id limit ?', [after, pageSize])).rows;
    if (!rows.length) break;
    const targets = rows.map((r): [number, string] => [Number(r.id), r.id_code]);
    if (!sample.length) sample = targets.slice(0, 2000);
    kept = await loadShards(targets);
    after = Number(rows[rows.length - 1].id);
    if (kept >= STORE_CAPACITY * SHARDS) break;
  }
  // The matcher's code is compiled on its first calls in each thread (measured: the first query
  // after a start took 1.3–2 s, the same query next 0.2 s): run a few typical queries over a sample.
  for (const query of ['c1ccccc1', 'C(=O)N', 'C1CCNCC1', 'c1ccc2ccccc2c1']) await matchAll(query, 'smiles', sample, Date.now() + 30_000);
  return kept;
}
