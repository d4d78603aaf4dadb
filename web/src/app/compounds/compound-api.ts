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
