import { HttpClient, HttpParams } from '@angular/common/http';
import { inject, Injectable } from '@angular/core';
import type { Observable } from 'rxjs';
import type { CallThresholds, LigandCall as LigandCallName } from '../../../../api/src/domain/ligand-call';
import type { SchildExcluded, SchildFlag, SchildPoint } from '../../../../api/src/domain/schild';
import type { WhatIfCurve } from '../../../../api/src/domain/what-if';
import type { AssayKind, CompoundLink, Person, Qualifier, ResultStatus, ResultValue, ResultValues } from './assay-api';

// The call names, thresholds and analysis shapes are the API domain's own (one definition).
export { LIGAND_CALLS } from '../../../../api/src/domain/ligand-call';
export type { CallThresholds, LigandCallName, SchildExcluded, SchildFlag, SchildPoint, WhatIfCurve };

export interface CallEvidence {
  resultId: number;
  assayId: number;
  assayCode: string;
  note: string;
}

/** A ligand-type call per compound × target (computed by the rule, or a pharmacologist's override). */
export interface LigandCall {
  id: number;
  compound: CompoundLink;
  target: { id: number; name: string; geneSymbol: string };
  call: LigandCallName;
  source: 'rule' | 'manual';
  computedCall: LigandCallName;
  rule: string;
  evidence: CallEvidence[];
  conflicts: { resultIds: number[]; note: string }[];
  computedAt: string;
  override: { reason: string | null; by: Person | null; at: string | null } | null;
  contradicted: boolean;
  version: number;
  caution: string;
}

export type ThresholdKey = keyof CallThresholds;

export interface CallList {
  total: number;
  items: LigandCall[];
  caution: string;
  thresholdsNote: string;
  defaults: CallThresholds;
}

export interface AssayThresholds {
  defaults: CallThresholds;
  overrides: Partial<CallThresholds>;
  effective: CallThresholds;
  note: string;
  /** After a save: how many calls were evaluated again. */
  recomputed?: number;
}

export interface Estimate {
  value: number | null;
  se: number | null;
  ci95: [number, number] | null;
}

/** A point of an agonist curve behind a Schild or allosteric analysis (response in % of the agonist's window). */
export interface AnalysisPoint {
  id: number;
  logConc: number;
  response: number | null;
  excluded: boolean;
}

export interface AnalysisCurve {
  id: string;
  /** null for the agonist alone (the control curve). */
  condition: string | null;
  concentrationM: number;
  fit: { ok: boolean; n: number; bottom: number | null; top: number | null; logEC50: number | null; logEC50Se: number | null; hillSlope: number | null; potencyQualifier: Qualifier; flags: string[]; messages: string[] };
  points: AnalysisPoint[];
}

interface AnalysisItem {
  resultId: number;
  status: ResultStatus;
  compound: CompoundLink;
  batch: { id: number; batchNumber: string };
  agonist: { batchId: number; batchNumber: string; compoundId: number; registryNumber: string };
  method: string;
  values: ResultValues;
  curves: AnalysisCurve[];
}

export interface SchildItem extends AnalysisItem {
  schild: {
    ok: boolean;
    controlEc50M: number | null;
    controlEmax: number | null;
    points: SchildPoint[];
    excluded: SchildExcluded[];
    n: number;
    dof: number;
    slope: Estimate | null;
    intercept: Estimate | null;
    pA2: Estimate | null;
    pKB: Estimate | null;
    flags: SchildFlag[];
    messages: string[];
    line: { logB: number; logDrMinus1: number }[];
    xIntercept: number | null;
  };
}

export type ModulatorClass = 'positive allosteric modulator' | 'negative allosteric modulator' | 'allosteric agonist' | 'neutral' | 'inconclusive';

export interface AllostericItem extends AnalysisItem {
  allosteric: {
    ok: boolean;
    controlEc50M: number | null;
    controlEmax: number | null;
    shifts: { id?: string; modulatorConcM: number; logB: number; ec50M: number; foldShift: number; emaxChange: number | null }[];
    excluded: { id?: string; modulatorConcM: number; reason: string }[];
    modulatorAlone: { emax: number; alpha: number | null } | null;
    atcm: { ok: boolean; n: number; dof: number; logKB: Estimate; logAlpha: Estimate; flags: string[]; messages: string[] };
    classification: { call: ModulatorClass; rule: string };
    messages: string[];
  };
  modulatorAlone: { fit: AnalysisCurve['fit']; emax: number | null; alpha: number | null; points: AnalysisPoint[] } | null;
  thresholds: { pamFoldShift: number; namFoldShift: number; emaxChange: number; allostericAgonistAlpha: number } | null;
}

export interface RunAnalysis<T> {
  runId: number;
  assayId: number;
  assayKind: AssayKind;
  items: T[];
  caution: string;
}

export interface AssayRef {
  id: number;
  code: string;
  name: string;
  readout: string;
}

export interface Transduction {
  value: number;
  se: number | null;
  n: number;
  ci95: [number, number] | null;
}

export interface BiasPair {
  assay1: AssayRef;
  assay2: AssayRef;
  deltaPathway1: Estimate;
  deltaPathway2: Estimate;
  deltaDelta: Estimate & { dof: number | null };
  biasFactor: { value: number; ci95: [number, number] | null };
  /** The readout the compound favours relative to the reference, or null at exactly 0. */
  towards: string | null;
}

export interface BiasAnswer {
  compound: CompoundLink;
  target: { id: number; name: string; geneSymbol: string };
  pathways: { assay: AssayRef; referenceCompound: CompoundLink | null; test: Transduction | null; reference: Transduction | null; delta: number | null }[];
  pairs: BiasPair[];
  method: string;
  messages: string[];
  caution: string;
}

export interface WhatIfAnswer {
  assay: AssayRef;
  agonist: CompoundLink & { basis: { resultId: number; status: ResultStatus; logTau: ResultValue; logKA: ResultValue } };
  partner: CompoundLink & { basis: Record<string, unknown> };
  em: number;
  unit: string;
  curves: WhatIfCurve[];
  method: string;
  messages: string[];
  caution: string;
}

/** Ligand-type calls, call thresholds, the Schild and allosteric analyses of runs, bias and what-if. */
@Injectable({ providedIn: 'root' })
export class MechanismApi {
  private readonly http = inject(HttpClient);

  /** The calls of one compound (registry number) at every receptor. */
  calls(compound: string): Observable<CallList> {
    return this.http.get<CallList>('/api/calls', { params: new HttpParams().set('compound', compound) });
  }

  overrideCall(id: number, call: LigandCallName, reason: string, version?: number): Observable<LigandCall> {
    return this.http.post<LigandCall>(`/api/calls/${id}/override`, { call, reason: reason.trim(), ...(version !== undefined ? { version } : {}) });
  }

  clearOverride(id: number, reason?: string): Observable<LigandCall> {
    return this.http.post<LigandCall>(`/api/calls/${id}/clear-override`, reason?.trim() ? { reason: reason.trim() } : {});
  }

  thresholds(assayId: number): Observable<AssayThresholds> {
    return this.http.get<AssayThresholds>(`/api/assays/${assayId}/call-thresholds`);
  }

  /** Replaces the assay's own thresholds (null = the defaults); the server recomputes the calls they feed. */
  saveThresholds(assayId: number, thresholds: Partial<CallThresholds> | null, version?: number): Observable<AssayThresholds> {
    return this.http.put<AssayThresholds>(`/api/assays/${assayId}/call-thresholds`, { thresholds, ...(version !== undefined ? { version } : {}) });
  }

  schild(runId: number): Observable<RunAnalysis<SchildItem>> {
    return this.http.get<RunAnalysis<SchildItem>>(`/api/runs/${runId}/schild`);
  }

  allosteric(runId: number): Observable<RunAnalysis<AllostericItem>> {
    return this.http.get<RunAnalysis<AllostericItem>>(`/api/runs/${runId}/allosteric`);
  }

  bias(compound: string, targetId: number, assays?: [number, number]): Observable<BiasAnswer> {
    let params = new HttpParams().set('compound', compound).set('target', targetId);
    if (assays) params = params.set('assays', assays.join(','));
    return this.http.get<BiasAnswer>('/api/bias', { params });
  }

  whatIf(compound: string, assayId: number, concentrationsM?: number[]): Observable<WhatIfAnswer> {
    let params = new HttpParams().set('compound', compound).set('assay', assayId);
    if (concentrationsM?.length) params = params.set('concentrations', concentrationsM.map((c) => String(c)).join(','));
    return this.http.get<WhatIfAnswer>('/api/what-if', { params });
  }
}
