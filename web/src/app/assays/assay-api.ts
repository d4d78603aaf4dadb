import { HttpBackend, HttpClient, HttpEventType, HttpParams, HttpXhrBackend, provideHttpClient, withInterceptors } from '@angular/common/http';
import { createEnvironmentInjector, EnvironmentInjector, inject, Injectable } from '@angular/core';
import { Observable, filter, map } from 'rxjs';
import { authInterceptor } from '../auth/auth-interceptor';

export const TARGET_FAMILIES = ['GPCR', 'ion channel', 'nuclear receptor', 'transporter', 'enzyme', 'other'] as const;
export type TargetFamily = (typeof TARGET_FAMILIES)[number];
export const ASSAY_KINDS = ['binding', 'functional-agonist', 'functional-antagonist', 'allosteric-modulation'] as const;
export type AssayKind = (typeof ASSAY_KINDS)[number];
export type ResultStatus = 'draft' | 'submitted' | 'approved' | 'rejected';
export type Qualifier = '=' | '<' | '>';
export type FitFlag = 'too-few-points' | 'flat' | 'incomplete-top' | 'incomplete-bottom' | 'ambiguous' | 'above-range' | 'below-range' | 'not-converged';

export interface Target {
  id: number;
  name: string;
  geneSymbol: string;
  family: TargetFamily;
  species: string;
  description: string | null;
  /** Retired: kept with its assays and data, offered for no new assay. */
  retired: boolean;
  version: number;
  /** In the panel list only. */
  assayCount?: number;
}

export interface NewTarget {
  name: string;
  geneSymbol: string;
  family: TargetFamily;
  species: string;
  description?: string | null;
}

export interface CompoundLink {
  id: number;
  registryNumber: string;
  name: string | null;
}

export interface Assay {
  id: number;
  code: string;
  name: string;
  target: Target;
  kind: AssayKind;
  readout: string;
  species: string;
  cellSystem: string | null;
  constitutiveActivity: boolean;
  radioligand: string | null;
  radioligandConcM: number | null;
  radioligandKdM: number | null;
  /** Agonist and modulator modes: the reference full agonist; antagonist mode: the agonist. */
  referenceCompound: CompoundLink | null;
  agonistConcM: number | null;
  agonistEc50M: number | null;
  agonistHill: number | null;
  description: string | null;
  /** Retired: keeps its runs and results, takes no new ones until restored. */
  retired: boolean;
  version: number;
}

export interface AssaySummary extends Assay {
  runCount: number;
  lastRunDate: string | null;
}

export interface NewAssay {
  code: string;
  name: string;
  targetId: number;
  kind: AssayKind;
  readout: string;
  species: string;
  cellSystem?: string | null;
  constitutiveActivity?: boolean;
  radioligand?: string | null;
  radioligandConcM?: number | null;
  radioligandKdM?: number | null;
  /** Registry number. */
  referenceCompound?: string | null;
  agonistConcM?: number | null;
  agonistEc50M?: number | null;
  agonistHill?: number | null;
  description?: string | null;
}

export interface Person {
  id: number;
  name: string;
}

export interface RunSummary {
  id: number;
  runDate: string;
  format: 'long' | 'plate';
  operator: Person;
  notes: string | null;
  /** Result counts by status ({draft: 3, submitted: 1}). */
  results: Partial<Record<ResultStatus, number>>;
  createdAt: string;
}

export interface AssayDetail extends Assay {
  runs: RunSummary[];
}

export interface Estimate {
  value: number | null;
  se: number | null;
  ci95: [number, number] | null;
  fixed: boolean;
}

export interface FixedParams {
  top?: number;
  bottom?: number;
  hillSlope?: number;
}

/** The four-parameter logistic fit as the API stores it (NaN arrives as null). */
export interface CurveFit {
  ok: boolean;
  n: number;
  dof: number;
  rss: number | null;
  rSquared: number | null;
  iterations: number;
  params: { bottom: Estimate; top: Estimate; logEC50: Estimate; hillSlope: Estimate };
  testedRange: [number | null, number | null];
  potency: { qualifier: Qualifier; logValue: number | null };
  flags: FitFlag[];
  messages: string[];
  fixed: FixedParams;
}

export interface ResultValue {
  value: number;
  qualifier: Qualifier;
  unit: string;
  se?: number | null;
  ci95?: [number, number] | null;
  n?: number | null;
}

export type ValueKey = 'pEC50' | 'pIC50' | 'pKi' | 'pKB' | 'emax' | 'alpha' | 'hillSlope' | 'top' | 'bottom' | MechanismValueKey;
/** Values of the mechanism analyses: operational model, Schild, allosteric modulation, basal change. */
export type MechanismValueKey = 'logTau' | 'logKA' | 'logTauKA' | 'pA2' | 'schildSlope' | 'foldShift' | 'emaxChange' | 'logKB' | 'logCooperativity' | 'basalChange';
export type ResultValues = Partial<Record<ValueKey, ResultValue>>;

export interface Result {
  id: number;
  assayId: number;
  runId: number | null;
  runDate?: string | null;
  batch: { id: number; batchNumber: string };
  compound: CompoundLink;
  condition: string | null;
  source: 'fit' | 'manual';
  isReference: boolean;
  status: ResultStatus;
  values: ResultValues;
  fit: CurveFit | null;
  fixed: FixedParams | null;
  /** The mechanism analysis behind the values (operational model, Schild, allosteric), as the API stores it. */
  analysis?: { kind?: string; em?: number; ok?: boolean; messages?: string[]; method?: string } | null;
  note: string | null;
  submittedBy: Person | null;
  submittedAt: string | null;
  reviewedBy: Person | null;
  reviewedAt: string | null;
  reviewComment: string | null;
  version: number;
  updatedAt: string;
}

export interface Measurement {
  id: number;
  batchId: number | null;
  control: 'basal' | 'max' | 'blank' | null;
  concentrationM: number | null;
  response: number;
  normalised: number | null;
  replicate: number | null;
  well: string | null;
  condition: string | null;
  excluded: boolean;
  line: number | null;
}

export interface Normalisation {
  method: 'percent-of-reference' | 'percent-inhibition' | 'percent-specific-binding';
  zero: number;
  hundred: number;
  zeroFrom: string;
  hundredFrom: string;
  controls?: { basal: number | null; max: number | null; blank: number | null };
  referenceCompound?: string | null;
}

export interface RunFile {
  id: number;
  role: 'long' | 'matrix' | 'map';
  fileName: string;
  size: number;
}

export interface RunDetail {
  id: number;
  runDate: string;
  format: 'long' | 'plate';
  notes: string | null;
  operator: Person;
  assay: Assay;
  normalisation: Normalisation;
  droppedRows: { where: string; message: string }[];
  files: RunFile[];
  measurements: Measurement[];
  results: Result[];
  caution: string;
}

export interface RunUpload {
  runDate: string;
  notes?: string;
  dropBadRows?: boolean;
  /** A long CSV, or a plate matrix with its plate map. */
  files: { file: File } | { matrix: File; map: File };
}

export interface RunCreated {
  runId: number;
  results: number;
  droppedRows: number;
}

/** What an upload reports while it runs: the share sent so far, then the answer. */
export type UploadEvent = { kind: 'progress'; percent: number | null } | { kind: 'done'; created: RunCreated };

export interface Refit {
  exclude?: number[];
  include?: number[];
  fixed?: FixedParams;
  version?: number;
}

export interface ReviewItem extends Result {
  assay: Assay;
  points: Measurement[];
}

export interface ResultPage<T extends Result = Result> {
  total: number;
  items: T[];
  caution: string;
}

export interface ManualValue {
  value: number;
  qualifier: Qualifier;
  sd?: number | null;
  n?: number | null;
}

export interface ManualEntry {
  assayId: number;
  /** Batch number, or the registry number of a compound with one batch. */
  sample: string;
  values: Partial<Record<'pKi' | 'pIC50' | 'pEC50' | 'pKB' | 'emax' | 'alpha' | 'hillSlope', ManualValue>>;
  /** Where the values were measured. */
  note: string;
}

export type TemplateName = 'raw-data-long.csv' | 'plate-matrix-96.csv' | 'plate-map-96.csv';

/** Targets (the receptor panel), assay protocols, runs and results. */
@Injectable({ providedIn: 'root' })
export class AssayApi {
  private readonly http = inject(HttpClient);
  /**
   * Uploads go through XMLHttpRequest: the app's fetch backend (withFetch) cannot report upload
   * progress. Same interceptors, so the bearer token and the sign-out on 401 still apply.
   */
  private readonly uploadHttp = createEnvironmentInjector(
    [provideHttpClient(withInterceptors([authInterceptor])), { provide: HttpBackend, useExisting: HttpXhrBackend }],
    inject(EnvironmentInjector),
  ).get(HttpClient);

  targets(): Observable<Target[]> {
    return this.http.get<{ items: Target[] }>('/api/targets').pipe(map((r) => r.items));
  }

  /** Retires a receptor (or restores it): audited on the server; `version` guards against a stale page (409). */
  setTargetRetired(target: Target, retired: boolean): Observable<Target> {
    return this.http.patch<Target>(`/api/targets/${target.id}`, { retired, version: target.version });
  }

  /** Retires an assay (or restores it): it keeps its results and takes no new runs or entries while retired. */
  setAssayRetired(assay: Assay, retired: boolean): Observable<Assay> {
    return this.http.patch<Assay>(`/api/assays/${assay.id}`, { retired, version: assay.version });
  }

  createTarget(target: NewTarget): Observable<Target> {
    return this.http.post<Target>('/api/targets', target);
  }

  assays(targetId?: number): Observable<AssaySummary[]> {
    const params = targetId ? new HttpParams().set('targetId', targetId) : undefined;
    return this.http.get<{ items: AssaySummary[] }>('/api/assays', { params }).pipe(map((r) => r.items));
  }

  assay(id: number): Observable<AssayDetail> {
    return this.http.get<AssayDetail>(`/api/assays/${id}`);
  }

  createAssay(assay: NewAssay): Observable<Assay> {
    return this.http.post<Assay>('/api/assays', assay);
  }

  template(name: TemplateName): Observable<Blob> {
    return this.http.get(`/api/assays/templates/${name}`, { responseType: 'blob' });
  }

  uploadRun(assayId: number, upload: RunUpload): Observable<UploadEvent> {
    const body = new FormData();
    body.append('runDate', upload.runDate);
    if (upload.notes?.trim()) body.append('notes', upload.notes.trim());
    body.append('dropBadRows', upload.dropBadRows ? 'true' : 'false');
    for (const [field, file] of Object.entries(upload.files) as [string, File][]) body.append(field, file, file.name);
    return this.uploadHttp.post<RunCreated>(`/api/assays/${assayId}/runs`, body, { observe: 'events', reportProgress: true }).pipe(
      map((event): UploadEvent | null => {
        if (event.type === HttpEventType.UploadProgress) return { kind: 'progress', percent: event.total ? Math.round((100 * event.loaded) / event.total) : null };
        if (event.type === HttpEventType.Response && event.body) return { kind: 'done', created: event.body };
        return null;
      }),
      filter((e): e is UploadEvent => e !== null),
    );
  }

  run(id: number): Observable<RunDetail> {
    return this.http.get<RunDetail>(`/api/runs/${id}`);
  }

  runFile(runId: number, fileId: number): Observable<Blob> {
    return this.http.get(`/api/runs/${runId}/files/${fileId}`, { responseType: 'blob' });
  }

  submitRun(runId: number): Observable<number[]> {
    return this.http.post<{ submitted: number[] }>(`/api/runs/${runId}/submit`, {}).pipe(map((r) => r.submitted));
  }

  refit(resultId: number, change: Refit): Observable<Result> {
    return this.http.patch<Result>(`/api/results/${resultId}`, change);
  }

  submitResult(resultId: number): Observable<Result> {
    return this.http.post<Result>(`/api/results/${resultId}/submit`, {});
  }

  approve(resultId: number, comment?: string, version?: number): Observable<Result> {
    return this.http.post<Result>(`/api/results/${resultId}/approve`, { ...(comment?.trim() ? { comment: comment.trim() } : {}), ...(version !== undefined ? { version } : {}) });
  }

  reject(resultId: number, comment: string, version?: number): Observable<Result> {
    return this.http.post<Result>(`/api/results/${resultId}/reject`, { comment: comment.trim(), ...(version !== undefined ? { version } : {}) });
  }

  /** Results of one assay (the assay page lists those entered by hand, which belong to no run). */
  assayResults(assayId: number, limit = 500): Observable<ResultPage> {
    const params = new HttpParams().set('assayId', assayId).set('limit', limit);
    return this.http.get<ResultPage>('/api/results', { params });
  }

  /** Every result of one compound (by registry number), each with its assay. */
  compoundResults(registryNumber: string, limit = 500): Observable<ResultPage<Result & { assay: Assay }>> {
    const params = new HttpParams().set('compound', registryNumber).set('limit', limit);
    return this.http.get<ResultPage<Result & { assay: Assay }>>('/api/results', { params });
  }

  reviewQueue(limit: number, offset: number, assayId: number | null = null): Observable<ResultPage<ReviewItem>> {
    let params = new HttpParams().set('status', 'submitted').set('points', 'true').set('limit', limit).set('offset', offset);
    if (assayId) params = params.set('assayId', assayId);
    return this.http.get<ResultPage<ReviewItem>>('/api/results', { params });
  }

  enterManual(entry: ManualEntry): Observable<Result> {
    return this.http.post<Result>('/api/results', entry);
  }
}
