import { HttpClient, HttpParams } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import { Observable, map } from 'rxjs';
import type { Assay, Measurement, Result } from '../assays/assay-api';
import type { Qualifier, SarCell, SarColumnGroup, SarMargin, SarTarget } from '../sar-table/sar-api';
import type { RankingConfig as Ranking, Score } from '../../../../api/src/domain/selectivity';

export type DecisionKind = 'progress' | 'hold' | 'stop';

// The score and ranking shapes are the API's own (pure domain types, shared like the role table).
export type { Score, ScoreTerm } from '../../../../api/src/domain/selectivity';
export type { RankingConfig as Ranking } from '../../../../api/src/domain/selectivity';

export interface Decision {
  id: number;
  compoundId: number;
  registryNumber: string | null;
  decision: DecisionKind;
  rationale: string;
  author: { id: number; name: string };
  at: string;
  snapshot: { primaryPKi: { value: number; qualifier: Qualifier } | null; worstMargin: (SarMargin & { targetId: number }) | null; primaryCall: string | null; windowLog: number; score: number | null };
  flagged: boolean;
  flaggedReason: string | null;
  current: boolean;
}

export interface MatrixCell {
  pKi: SarCell | null;
  margin: SarMargin | null;
  call: string | null;
  callSource: 'rule' | 'manual' | null;
  unwantedAgonism: boolean;
}

export interface MatrixRow {
  compound: { id: number; registryNumber: string; name: string | null; idCode: string; seriesCode: string; heavyAtoms: number; clogp: number };
  primary: SarCell | null;
  cells: Record<string, MatrixCell>;
  worstMargin: (SarMargin & { targetId: number }) | null;
  insideWindow: boolean;
  unwantedAgonism: number[];
  le: { value: number; qualifier: Qualifier } | null;
  lipe: { value: number; qualifier: Qualifier } | null;
  score: Score;
  decision: Decision | null;
}

export interface ProjectInfo {
  id: number;
  code: string;
  name: string;
  selectivityWindow: number;
  ranking: Ranking;
}

export interface Matrix {
  project: ProjectInfo;
  primaryTarget: { id: number; name: string; geneSymbol: string } | null;
  window: number;
  ranking: Ranking;
  targets: SarTarget[];
  rows: MatrixRow[];
  caution: string;
}

export interface CompareCompound {
  id: number;
  registryNumber: string;
  name: string | null;
  idCode: string;
  seriesCode: string;
  differences: number[] | null;
  properties: { formula: string; mw: number; clogp: number; tpsa: number; hbd: number; hba: number; rotatableBonds: number; heavyAtoms: number };
  cells: Record<string, SarCell>;
  margins: Record<string, SarMargin>;
  calls: Record<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>;
  worstMargin: (SarMargin & { targetId: number }) | null;
  le: { value: number; qualifier: Qualifier } | null;
  lipe: { value: number; qualifier: Qualifier } | null;
  score: Score;
  decision: Decision | null;
}

export interface Comparison {
  project: ProjectInfo;
  primaryTarget: { id: number; name: string; geneSymbol: string } | null;
  window: number;
  targets: SarTarget[];
  columns: SarColumnGroup[];
  commonCore: { seriesCode: string; core: string | null } | null;
  compounds: CompareCompound[];
  caution: string;
}

export interface Overview {
  project: ProjectInfo;
  primaryTarget: { id: number; name: string; geneSymbol: string } | null;
  window: number;
  series: { code: string; name: string; compounds: number; progress: number; hold: number; stop: number; undecided: number; flagged: number }[];
  results: { draft: number; submitted: number; approved: number; rejected: number };
  recentDecisions: Decision[];
  flaggedDecisions: Decision[];
  topRanked: { compound: MatrixRow['compound']; score: Score; worstMargin: MatrixRow['worstMargin']; primary: SarCell | null; decision: Decision | null }[];
  scatter: { id: number; registryNumber: string; seriesCode: string; potency: number; potencyQualifier: Qualifier; margin: number | null; marginQualifier: Qualifier | null; decision: DecisionKind | null }[];
  caution: string;
}

export type ResultWithCurve = Result & { assay: Assay; points?: Measurement[] };

@Injectable({ providedIn: 'root' })
export class SelectivityApi {
  private readonly http = inject(HttpClient);

  projects(): Observable<{ id: number; code: string; name: string }[]> {
    return this.http.get<{ items: { id: number; code: string; name: string }[] }>('/api/projects').pipe(map((r) => r.items));
  }

  matrix(project: string): Observable<Matrix> {
    return this.http.get<Matrix>('/api/selectivity', { params: { project } });
  }

  matrixCsv(project: string): Observable<Blob> {
    return this.http.get('/api/selectivity/export.csv', { params: { project }, responseType: 'blob' });
  }

  compare(project: string, ids: number[]): Observable<Comparison> {
    return this.http.get<Comparison>('/api/selectivity/compare', { params: { project, compounds: ids.join(',') } });
  }

  compareCsv(project: string, ids: number[]): Observable<Blob> {
    return this.http.get('/api/selectivity/compare/export.csv', { params: { project, compounds: ids.join(',') }, responseType: 'blob' });
  }

  /** A compound's results with their points (for the overlaid curves). */
  curves(registryNumber: string): Observable<ResultWithCurve[]> {
    const params = new HttpParams().set('compound', registryNumber).set('points', 'true').set('status', 'approved').set('limit', 200);
    return this.http.get<{ items: ResultWithCurve[] }>('/api/results', { params }).pipe(map((r) => r.items));
  }

  decide(projectId: number, compoundId: number, decision: DecisionKind, rationale: string): Observable<Decision> {
    return this.http.post<Decision>('/api/decisions', { projectId, compoundId, decision, rationale });
  }

  settings(projectId: number, body: { selectivityWindow?: number; ranking?: Partial<Ranking> }): Observable<{ selectivityWindow: number; ranking: Ranking }> {
    return this.http.patch<{ selectivityWindow: number; ranking: Ranking }>(`/api/projects/${projectId}/settings`, body);
  }

  overview(project: string): Observable<Overview> {
    return this.http.get<Overview>('/api/overview', { params: { project } });
  }
}
