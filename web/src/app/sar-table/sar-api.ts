import { HttpClient, HttpParams } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';

export type Qualifier = '=' | '<' | '>';
export type SarParameter = 'pKi' | 'pEC50' | 'pIC50' | 'pKB' | 'pA2' | 'emax' | 'alpha' | 'logTauKA';
/** What the Parameters menu offers: the numeric parameters and each receptor's ligand-type call. */
export type SarChoice = SarParameter | 'call';
export type WindowState = 'inside' | 'outside' | 'uncertain';

/** Parameters the table can show, in the order offered. */
export const PARAMETER_CHOICES: readonly { key: SarChoice; label: string; hint: string }[] = [
  { key: 'call', label: 'Call', hint: 'ligand type at each receptor (computed suggestion)' },
  { key: 'pKi', label: 'pKi', hint: 'affinity from binding (Cheng–Prusoff)' },
  { key: 'pEC50', label: 'pEC50', hint: 'agonist potency' },
  { key: 'emax', label: 'Emax', hint: 'maximal response, % of the reference agonist' },
  { key: 'alpha', label: 'α', hint: 'intrinsic activity against the reference full agonist' },
  { key: 'pIC50', label: 'pIC50', hint: 'inhibitory potency' },
  { key: 'pKB', label: 'pKB', hint: 'antagonist affinity from a functional assay' },
  { key: 'pA2', label: 'pA2', hint: 'Schild analysis' },
  { key: 'logTauKA', label: 'log(τ/KA)', hint: 'transduction coefficient (operational model)' },
];

export interface SarCell {
  value: number | null;
  qualifier: Qualifier;
  sd: number | null;
  n: number;
  censored: number;
  flag: 'censored-excluded' | 'all-censored' | 'conflicting-bounds' | null;
  submitted: number;
}

export interface SarMargin {
  value: number;
  qualifier: Qualifier;
  fold: number;
  window: WindowState;
}

export interface SarRow {
  id: number;
  registryNumber: string;
  name: string | null;
  aliases: string[];
  idCode: string;
  smiles: string;
  seriesId: number;
  seriesCode: string;
  mw: number;
  clogp: number;
  tpsa: number;
  heavyAtoms: number;
  hbd: number;
  hba: number;
  registeredAt: string;
  /** Column id (t:<target>:<parameter> or a:<assay>:<parameter>) → aggregate. */
  cells: Record<string, SarCell>;
  margins: Record<string, SarMargin>;
  worstMargin: (SarMargin & { targetId: number }) | null;
  le: { value: number; qualifier: Qualifier } | null;
  lipe: { value: number; qualifier: Qualifier } | null;
  rgroups: Record<string, string> | null;
  rgroupProblem: string | null;
  match: number[] | null;
  calls: Record<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>;
  /** The project's ranking score, or null with the reason in scoreNote. */
  score: number | null;
  scoreNote: string | null;
}

export interface SarColumn {
  id: string;
  header: string;
  kind: 'compound' | 'property' | 'rgroup' | 'value' | 'margin' | 'efficiency' | 'call';
  unit?: string;
  targetId?: number;
  parameter?: SarParameter;
  assay?: { id: number; code: string; readout: string };
}

export interface SarColumnGroup {
  id: string;
  header: string;
  targetId?: number;
  role?: 'primary' | 'anti-target' | null;
  children: SarColumn[];
}

export interface SarTarget {
  id: number;
  name: string;
  geneSymbol: string;
  species: string;
  role: 'primary' | 'anti-target' | null;
  agonismUnwanted: boolean;
}

export interface SarTable {
  project: { id: number; code: string; name: string; selectivityWindow: number; ranking: { potency: number; margin: number; lipe: number; requiredCalls: string[] } };
  primaryTarget: { id: number; name: string; geneSymbol: string } | null;
  selectivityBy: 'pKi' | 'pEC50';
  window: number;
  includeSubmitted: boolean;
  parameters: { key: SarParameter; label: string; unit: string }[];
  targets: SarTarget[];
  series: { id: number; code: string; name: string; core: string | null; rgroupLabels: string[]; coreProblem: string | null }[];
  columns: SarColumnGroup[];
  rows: SarRow[];
  total: number;
  substructure: { complete: boolean; note: string | null } | null;
  elapsedMs: number;
}

/** What the table asks the server for (and what the address and a saved view keep). */
export interface SarQuery {
  project: string;
  seriesIds: number[];
  targetIds: number[];
  parameters: SarChoice[];
  substructure: string | null;
  includeSubmitted: boolean;
}

export interface CellResult {
  id: number;
  status: 'approved' | 'submitted';
  source: 'fit' | 'manual';
  values: Record<string, { value: number; qualifier: Qualifier; unit?: string } | undefined>;
  runId: number | null;
  runDate: string | null;
  assay: { id: number; code: string; name: string; kind: string; readout: string };
}

export interface ViewState {
  seriesIds: number[];
  targetIds: number[];
  parameters: SarChoice[];
  substructure: string | null;
  text: string | null;
  includeSubmitted: boolean;
  columnState: Record<string, unknown>[];
  filterModel: Record<string, unknown>;
}

export interface SavedView {
  id: number;
  name: string;
  projectId: number;
  shared: boolean;
  owner: { id: number; name: string };
  mine: boolean;
  state: ViewState;
  version: number;
  updatedAt: string;
}

export interface ExportRequest extends SarQuery {
  columns: string[];
  compounds: number[];
}

function tableParams(q: SarQuery): HttpParams {
  let params = new HttpParams().set('project', q.project).set('parameters', q.parameters.join(','));
  if (q.seriesIds.length) params = params.set('series', q.seriesIds.join(','));
  if (q.targetIds.length) params = params.set('targets', q.targetIds.join(','));
  if (q.substructure?.trim()) params = params.set('substructure', q.substructure);
  if (q.includeSubmitted) params = params.set('status', 'submitted');
  return params;
}

@Injectable({ providedIn: 'root' })
export class SarApi {
  private readonly http = inject(HttpClient);

  projects(): Observable<{ id: number; code: string; name: string }[]> {
    return this.http.get<{ items: { id: number; code: string; name: string }[] }>('/api/projects').pipe(map((r) => r.items));
  }

  series(projectId: number): Observable<{ id: number; code: string; name: string }[]> {
    return this.http.get<{ items: { id: number; code: string; name: string }[] }>('/api/series', { params: { projectId } }).pipe(map((r) => r.items));
  }

  targets(): Observable<{ id: number; name: string; geneSymbol: string; species: string }[]> {
    return this.http.get<{ items: { id: number; name: string; geneSymbol: string; species: string }[] }>('/api/targets').pipe(map((r) => r.items));
  }

  table(q: SarQuery): Observable<SarTable> {
    return this.http.get<SarTable>('/api/sar', { params: tableParams(q) });
  }

  cell(compoundId: number, column: string, includeSubmitted: boolean): Observable<CellResult[]> {
    const params = new HttpParams().set('compound', compoundId).set('column', column).set('status', includeSubmitted ? 'submitted' : 'approved');
    return this.http.get<{ items: CellResult[] }>('/api/sar/cell', { params }).pipe(map((r) => r.items));
  }

  /** The export as a file (the grid's columns and rows in its order). */
  export(kind: 'csv' | 'sdf', req: ExportRequest): Observable<Blob> {
    const body = {
      project: req.project,
      parameters: req.parameters,
      series: req.seriesIds,
      targets: req.targetIds,
      ...(req.substructure?.trim() ? { substructure: req.substructure } : {}),
      status: req.includeSubmitted ? 'submitted' : 'approved',
      columns: req.columns,
      compounds: req.compounds,
    };
    return this.http.post(`/api/sar/export.${kind}`, body, { responseType: 'blob' });
  }

  views(projectId: number): Observable<SavedView[]> {
    return this.http.get<{ items: SavedView[] }>('/api/sar/views', { params: { project: projectId } }).pipe(map((r) => r.items));
  }

  saveView(projectId: number, name: string, shared: boolean, state: ViewState): Observable<SavedView> {
    return this.http.post<SavedView>('/api/sar/views', { projectId, name, shared, state });
  }

  updateView(view: SavedView, change: { name?: string; shared?: boolean; state?: ViewState }): Observable<SavedView> {
    return this.http.patch<SavedView>(`/api/sar/views/${view.id}`, { version: view.version, ...change });
  }

  deleteView(id: number): Observable<void> {
    return this.http.delete<void>(`/api/sar/views/${id}`);
  }
}
