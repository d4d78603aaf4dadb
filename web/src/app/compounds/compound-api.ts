import { HttpClient, HttpParams } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';

export type StereoStatus = 'achiral' | 'defined' | 'undefined' | 'partial';
export type StructureFormat = 'smiles' | 'molfile';
export type CompoundSort = 'registryNumber' | 'name' | 'mw' | 'clogp' | 'tpsa' | 'heavyAtoms' | 'createdAt';

export interface CompoundRef {
  id: number;
  registryNumber: string;
  smiles: string;
}

export interface SeriesRef {
  id: number;
  code: string;
  name: string;
}

export interface Series extends SeriesRef {
  projectCode: string;
  compoundCount: number | null;
}

export interface ParentProperties {
  formula: string;
  mw: number;
  monoisotopicMass: number;
  clogp: number;
  tpsa: number;
  hbd: number;
  hba: number;
  rotatableBonds: number;
  heavyAtoms: number;
  stereoCentres: number;
  stereoStatus: StereoStatus;
}

export interface CompoundSummary extends ParentProperties {
  id: number;
  registryNumber: string;
  name: string | null;
  aliases: string[];
  smiles: string;
  idCode: string;
  series: SeriesRef | null;
  registrant: { id: number; name: string };
  batchCount: number;
  createdAt: string;
}

export interface SaltComponent {
  name: string | null;
  smiles: string;
  formula: string;
  mw: number;
  count: number;
}

export interface Batch {
  id: number;
  batchNumber: string;
  saltLabel: string;
  saltComponents: SaltComponent[];
  batchFormula: string;
  formulaWeight: number;
  purity: number | null;
  amountMg: number | null;
  source: string | null;
  notebookRef: string | null;
  registrant: { id?: number; name: string };
  createdAt: string;
}

export interface HistoryEntry {
  at: string;
  action: string;
  actor: string;
  data: Record<string, unknown> | null;
}

export interface CompoundDetail extends CompoundSummary {
  molfile: string;
  batches: Batch[];
  history: HistoryEntry[];
}

export interface StructureWarning {
  kind: string;
  message: string;
  match?: CompoundRef;
}

export interface Preview {
  parsed: {
    idCode: string;
    smiles: string;
    properties: ParentProperties;
    salt: { label: string; components: SaltComponent[]; batchFormula: string; batchFormulaWeight: number };
  };
  duplicate: CompoundRef | null;
  warnings: StructureWarning[];
}

export interface Structure {
  structure: string;
  format?: StructureFormat;
}

export interface BatchInput {
  purity?: number | null;
  amountMg?: number | null;
  source?: string | null;
  notebookRef?: string | null;
}

/** Batch values carried from the register page to a compound's page ("add a batch instead"). */
export interface BatchDraft extends BatchInput, Partial<Structure> {}

export interface Registration extends Structure {
  name?: string | null;
  aliases?: string[];
  seriesId?: number | null;
  batch?: BatchInput;
  confirm?: boolean;
}

export interface CompoundQuery {
  page: number;
  pageSize: number;
  sort: CompoundSort;
  dir: 'asc' | 'desc';
  seriesId?: number | null;
  q?: string;
}

export interface Paged<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}

export interface ImportMapping {
  structureColumn?: string;
  nameColumn?: string;
  aliasColumn?: string;
  seriesColumn?: string;
  purityColumn?: string;
  amountColumn?: string;
  sourceColumn?: string;
  notebookColumn?: string;
}

export interface ImportInspection {
  format: 'sdf' | 'csv';
  columns: string[];
  records: number;
  mapping: ImportMapping;
}

export interface ImportOutcome {
  index: number;
  status: 'created' | 'duplicate' | 'error' | 'batch-added';
  registryNumber?: string;
  batchNumber?: string;
  name?: string;
  message?: string;
}

export interface ImportJob {
  id: number;
  fileName?: string;
  status: 'queued' | 'running' | 'done' | 'failed';
  total: number;
  processed: number;
  created: number;
  duplicates: number;
  errors: number;
  failure?: string | null;
  report?: ImportOutcome[];
}

export interface Project {
  id: number;
  code: string;
  name: string;
  description: string | null;
  createdAt: string;
}

/** How a query structure is written; the server detects it when left out. */
export type QueryFormat = 'smiles' | 'molfile' | 'smarts';

export interface StructureQuery {
  structure: string;
  format?: QueryFormat;
}

export interface ValueRange {
  min?: number;
  max?: number;
}

export interface SearchFilters {
  projectId?: number;
  seriesId?: number;
  registrantId?: number;
  /** YYYY-MM-DD, inclusive. */
  registeredFrom?: string;
  registeredTo?: string;
  mw?: ValueRange;
  clogp?: ValueRange;
  tpsa?: ValueRange;
  heavyAtoms?: ValueRange;
  hbd?: ValueRange;
  hba?: ValueRange;
}

/** The body of POST /api/compounds/search: any mix of structure, similarity, text and filters. */
export interface CompoundSearch {
  substructure?: string | StructureQuery;
  /** threshold 0–1 (server default 0.7), limit 1–5000 (server default 100). */
  similarity?: StructureQuery & { threshold?: number; limit?: number };
  text?: string;
  filters?: SearchFilters;
  page?: number;
  pageSize?: number;
  timeLimitMs?: number;
  /** "first-page": answer once the page is known, total null (ask again with "exact"); default "exact". */
  count?: 'exact' | 'first-page';
}

export interface SearchHit extends CompoundSummary {
  /** Atom indices of the compound that the substructure matched; null for other searches. */
  match: number[] | null;
  /** Tanimoto similarity to the query (0–1); null unless a similarity search. */
  similarity: number | null;
}

export interface SearchStats {
  /** Compounds the filters, text and similarity allow. */
  considered: number;
  /** Left after the fingerprint screen (substructure only). */
  screened: number | null;
  /** Checked atom by atom before the answer (substructure only). */
  checked: number | null;
  /** The hits came from this search's kept list (the data unchanged since it was counted). */
  reused?: boolean;
  elapsedMs: number;
}

export interface SearchResult extends Omit<Paged<SearchHit>, 'total'> {
  /** Null while only the first page is known (count "first-page"). */
  total: number | null;
  /** While counting: the total is at most this (the fingerprint screen's survivors). */
  totalAtMost: number | null;
  /** True when the page is known and the total is still to be counted. */
  counting: boolean;
  /** False when the time limit ran out: the hits are those found so far (see note). */
  complete: boolean;
  note: string | null;
  stats: SearchStats;
}

@Injectable({ providedIn: 'root' })
export class CompoundApi {
  private readonly http = inject(HttpClient);

  list(query: CompoundQuery): Observable<Paged<CompoundSummary>> {
    let params = new HttpParams().set('page', query.page).set('pageSize', query.pageSize).set('sort', query.sort).set('dir', query.dir);
    if (query.seriesId) params = params.set('seriesId', query.seriesId);
    if (query.q?.trim()) params = params.set('q', query.q.trim());
    return this.http.get<Paged<CompoundSummary>>('/api/compounds', { params });
  }

  get(ref: string): Observable<CompoundDetail> {
    return this.http.get<CompoundDetail>(`/api/compounds/${encodeURIComponent(ref)}`);
  }

  preview(structure: Structure): Observable<Preview> {
    return this.http.post<Preview>('/api/compounds/preview', structure);
  }

  register(registration: Registration): Observable<CompoundDetail> {
    return this.http.post<CompoundDetail>('/api/compounds', registration);
  }

  addBatch(compoundId: number, batch: BatchInput & Partial<Structure>): Observable<Batch> {
    return this.http.post<Batch>(`/api/compounds/${compoundId}/batches`, batch);
  }

  series(): Observable<Series[]> {
    return this.http.get<{ items: Series[] }>('/api/series').pipe(map((r) => r.items));
  }

  search(body: CompoundSearch): Observable<SearchResult> {
    return this.http.post<SearchResult>('/api/compounds/search', body);
  }

  /** The compound drawn on the server as SVG, with the given atoms (a substructure match) highlighted. */
  depiction(id: number, width: number, height: number, highlight: readonly number[] = []): Observable<Blob> {
    let params = new HttpParams().set('w', width).set('h', height);
    if (highlight.length) params = params.set('highlight', highlight.join(','));
    return this.http.get(`/api/compounds/${id}/depiction.svg`, { params, responseType: 'blob' });
  }

  projects(): Observable<Project[]> {
    return this.http.get<{ items: Project[] }>('/api/projects').pipe(map((r) => r.items));
  }

  inspectImport(file: File): Observable<ImportInspection> {
    const body = new FormData();
    body.append('file', file, file.name);
    return this.http.post<ImportInspection>('/api/compounds/import/inspect', body);
  }

  startImport(file: File, options: ImportMapping & { seriesId?: number }): Observable<ImportJob> {
    const body = new FormData();
    body.append('options', JSON.stringify(options));
    body.append('file', file, file.name);
    return this.http.post<ImportJob>('/api/compounds/import', body);
  }

  importJob(id: number): Observable<ImportJob> {
    return this.http.get<ImportJob>(`/api/compounds/import/${id}`);
  }

  importTemplate(): Observable<Blob> {
    return this.http.get('/api/compounds/import/template.csv', { responseType: 'blob' });
  }

  importReport(id: number): Observable<Blob> {
    return this.http.get(`/api/compounds/import/${id}/report.csv`, { responseType: 'blob' });
  }
}
