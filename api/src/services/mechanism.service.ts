// Mechanism analyses of a run, after its curves are fitted (and after every refit), stored in the
// results' `values` (ResultValue shape) and `analysis` (the inputs, outputs, flags and messages):
//
// - functional-agonist runs: the operational model (Black & Leff 1983) for every curve, Em held at
//   the run's reference full agonist's fitted top (normalised, % of the reference window over
//   basal), giving logTau, logKA and logTauKA = log(τ/KA) (Kenakin et al. 2012); in a
//   constitutively active system also basalChange (see `basalChangeOf`).
// - functional-antagonist runs with antagonist conditions: Schild analysis (Arunlakshana & Schild
//   1959) per antagonist from its agonist curves, giving pA2 (not when the shift saturates: the
//   x-intercept of a ceiling is no affinity), schildSlope and, when the slope is compatible with 1
//   and the shift does not saturate, pKB; stored in the antagonist's result.
// - allosteric-modulation runs with modulator conditions: fold-shifts, Emax changes and the
//   allosteric ternary complex model (Ehlert 1988) per modulator, giving foldShift, emaxChange,
//   logKB and logCooperativity; stored in the modulator's result (its own curve's result when the
//   modulator alone was measured, else a result of its own).
// The raw-data convention for the second ligand is in domain/run-conditions.ts. Only draft and
// rejected results change (submitted and approved ones are locked, as for refits).
import type { EntityManager } from '@mikro-orm/postgresql';
import { Batch, Compound, type IBatch } from '../entities/compound.entity.js';
import { Measurement, Result, Run, type IMeasurement, type IResult, type IRun, type ResultValue, type ResultValues } from '../entities/assay.entity.js';
import { fitFourPL, type CurvePoint, type FourPlFit } from '../domain/curve-fit.js';
import { fitOperationalModel } from '../domain/operational-model.js';
import { schildAnalysis, type SchildCurve } from '../domain/schild.js';
import { analyseAllostericRun, type ModulatorCurve } from '../domain/allosteric.js';
import { resolveThresholds } from '../domain/ligand-call.js';
import { conditionRoleFor, isLigandCondition, parseLigandCondition, type LigandRole } from '../domain/run-conditions.js';
import type { RawDataIssue, RawPoint } from '../domain/raw-data.js';
import { basalChangeOf } from '../domain/mechanism-values.js';

export const SCHILD_METHOD = 'Schild regression (Arunlakshana & Schild 1959): dose ratios from the agonist curves fitted with the four-parameter logistic; pA2 = intercept/slope (Fieller 95 % CI); pKB from the slope-1 fit when the slope is compatible with 1';
export const OPERATIONAL_METHOD = 'Operational model (Black & Leff 1983), slope n = 1, Em held at the fitted top of the run\'s reference full agonist; log(τ/KA) as in Kenakin et al. (2012)';
export const ALLOSTERIC_METHOD = 'Fold-shift EC50(0)/EC50([B]) and Emax change per modulator concentration; allosteric ternary complex model (Ehlert 1988; α > 1 positive cooperativity) fitted to the fold-shifts';

const EDITABLE = new Set(['draft', 'rejected']);

/** Resolves batch or registry numbers (a compound with one batch) to batches; unknown ones are left out. */
export async function resolveBatches(em: EntityManager, names: string[]): Promise<Map<string, IBatch>> {
  const keys = [...new Set(names.map((n) => n.toUpperCase()))];
  const out = new Map<string, IBatch>();
  if (!keys.length) return out;
  for (const b of await em.find(Batch, { batchNumber: { $in: keys } }, { populate: ['compound'] })) out.set(b.batchNumber.toUpperCase(), b);
  const rest = keys.filter((k) => !out.has(k));
  if (rest.length) {
    const compounds = await em.find(Compound, { registryNumber: { $in: rest } });
    const batches = compounds.length ? await em.find(Batch, { compound: { $in: compounds } }, { populate: ['compound'] }) : [];
    for (const c of compounds) {
      const own = batches.filter((b) => b.compound.id === c.id);
      if (own.length === 1) out.set(c.registryNumber.toUpperCase(), own[0]);
    }
  }
  return out;
}

/**
 * Upload check of the mechanism conditions (domain/run-conditions.ts): malformed conditions, a role
 * that does not fit the assay's kind, and unknown second ligands are problems of their rows.
 */
export async function checkLigandConditions(em: EntityManager, kind: string, points: RawPoint[]): Promise<{ issues: RawDataIssue[]; badLines: number[]; keep: RawPoint[] }> {
  const role = conditionRoleFor(kind);
  const issues: RawDataIssue[] = [];
  const badLines: number[] = [];
  const parsed = points.map((p) => parseLigandCondition(p.condition));
  const names = parsed.filter(isLigandCondition).map((c) => c.sample);
  const batches = await resolveBatches(em, names);
  const keep: RawPoint[] = [];
  points.forEach((p, i) => {
    const c = parsed[i];
    let problem: string | null = null;
    if (c && 'error' in c) problem = c.error;
    else if (c && c.role !== role) problem = role ? `condition "${p.condition}": a ${kind} run takes "${role} …" conditions, not "${c.role} …"` : `condition "${p.condition}": a ${kind} run takes no antagonist or modulator conditions (free text only)`;
    else if (c && !batches.has(c.sample.toUpperCase())) problem = `condition "${p.condition}": "${c.sample}" is not a batch number or a registry number with a single batch in the registry`;
    else if (c && p.control) problem = `condition "${p.condition}": a control well (${p.control.toUpperCase()}) takes no ${c.role}`;
    if (problem) {
      const where = p.line !== null ? `row ${p.line}, column condition` : p.well ? `well ${p.well}` : 'file';
      issues.push({ where, message: problem });
      if (p.line !== null) badLines.push(p.line);
    } else keep.push(p);
  });
  return { issues, badLines, keep };
}

/** Curve keys (`batchId \0 condition`) that belong to a mechanism analysis rather than to a result of their own. */
export function mechanismCurveKeys(kind: string, measurements: IMeasurement[]): Set<string> {
  const role = conditionRoleFor(kind);
  const keys = new Set<string>();
  if (!role) return keys;
  const agonists = new Set<number>();
  for (const m of measurements) {
    if (!m.batch) continue;
    const c = parseLigandCondition(m.condition);
    if (isLigandCondition(c) && c.role === role) {
      keys.add(`${m.batch.id}\u0000${m.condition ?? ''}`);
      agonists.add(m.batch.id);
    }
  }
  // Schild: the agonist's control curve is an input of the analysis, not an antagonist-mode curve.
  if (role === 'antagonist') for (const id of agonists) keys.add(`${id}\u0000`);
  return keys;
}

/** A ResultValue from an estimate (null when there is no finite value). */
function rv(value: number, unit: string, e: { se?: number | null; ci95?: [number, number] | null; qualifier?: '=' | '<' | '>' } = {}, n: number | null = null): ResultValue | null {
  if (!Number.isFinite(value)) return null;
  return { value, qualifier: e.qualifier ?? '=', unit, se: e.se ?? null, ci95: e.ci95 ?? null, n };
}

function setValues(values: ResultValues, entries: Partial<Record<keyof ResultValues, ResultValue | null>>): ResultValues {
  const out = { ...values };
  for (const [k, v] of Object.entries(entries) as [keyof ResultValues, ResultValue | null][]) {
    if (v) out[k] = v;
    else delete out[k];
  }
  return out;
}

/** Agonist response over basal, % of the reference window, whatever the run's normalisation. */
function agonistResponse(m: IMeasurement, run: IRun): number | null {
  if (m.normalised === null || m.normalised === undefined) return null;
  // Antagonist-mode runs are normalised as % inhibition (MAX = 0, BASAL = 100); the agonist's own
  // response is its complement: (y − basal)/(max − basal)·100 = 100 − % inhibition.
  return (run.normalisation as { method?: string }).method === 'percent-inhibition' ? 100 - m.normalised : m.normalised;
}

function curveOf(ms: IMeasurement[], run: IRun): CurvePoint[] {
  return ms
    .filter((m) => m.concentrationM !== null && m.concentrationM! > 0)
    .map((m) => ({ logConc: Math.log10(m.concentrationM!), response: agonistResponse(m, run)!, excluded: m.excluded }))
    .filter((p) => Number.isFinite(p.response));
}

/** What a plot needs of a 4PL fit. */
export function curveSummary(fit: FourPlFit) {
  return {
    ok: fit.ok,
    n: fit.n,
    bottom: fit.params.bottom.value,
    top: fit.params.top.value,
    logEC50: fit.params.logEC50.value,
    logEC50Se: fit.params.logEC50.se,
    hillSlope: fit.params.hillSlope.value,
    potencyQualifier: fit.potency.qualifier,
    flags: fit.flags,
    messages: fit.messages,
  };
}

interface RunData {
  run: IRun;
  measurements: IMeasurement[];
  results: IResult[];
}

async function loadRun(em: EntityManager, runId: number): Promise<RunData> {
  const run = await em.findOneOrFail(Run, { id: runId }, { populate: ['assay', 'assay.referenceCompound'] });
  const measurements = await em.find(Measurement, { run }, { populate: ['batch', 'batch.compound'], orderBy: { id: 'asc' } });
  const results = await em.find(Result, { run }, { populate: ['batch', 'compound'], orderBy: { id: 'asc' } });
  return { run, measurements, results };
}

const ownCurve = (measurements: IMeasurement[], r: IResult) => measurements.filter((m) => m.batch?.id === r.batch.id && (m.condition ?? null) === (r.condition ?? null));

/** Runs the analyses that fit the run's assay (see the file header). Flushes. */
export async function analyseRunMechanisms(em: EntityManager, runId: number, actorId: number): Promise<void> {
  const data = await loadRun(em, runId);
  const kind = data.run.assay.kind;
  if (kind === 'functional-agonist') operationalForRun(data);
  else if (kind === 'functional-antagonist') await ligandAnalysisForRun(em, data, 'antagonist', actorId);
  else if (kind === 'allosteric-modulation') await ligandAnalysisForRun(em, data, 'modulator', actorId);
  await em.flush();
}

function operationalForRun({ run, measurements, results }: RunData) {
  const reference = results.find((r) => r.isReference);
  const refTop = reference?.values.emax?.value ?? null;
  const em = refTop !== null && refTop > 0 ? refTop : null;
  for (const r of results) {
    if (!EDITABLE.has(r.status)) continue;
    const points = curveOf(ownCurve(measurements, r), run);
    const fit = r.fit as unknown as FourPlFit | null;
    const entries: Partial<Record<keyof ResultValues, ResultValue | null>> = { logTau: null, logKA: null, logTauKA: null, basalChange: null };
    if (run.assay.constitutiveActivity && !r.isReference) {
      const basal = basalChangeOf(fit, points);
      entries.basalChange = basal === null ? null : rv(basal, '%');
    }
    let analysis: Record<string, unknown> | null = null;
    const rising = fit?.ok && fit.params.hillSlope.value > 0 && (r.values.emax?.value ?? 0) > 0;
    if (em === null) {
      analysis = { kind: 'operational-model', method: OPERATIONAL_METHOD, ok: false, messages: ['The run has no fitted reference full agonist curve, so Em (the system maximum) is unknown and the operational model is not fitted.'] };
    } else if (!rising) {
      analysis = { kind: 'operational-model', method: OPERATIONAL_METHOD, ok: false, em, messages: ['No rising agonist curve: the operational model (agonism) is not fitted.'] };
    } else {
      const om = fitOperationalModel(points.map((p) => ({ concentrationM: 10 ** p.logConc, response: p.response, excluded: p.excluded })), { em });
      if (om.ok) {
        entries.logTau = rv(om.params.logTau.value, 'log', om.params.logTau, om.n);
        entries.logKA = rv(om.params.logKA.value, 'log M', om.params.logKA, om.n);
        entries.logTauKA = rv(om.logTauOverKA.value, 'log M⁻¹', om.logTauOverKA, om.n);
      }
      analysis = { kind: 'operational-model', method: OPERATIONAL_METHOD, ok: om.ok, em, referenceResultId: reference!.id, n: om.n, dof: om.dof, emax: om.emax, logEC50: om.logEC50, flags: om.flags, messages: om.messages };
    }
    r.values = setValues(r.values, entries);
    r.analysis = analysis;
  }
}

interface LigandGroup {
  ligand: IBatch;
  agonist: IBatch;
  /** concentration (M) → condition text and measurements. */
  byConc: Map<number, { condition: string; ms: IMeasurement[] }>;
}

async function ligandAnalysisForRun(em: EntityManager, { run, measurements, results }: RunData, role: LigandRole, actorId: number) {
  const conds = new Map<string, ReturnType<typeof parseLigandCondition>>();
  for (const m of measurements) if (m.condition && !conds.has(m.condition)) conds.set(m.condition, parseLigandCondition(m.condition));
  const names = [...conds.values()].filter(isLigandCondition).map((c) => c.sample);
  if (!names.length) return;
  const batches = await resolveBatches(em, names);
  const groups = new Map<number, LigandGroup>();
  for (const m of measurements) {
    const c = m.condition ? (conds.get(m.condition) ?? null) : null;
    if (!m.batch || !isLigandCondition(c) || c.role !== role) continue;
    const ligand = batches.get(c.sample.toUpperCase());
    if (!ligand) continue;
    let g = groups.get(ligand.id);
    if (!g) groups.set(ligand.id, (g = { ligand, agonist: m.batch as IBatch, byConc: new Map() }));
    if (m.batch.id !== g.agonist.id) continue; // one agonist per ligand and run
    const slot = g.byConc.get(c.concentrationM) ?? { condition: m.condition!, ms: [] };
    slot.ms.push(m);
    g.byConc.set(c.concentrationM, slot);
  }
  const thresholds = resolveThresholds(String(run.assay.id), { byAssay: { [String(run.assay.id)]: (run.assay.callThresholds ?? {}) as never } });
  for (const g of groups.values()) {
    const control = measurements.filter((m) => m.batch?.id === g.agonist.id && !m.condition);
    const curves: { id: string; condition: string | null; concM: number; points: CurvePoint[]; fit: FourPlFit }[] = [];
    const controlPoints = curveOf(control, run);
    curves.push({ id: 'control', condition: null, concM: 0, points: controlPoints, fit: fitFourPL(controlPoints) });
    for (const [concM, slot] of [...g.byConc.entries()].sort((a, b) => a[0] - b[0])) {
      const points = curveOf(slot.ms, run);
      curves.push({ id: slot.condition, condition: slot.condition, concM, points, fit: fitFourPL(points) });
    }
    let target = results.find((r) => r.batch.id === g.ligand.id && !r.condition);
    if (target && !EDITABLE.has(target.status)) continue;
    if (!target) {
      target = em.create(Result, { assay: run.assay, run, batch: g.ligand, compound: g.ligand.compound, condition: null, source: 'fit', isReference: false, status: 'draft', values: {}, fit: null, fixed: null, createdBy: actorId } as never) as IResult;
      em.persist(target);
      results.push(target);
    }
    const agonist = { batchId: g.agonist.id, batchNumber: g.agonist.batchNumber, compoundId: g.agonist.compound.id, registryNumber: g.agonist.compound.registryNumber };
    const curveViews = curves.map((c) => ({ id: c.id, condition: c.condition, concentrationM: c.concM, fit: curveSummary(c.fit) }));
    const usable = (c: (typeof curves)[number]) => c.fit.ok && c.fit.potency.qualifier === '=';
    const emaxOf = (f: FourPlFit) => (f.params.hillSlope.value >= 0 ? f.params.top.value : f.params.bottom.value);
    if (role === 'antagonist') {
      const input: SchildCurve[] = curves.map((c) => (usable(c)
        ? { id: c.id, antagonistConcM: c.concM, ec50M: 10 ** c.fit.params.logEC50.value, logEC50Se: c.fit.params.logEC50.se, logEC50Dof: c.fit.dof, emax: emaxOf(c.fit) }
        : { id: c.id, antagonistConcM: c.concM, points: c.points }));
      const s = schildAnalysis(input);
      const n = s.points.length;
      target.values = setValues(target.values, {
        // A saturating shift makes the regression's x-intercept meaningless (an allosteric
        // ceiling, not competition): pA2 stays in the analysis but is not reported as a value.
        pA2: s.pA2 && !s.flags.includes('saturating-shift') ? rv(s.pA2.value, '-log M', s.pA2, n) : null,
        schildSlope: s.slope ? rv(s.slope.value, '', s.slope, n) : null,
        pKB: s.pKB ? rv(s.pKB.value, '-log M', s.pKB, n) : (target.values.pKB && !(target.analysis as { kind?: string } | null)?.kind ? target.values.pKB : null),
      });
      target.analysis = { kind: 'schild', method: SCHILD_METHOD, agonist, curves: curveViews, schild: s };
    } else {
      const input: ModulatorCurve[] = curves.map((c) => (usable(c)
        ? { id: c.id, modulatorConcM: c.concM, ec50M: 10 ** c.fit.params.logEC50.value, logEC50Se: c.fit.params.logEC50.se, logEC50Dof: c.fit.dof, emax: emaxOf(c.fit) }
        : { id: c.id, modulatorConcM: c.concM, points: c.points }));
      const alonePoints = curveOf(measurements.filter((m) => m.batch?.id === g.ligand.id && !m.condition), run);
      const reference = results.find((r) => r.isReference);
      const a = analyseAllostericRun({ curves: input, modulatorAlone: alonePoints.length ? { points: alonePoints } : null, referenceEmax: reference?.values.emax?.value ?? null }, thresholds);
      const extreme = <T,>(xs: T[], key: (x: T) => number | null) => xs.filter((x) => key(x) !== null && Number.isFinite(key(x)!)).sort((p, q) => Math.abs(key(q)!) - Math.abs(key(p)!))[0] ?? null;
      const fs = extreme(a.shifts, (s) => Math.log10(s.foldShift));
      const ec = extreme(a.shifts, (s) => s.emaxChange);
      const atcmOk = a.atcm.ok;
      const n = a.shifts.length;
      target.values = setValues(target.values, {
        foldShift: fs ? rv(fs.foldShift, '', {}, n) : null,
        emaxChange: ec && ec.emaxChange !== null ? rv(ec.emaxChange, '', {}, n) : null,
        logKB: atcmOk && !a.atcm.flags.includes('kb-undetermined') ? rv(a.atcm.logKB.value, 'log M', a.atcm.logKB, n) : null,
        logCooperativity: atcmOk && !a.atcm.flags.includes('alpha-undetermined') ? rv(a.atcm.logAlpha.value, 'log', a.atcm.logAlpha, n) : null,
      });
      target.analysis = {
        kind: 'allosteric',
        method: ALLOSTERIC_METHOD,
        agonist,
        curves: curveViews,
        modulatorAlone: alonePoints.length ? { fit: curveSummary(fitFourPL(alonePoints)), emax: a.modulatorAlone?.emax ?? null, alpha: a.modulatorAlone?.alpha ?? null } : null,
        allosteric: a,
        thresholds: { pamFoldShift: thresholds.pamFoldShift, namFoldShift: thresholds.namFoldShift, emaxChange: thresholds.emaxChange, allostericAgonistAlpha: thresholds.allostericAgonistAlpha },
      };
    }
  }
}

/**
 * The agonist measurements behind a Schild or allosteric-modulation result (its control curve and
 * the curves with this ligand), for excluding and restoring points; [] for other results.
 */
export async function analysisMeasurements(em: EntityManager, result: IResult): Promise<IMeasurement[]> {
  const a = result.analysis as { kind?: string; agonist?: { batchId: number }; curves?: { condition: string | null }[] } | null;
  if (!result.run || !a || (a.kind !== 'schild' && a.kind !== 'allosteric') || !a.agonist || !a.curves) return [];
  const conditions = a.curves.map((c) => c.condition).filter((c): c is string => !!c);
  return em.find(Measurement, { run: result.run, batch: a.agonist.batchId, $or: [{ condition: null }, { condition: { $in: conditions } }] }, { orderBy: { id: 'asc' } });
}

/** Plot data of a run's Schild or allosteric analyses (GET /api/runs/:id/schild|allosteric). */
export async function runAnalysisView(em: EntityManager, runId: number, kind: 'schild' | 'allosteric') {
  const run = await em.findOne(Run, { id: runId }, { populate: ['assay'] });
  if (!run) return null;
  const results = (await em.find(Result, { run }, { populate: ['batch', 'compound'], orderBy: { id: 'asc' } })).filter((r) => (r.analysis as { kind?: string } | null)?.kind === kind);
  const measurements = results.length ? await em.find(Measurement, { run }, { orderBy: { id: 'asc' } }) : [];
  const items = results.map((r) => {
    const a = r.analysis as Record<string, any>;
    const agonistBatch = a.agonist.batchId as number;
    const curves = (a.curves as { id: string; condition: string | null; concentrationM: number; fit: ReturnType<typeof curveSummary> }[]).map((c) => ({
      ...c,
      points: measurements
        .filter((m) => m.batch?.id === agonistBatch && (m.condition ?? null) === c.condition && m.concentrationM !== null && m.concentrationM! > 0)
        .map((m) => ({ id: m.id, logConc: Math.log10(m.concentrationM!), response: agonistResponse(m, run), excluded: m.excluded })),
    }));
    const base = { resultId: r.id, status: r.status, compound: { id: r.compound.id, registryNumber: r.compound.registryNumber, name: r.compound.name ?? null }, batch: { id: r.batch.id, batchNumber: r.batch.batchNumber }, agonist: a.agonist, method: a.method, values: r.values, curves };
    if (kind === 'schild') {
      const s = a.schild as ReturnType<typeof schildAnalysis>;
      const xs = s.points.map((p) => p.logB);
      const line = s.slope && s.intercept && xs.length ? [Math.min(...xs) - 0.25, Math.max(...xs) + 0.25].map((x) => ({ logB: x, logDrMinus1: s.intercept!.value + s.slope!.value * x })) : [];
      return { ...base, schild: { ...s, line, xIntercept: s.pA2 ? -s.pA2.value : null } };
    }
    const al = a.allosteric as ReturnType<typeof analyseAllostericRun>;
    const alone = measurements.filter((m) => m.batch?.id === r.batch.id && !m.condition && m.concentrationM !== null && m.concentrationM! > 0).map((m) => ({ id: m.id, logConc: Math.log10(m.concentrationM!), response: agonistResponse(m, run), excluded: m.excluded }));
    return { ...base, allosteric: al, modulatorAlone: a.modulatorAlone ? { ...a.modulatorAlone, points: alone } : null, thresholds: a.thresholds };
  });
  return { runId: run.id, assayId: run.assay.id, assayKind: run.assay.kind, items };
}
