// Reads over the operational-model values of results (mechanism.service.ts stores them):
// - bias: ΔΔlog(τ/KA) of a compound between two readouts (functional-agonist assays) of one
//   receptor relative to the assays' reference agonist (Kenakin et al. 2012), from approved results;
// - what-if: the response to the reference agonist with fixed concentrations of the compound,
//   simulated with the two-agonist operational model (domain/what-if.ts) from both compounds'
//   fitted parameters in one assay.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Assay, Result, Target, type IAssay, type IResult, type ResultValue } from '../entities/assay.entity.js';
import { Compound, type ICompound } from '../entities/compound.entity.js';
import { biasFactor } from '../domain/operational-model.js';
import { summariseTransduction } from '../domain/mechanism-values.js';
import { simulateAgonistWithPartner } from '../domain/what-if.js';
import { HttpError } from '../http-error.js';

export const BIAS_METHOD = 'ΔΔlog(τ/KA) relative to the reference agonist (Kenakin, Watson, Muniz-Medina, Christopoulos & Novick 2012): Δ = test − reference per readout, ΔΔ = Δ(assay 1) − Δ(assay 2), bias factor 10^ΔΔ; standard errors propagated from the fits (independent errors)';
export const WHAT_IF_METHOD = 'Two agonists competing for one site under the operational model (Black & Leff 1983), shared Em, slope 1: E = Em·(τA·[A]/KA + τB·[B]/KB) / (1 + [A]/KA + [B]/KB + τA·[A]/KA + τB·[B]/KB)';
export const MECHANISM_CAUTION = 'Computed from fitted models as a suggestion for a qualified pharmacologist to confirm; not a safety assessment.';

async function findCompound(em: EntityManager, key: string): Promise<ICompound> {
  const c = /^\d+$/.test(key) ? await em.findOne(Compound, { id: Number(key) }) : await em.findOne(Compound, { registryNumber: key.toUpperCase() });
  if (!c) throw HttpError.notFound(`No compound ${key}.`);
  return c;
}

const compoundRef = (c: ICompound) => ({ id: c.id, registryNumber: c.registryNumber, name: c.name ?? null });
const assayRef = (a: IAssay) => ({ id: a.id, code: a.code, name: a.name, readout: a.readout });

export async function biasFor(em: EntityManager, q: { compound: string; target: number; assays?: number[] }) {
  const compound = await findCompound(em, q.compound);
  const target = await em.findOne(Target, { id: q.target });
  if (!target) throw HttpError.notFound(`No target with id ${q.target}.`);
  let assays = await em.find(Assay, { target, kind: 'functional-agonist' }, { populate: ['referenceCompound'], orderBy: { code: 'asc' } });
  if (q.assays) {
    const missing = q.assays.filter((id) => !assays.some((a) => a.id === id));
    if (missing.length) throw HttpError.badRequest(`assays: ${missing.join(', ')} ${missing.length === 1 ? 'is not a functional-agonist assay' : 'are not functional-agonist assays'} of ${target.name}`, [{ field: 'assays', message: `not a functional-agonist assay of target ${target.id}: ${missing.join(', ')}` }]);
    assays = q.assays.map((id) => assays.find((a) => a.id === id)!); // pathway 1 = the first named
  }
  const messages: string[] = [];
  const ids = [compound.id, ...assays.map((a) => a.referenceCompound?.id).filter((id): id is number => !!id)];
  const results = assays.length ? await em.find(Result, { assay: { $in: assays }, compound: { $in: ids }, status: 'approved' }) : [];
  const valuesOf = (assay: IAssay, compoundId: number) => results.filter((r) => r.assay.id === assay.id && r.compound.id === compoundId && r.values.logTauKA).map((r) => r.values.logTauKA!);
  const pathways = assays.map((a) => {
    const ref = a.referenceCompound ?? null;
    const test = summariseTransduction(valuesOf(a, compound.id));
    const reference = ref ? summariseTransduction(valuesOf(a, ref.id)) : null;
    return { assay: assayRef(a), referenceCompound: ref ? compoundRef(ref) : null, test, reference, delta: test && reference ? test.value - reference.value : null };
  });
  const pairs: unknown[] = [];
  for (let i = 0; i < pathways.length; i++) {
    for (let j = i + 1; j < pathways.length; j++) {
      const p1 = pathways[i];
      const p2 = pathways[j];
      if (!p1.test || !p2.test || !p1.reference || !p2.reference) continue;
      if (p1.referenceCompound?.id !== p2.referenceCompound?.id) {
        messages.push(`${p1.assay.code} and ${p2.assay.code} use different reference agonists, so no bias factor is computed between them.`);
        continue;
      }
      const b = biasFactor({ pathway1: p1.test, pathway2: p2.test }, { pathway1: p1.reference, pathway2: p2.reference });
      pairs.push({ assay1: p1.assay, assay2: p2.assay, ...b, towards: b.deltaDelta.value > 0 ? p1.assay.code : b.deltaDelta.value < 0 ? p2.assay.code : null });
    }
  }
  for (const p of pathways) {
    if (!p.test) messages.push(`${p.assay.code}: no approved log(τ/KA) of ${compound.registryNumber} (not fitted, censored, or not approved).`);
    if (!p.reference) messages.push(`${p.assay.code}: no approved log(τ/KA) of the reference agonist.`);
  }
  return { compound: compoundRef(compound), target: { id: target.id, name: target.name, geneSymbol: target.geneSymbol }, pathways, pairs, method: BIAS_METHOD, messages, caution: MECHANISM_CAUTION };
}

/** The latest result of a compound in an assay with operational-model values, approved ones first. */
async function operationalParams(em: EntityManager, assay: IAssay, compound: ICompound) {
  const rs = await em.find(Result, { assay, compound, status: { $ne: 'rejected' } }, { orderBy: { id: 'desc' } });
  const order = ['approved', 'submitted', 'draft'];
  const withParams = rs.filter((r) => r.values.logTau && r.values.logKA).sort((a, b) => order.indexOf(a.status) - order.indexOf(b.status));
  return withParams[0] ?? null;
}

export async function whatIf(em: EntityManager, q: { compound: string; assay: number; concentrations?: number[]; agonist?: string }) {
  const assay = await em.findOne(Assay, { id: q.assay }, { populate: ['referenceCompound', 'target'] });
  if (!assay) throw HttpError.notFound(`No assay with id ${q.assay}.`);
  if (assay.kind !== 'functional-agonist') throw HttpError.badRequest(`assay: ${assay.code} is a ${assay.kind} assay; the what-if simulation needs operational-model fits from a functional-agonist assay`, [{ field: 'assay', message: 'not a functional-agonist assay' }]);
  const partner = await findCompound(em, q.compound);
  const agonist = q.agonist ? await findCompound(em, q.agonist) : assay.referenceCompound;
  if (!agonist) throw HttpError.badRequest(`agonist: ${assay.code} has no reference agonist; name one`, [{ field: 'agonist', message: 'required: the assay has no reference agonist' }]);
  const messages: string[] = [];
  const a = await operationalParams(em, assay, agonist);
  if (!a) throw HttpError.badRequest(`agonist: ${agonist.registryNumber} has no operational-model fit in ${assay.code}`, [{ field: 'agonist', message: 'no operational-model fit in this assay' }]);
  const em0 = Number((a.analysis as { em?: number } | null)?.em ?? 100);
  const b = await operationalParams(em, assay, partner);
  let bParams: { logTau: number; logKA: number };
  let bBasis: Record<string, unknown>;
  if (b) {
    bParams = { logTau: b.values.logTau!.value, logKA: b.values.logKA!.value };
    bBasis = { resultId: b.id, status: b.status, logTau: b.values.logTau, logKA: b.values.logKA };
    if (b.status !== 'approved') messages.push(`${partner.registryNumber}: parameters from a ${b.status} result (not yet approved).`);
  } else {
    // No agonism to fit: a neutral ligand (τ = 0) with its affinity from approved pKB, pA2 or pKi at the target.
    const affinity = await em.find(Result, { compound: partner, assay: { target: assay.target }, status: 'approved' }, { populate: ['assay'] });
    const pick = (key: 'pKB' | 'pA2' | 'pKi') => affinity.map((r) => r.values[key]).filter((v): v is ResultValue => !!v && v.qualifier === '=');
    const source = (['pKB', 'pA2', 'pKi'] as const).find((k) => pick(k).length);
    if (!source) throw HttpError.badRequest(`compound: ${partner.registryNumber} has neither an operational-model fit in ${assay.code} nor an approved pKB, pA2 or pKi at ${assay.target.name}`, [{ field: 'compound', message: 'no operational-model parameters or affinity' }]);
    const vs = pick(source);
    const mean = vs.reduce((s, v) => s + v.value, 0) / vs.length;
    bParams = { logTau: -Infinity, logKA: -mean };
    bBasis = { affinity: source, value: mean, n: vs.length };
    messages.push(`${partner.registryNumber} shows no agonism in ${assay.code}: simulated as a neutral ligand (τ = 0) with KA from its mean ${source} ${mean.toFixed(2)}.`);
  }
  if (a.values.logTau!.qualifier === '>') messages.push(`${agonist.registryNumber} reaches the system maximum (τ not identifiable): simulated at its lower bound log τ ${a.values.logTau!.value.toFixed(2)}, which keeps its log(τ/KA).`);
  if (b && b.values.logTau!.qualifier === '>') messages.push(`${partner.registryNumber} reaches the system maximum: simulated at its lower bound log τ.`);
  const concs = q.concentrations ?? [0, ...[-1, 0, 1, 2].map((k) => 10 ** (bParams.logKA + k))];
  const sim = simulateAgonistWithPartner({ logTau: a.values.logTau!.value, logKA: a.values.logKA!.value }, bParams, { em: em0, bConcsM: concs });
  return {
    assay: assayRef(assay),
    agonist: { ...compoundRef(agonist), basis: { resultId: a.id, status: a.status, logTau: a.values.logTau, logKA: a.values.logKA } },
    partner: { ...compoundRef(partner), basis: bBasis },
    em: em0,
    unit: '% of the reference window over basal',
    curves: sim.curves,
    method: WHAT_IF_METHOD,
    messages,
    caution: MECHANISM_CAUTION,
  };
}
