import type { ParamMap, Params } from '@angular/router';
import type { CompoundSearch, SearchFilters } from '../compound-api';

export type SearchMode = 'substructure' | 'similarity';

/**
 * A structure search as the panel sets it and the address keeps it. The list's own text box and
 * series filter join it (they stay separate: they also filter the plain list).
 */
export interface SearchSpec {
  mode: SearchMode;
  /** SMILES, SMARTS or a molfile (a drawing with query features); '' for a search by filters alone. */
  structure: string;
  /** Least Tanimoto similarity, 0–1 (similarity mode). */
  threshold: number;
  /** Most hits kept, best first (similarity mode). */
  limit: number;
  projectId: number | null;
  mwMin: number | null;
  mwMax: number | null;
  clogpMin: number | null;
  clogpMax: number | null;
  tpsaMax: number | null;
  /** YYYY-MM-DD, inclusive. */
  registeredFrom: string | null;
  registeredTo: string | null;
}

export const DEFAULT_THRESHOLD = 0.7;
export const DEFAULT_LIMIT = 100;
export const MAX_LIMIT = 5000;

export function emptySpec(mode: SearchMode = 'substructure'): SearchSpec {
  return {
    mode,
    structure: '',
    threshold: DEFAULT_THRESHOLD,
    limit: DEFAULT_LIMIT,
    projectId: null,
    mwMin: null,
    mwMax: null,
    clogpMin: null,
    clogpMax: null,
    tpsaMax: null,
    registeredFrom: null,
    registeredTo: null,
  };
}

export function looksLikeMolfile(text: string): boolean {
  return /M {2}END/.test(text) || /\n.*(V2000|V3000)/.test(text);
}

/** True when the search needs the search endpoint (a structure, a project, a range or a date). */
export function isActive(spec: SearchSpec | null): spec is SearchSpec {
  if (!spec) return false;
  return (
    spec.structure.trim() !== '' ||
    spec.projectId !== null ||
    [spec.mwMin, spec.mwMax, spec.clogpMin, spec.clogpMax, spec.tpsaMax].some((v) => v !== null) ||
    spec.registeredFrom !== null ||
    spec.registeredTo !== null
  );
}

function numberParam(p: ParamMap, name: string): number | null {
  const raw = p.get(name);
  if (raw === null || raw.trim() === '') return null;
  const n = Number(raw);
  return Number.isFinite(n) ? n : null;
}

function idParam(p: ParamMap, name: string): number | null {
  const n = numberParam(p, name);
  return n !== null && Number.isInteger(n) && n > 0 ? n : null;
}

function dateParam(p: ParamMap, name: string): string | null {
  const raw = p.get(name);
  return raw && /^\d{4}-\d{2}-\d{2}$/.test(raw) ? raw : null;
}

/*
 * The address of a search. Parameter names (all optional; defaults are left out):
 *   mode=similarity   (absent: substructure)
 *   sub=<query>       the query structure in either mode: SMILES or SMARTS as typed, the SMILES of a
 *                     drawing when that SMILES says the same as the drawing, else the drawing's whole
 *                     molfile (URL-encoded; long, but a link then reopens exactly the query drawn,
 *                     atom lists and ring bonds included)
 *   t=0.5  k=100      similarity threshold and most hits (similarity mode only)
 *   project=<id>  mwMin mwMax clogpMin clogpMax tpsaMax  from=YYYY-MM-DD  to=YYYY-MM-DD
 * and the list's own q (text), series, page, size (sort and dir apply to the plain list only).
 */

/** The search in the address, or null when it holds none (a plain list, perhaps with text or series). */
export function readSpec(p: ParamMap): SearchSpec | null {
  const mode: SearchMode = p.get('mode') === 'similarity' ? 'similarity' : 'substructure';
  const threshold = numberParam(p, 't');
  const limit = numberParam(p, 'k');
  const spec: SearchSpec = {
    mode,
    structure: p.get('sub') ?? '',
    threshold: threshold !== null && threshold >= 0 && threshold <= 1 ? threshold : DEFAULT_THRESHOLD,
    limit: limit !== null && Number.isInteger(limit) && limit >= 1 && limit <= MAX_LIMIT ? limit : DEFAULT_LIMIT,
    projectId: idParam(p, 'project'),
    mwMin: numberParam(p, 'mwMin'),
    mwMax: numberParam(p, 'mwMax'),
    clogpMin: numberParam(p, 'clogpMin'),
    clogpMax: numberParam(p, 'clogpMax'),
    tpsaMax: numberParam(p, 'tpsaMax'),
    registeredFrom: dateParam(p, 'from'),
    registeredTo: dateParam(p, 'to'),
  };
  return isActive(spec) ? spec : null;
}

/** Query parameters for the search; every name is present (null removes it) so a cleared search leaves the address. */
export function specParams(spec: SearchSpec | null): Params {
  const s = isActive(spec) ? spec : null;
  const similar = s?.mode === 'similarity' && s.structure.trim() !== '';
  return {
    mode: similar ? 'similarity' : null,
    sub: s?.structure.trim() ? s.structure : null,
    t: similar && s.threshold !== DEFAULT_THRESHOLD ? s.threshold : null,
    k: similar && s.limit !== DEFAULT_LIMIT ? s.limit : null,
    project: s?.projectId ?? null,
    mwMin: s?.mwMin ?? null,
    mwMax: s?.mwMax ?? null,
    clogpMin: s?.clogpMin ?? null,
    clogpMax: s?.clogpMax ?? null,
    tpsaMax: s?.tpsaMax ?? null,
    from: s?.registeredFrom ?? null,
    to: s?.registeredTo ?? null,
  };
}

function range(min: number | null, max: number | null): { min?: number; max?: number } | undefined {
  if (min === null && max === null) return undefined;
  return { ...(min !== null ? { min } : {}), ...(max !== null ? { max } : {}) };
}

/** The request body for one page of the search. */
export function searchBody(spec: SearchSpec, text: string, seriesId: number | null, page: number, pageSize: number): CompoundSearch {
  const structure = spec.structure.trim() ? spec.structure : '';
  const query = structure ? { structure, ...(looksLikeMolfile(structure) ? { format: 'molfile' as const } : {}) } : null;
  const filters: SearchFilters = {};
  if (spec.projectId !== null) filters.projectId = spec.projectId;
  if (seriesId !== null) filters.seriesId = seriesId;
  if (spec.registeredFrom) filters.registeredFrom = spec.registeredFrom;
  if (spec.registeredTo) filters.registeredTo = spec.registeredTo;
  const mw = range(spec.mwMin, spec.mwMax);
  const clogp = range(spec.clogpMin, spec.clogpMax);
  const tpsa = range(null, spec.tpsaMax);
  if (mw) filters.mw = mw;
  if (clogp) filters.clogp = clogp;
  if (tpsa) filters.tpsa = tpsa;
  const body: CompoundSearch = { page, pageSize };
  if (query && spec.mode === 'similarity') body.similarity = { ...query, threshold: spec.threshold, limit: spec.limit };
  else if (query) body.substructure = query;
  if (text.trim()) body.text = text.trim();
  if (Object.keys(filters).length) body.filters = filters;
  return body;
}

/** Where a problem the server names (`filters.mw`, `similarity.threshold`…) belongs in the panel. */
export type SearchField = 'structure' | 'threshold' | 'limit' | 'project' | 'series' | 'mw' | 'clogp' | 'tpsa' | 'registeredFrom' | 'registeredTo' | 'text' | 'other';

export function fieldOf(serverField: string): SearchField {
  if (serverField === 'substructure' || serverField.startsWith('substructure.') || serverField === 'similarity' || serverField === 'similarity.structure') return 'structure';
  if (serverField === 'similarity.threshold') return 'threshold';
  if (serverField === 'similarity.limit') return 'limit';
  if (serverField === 'text') return 'text';
  const m = /^filters\.(projectId|seriesId|mw|clogp|tpsa|registeredFrom|registeredTo)\b/.exec(serverField);
  if (!m) return 'other';
  return m[1] === 'projectId' ? 'project' : m[1] === 'seriesId' ? 'series' : (m[1] as SearchField);
}
