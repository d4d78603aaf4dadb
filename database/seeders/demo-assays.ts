// Demo assays (DESIGN §10, invented): the Tern programme's receptor panel, its assay protocols
// and runs whose raw data are simulated with the operational model (Black & Leff 1983) and
// mass-action binding plus noise, from a fixed seed. The runs go through the same upload path
// as a pharmacologist's file (createRun), so the curves, fits and the Review queue are real.
// Idempotent: a panel, assay or run that exists is left alone.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Assay, ProjectTarget, Result, Run, Target, type AssayKind } from '../../api/src/entities/assay.entity.js';
import { Compound } from '../../api/src/entities/compound.entity.js';
import { Project } from '../../api/src/entities/project.entity.js';
import { User } from '../../api/src/entities/user.entity.js';
import { AuditEvent } from '../../api/src/entities/audit-event.entity.js';
import { analyseStructure } from '../../api/src/domain/chem.js';
import { occupancy, operationalModel } from '../../api/src/domain/pharmacology.js';
import { registerParsed } from '../../api/src/services/registry.service.js';
import { createRun } from '../../api/src/services/run.service.js';
import { recomputeCalls } from '../../api/src/services/call.service.js';
import { mulberry32 as prng } from '../seeded-random.js';


function gaussian(rand: () => number): number {
  const u = Math.max(rand(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}

const TARGETS = [
  { geneSymbol: 'HTR1A', name: '5-HT1A receptor', family: 'GPCR' as const },
  { geneSymbol: 'DRD2', name: 'D2 dopamine receptor', family: 'GPCR' as const },
  { geneSymbol: 'ADRA1A', name: 'α1A-adrenoceptor', family: 'GPCR' as const },
  { geneSymbol: 'HTR2B', name: '5-HT2B receptor', family: 'GPCR' as const },
  { geneSymbol: 'KCNH2', name: 'hERG potassium channel (Kv11.1)', family: 'ion channel' as const },
];

/** The reference full agonist of the functional assays (the endogenous agonist). */
const REFERENCE = { smiles: 'NCCc1c[nH]c2ccc(O)cc12', name: 'serotonin (reference agonist)', alias: 'REF-5HT' };

interface AssaySpec {
  code: string;
  name: string;
  gene: string;
  kind: AssayKind;
  readout: string;
  cellSystem: string;
  constitutiveActivity?: boolean;
  radioligand?: string;
  radioligandConcM?: number;
  radioligandKdM?: number;
  reference?: boolean;
  /** Antagonist and modulator modes: the agonist's fixed concentration, its EC50 and Hill slope. */
  agonistConcM?: number;
  agonistEc50M?: number;
  agonistHill?: number;
}

const ASSAYS: AssaySpec[] = [
  { code: 'T1A-BIND', name: '5-HT1A radioligand displacement', gene: 'HTR1A', kind: 'binding', readout: 'bound radioactivity (cpm)', cellSystem: 'HEK293 membranes, human 5-HT1A', radioligand: '[³H]-tracer T1 (agonist radioligand)', radioligandConcM: 1e-9, radioligandKdM: 0.8e-9 },
  { code: 'T1A-CAMP', name: '5-HT1A cAMP inhibition (high expression)', gene: 'HTR1A', kind: 'functional-agonist', readout: 'cAMP', cellSystem: 'CHO-K1, high receptor expression (constitutively active)', constitutiveActivity: true, reference: true },
  { code: 'T1A-ARR', name: '5-HT1A β-arrestin recruitment', gene: 'HTR1A', kind: 'functional-agonist', readout: 'β-arrestin', cellSystem: 'U2OS enzyme-fragment complementation', reference: true },
  { code: 'D2-BIND', name: 'D2 radioligand displacement', gene: 'DRD2', kind: 'binding', readout: 'bound radioactivity (cpm)', cellSystem: 'CHO membranes, human D2L', radioligand: '[³H]-tracer D2 (antagonist radioligand)', radioligandConcM: 0.5e-9, radioligandKdM: 0.25e-9 },
  { code: 'A1A-BIND', name: 'α1A radioligand displacement', gene: 'ADRA1A', kind: 'binding', readout: 'bound radioactivity (cpm)', cellSystem: 'HEK293 membranes, human α1A', radioligand: '[³H]-tracer A1 (antagonist radioligand)', radioligandConcM: 0.3e-9, radioligandKdM: 0.2e-9 },
  { code: '2B-BIND', name: '5-HT2B radioligand displacement', gene: 'HTR2B', kind: 'binding', readout: 'bound radioactivity (cpm)', cellSystem: 'CHO membranes, human 5-HT2B', radioligand: '[³H]-tracer 2B (agonist radioligand)', radioligandConcM: 1e-9, radioligandKdM: 1.5e-9 },
  { code: '2B-CA', name: '5-HT2B calcium mobilisation', gene: 'HTR2B', kind: 'functional-agonist', readout: 'Ca²⁺', cellSystem: 'HEK293, human 5-HT2B', reference: true },
  { code: 'T1A-SCHILD', name: '5-HT1A antagonist mode (Schild), cAMP', gene: 'HTR1A', kind: 'functional-antagonist', readout: 'cAMP', cellSystem: 'CHO-K1, moderate receptor expression', reference: true, agonistConcM: 3e-8, agonistEc50M: 5e-9, agonistHill: 1 },
  { code: 'T1A-PAM', name: '5-HT1A allosteric modulation, cAMP', gene: 'HTR1A', kind: 'allosteric-modulation', readout: 'cAMP', cellSystem: 'CHO-K1, moderate receptor expression', reference: true, agonistConcM: 1e-9 },
  { code: 'HERG-BIND', name: 'hERG channel binding', gene: 'KCNH2', kind: 'binding', readout: 'bound radioactivity (cpm)', cellSystem: 'HEK293 membranes, human hERG', radioligand: '[³H]-tracer H (channel blocker)', radioligandConcM: 2e-9, radioligandKdM: 4e-9 },
];

/** Invented pharmacology of one analogue at every receptor of the panel. */
export interface DemoProfile {
  /** log KA (= −pKA) per gene. */
  logKA: Record<string, number>;
  /** log τ per functional assay code; −Infinity for no agonism. */
  logTau: Record<string, number>;
  /** Inverse agonism: fraction of the constitutive signal removed at full occupancy (T1A-CAMP). */
  inverse: number;
  /** A failed plate for this compound in one assay (noisy, unusable curve). */
  failedIn: string | null;
  /**
   * Positive allosteric modulator at 5-HT1A (allosteric ternary complex model, Ehlert 1988):
   * log KB at its own site and log α (> 0: it raises the agonist's affinity).
   */
  pam?: { logKB: number; logAlpha: number };
}

/** Deterministic profiles: mostly 5-HT1A agonists of varied efficacy, some antagonists, one inverse agonist. */
export function demoProfile(index: number): DemoProfile {
  const rand = prng(0x7e57 + index * 7919);
  const pKA = 6.0 + 3.0 * rand();
  const kindRoll = rand();
  let logTauCamp: number;
  let inverse = 0;
  if (index === 7) {
    logTauCamp = -Infinity;
    inverse = 0.8;
  } else if (kindRoll < 0.45) logTauCamp = 0.9 + 0.8 * rand(); // full agonists
  else if (kindRoll < 0.8) logTauCamp = -0.6 + 0.9 * rand(); // partial agonists
  else logTauCamp = -Infinity; // neutral antagonists
  const arrestinShift = -0.3 - 0.9 * rand(); // arrestin readout is less efficiently coupled
  const d2 = pKA - 0.5 - 2.5 * rand();
  const a1a = pKA - 0.3 - 2.8 * rand();
  const h2b = pKA - 0.8 - 2.5 * rand();
  const herg = 4.8 + 1.8 * rand();
  const agonist2B = rand() < 0.15 ? -0.2 + 0.6 * rand() : -Infinity;
  const profile: DemoProfile = {
    logKA: { HTR1A: -pKA, DRD2: -d2, ADRA1A: -a1a, HTR2B: -h2b, KCNH2: -herg },
    logTau: { 'T1A-CAMP': logTauCamp, 'T1A-ARR': logTauCamp === -Infinity ? -Infinity : logTauCamp + arrestinShift, '2B-CA': agonist2B },
    inverse,
    failedIn: index === 12 ? 'T1A-CAMP' : index === 33 ? 'D2-BIND' : null,
  };
  if (index === PAM_INDEX) {
    // The story's positive allosteric modulator: no orthosteric affinity worth measuring (it does
    // not displace the radioligand), no agonism of its own, a 10-fold rise of the agonist's affinity.
    profile.logKA.HTR1A = -4.5;
    profile.logTau = { ...profile.logTau, 'T1A-CAMP': -Infinity, 'T1A-ARR': -Infinity };
    profile.pam = { logKB: -6.5, logAlpha: 1 };
  }
  return profile;
}

/** Analogue index of the positive allosteric modulator (a neutral antagonist profile made allosteric). */
const PAM_INDEX = 30;

/**
 * The antagonist-mode (Schild) run: neutral antagonists at three concentrations 0.5, 1.5 and 2.5
 * log units above their KB (competitive, slope 1), and one with limited negative cooperativity
 * (α = 0.05: the shift saturates at a dose ratio near 1/α = 20) at four.
 */
const SCHILD_PLAN: { index: number; alpha: number | null }[] = [
  { index: 3, alpha: null },
  { index: 5, alpha: null },
  { index: 16, alpha: null },
  { index: 29, alpha: 0.05 },
];

const REFERENCE_PROFILE = { logKA: -6.7, logTau: { 'T1A-CAMP': 1.6, 'T1A-ARR': 1.1, '2B-CA': 1.4, 'T1A-SCHILD': 1.6, 'T1A-PAM': 1.6 } as Record<string, number> };

const LOG_CONCS = [-11, -10.5, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5.5, -5];
const BINDING_LOG_CONCS = [-11, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5];

interface Sample {
  sample: string;
  profile: DemoProfile | null;
}

/** Long-format CSV of one simulated run (our documented format). */
export function simulateRun(spec: AssaySpec, samples: Sample[], seed: number): string {
  const rand = prng(seed);
  const rows: string[] = ['sample,concentration,unit,response,replicate'];
  const fmt = (x: number) => x.toFixed(1);
  if (spec.kind === 'binding') {
    const total = 4200;
    const nsb = 350;
    const noise = 0.03 * total;
    for (let r = 1; r <= 3; r++) rows.push(`BASAL,,,${fmt(total + noise * gaussian(rand))},${r}`, `BLANK,,,${fmt(nsb + noise * gaussian(rand))},${r}`);
    const factor = 1 + spec.radioligandConcM! / spec.radioligandKdM!;
    for (const s of samples) {
      const ki = Math.pow(10, s.profile!.logKA[spec.gene]);
      const failed = s.profile!.failedIn === spec.code;
      for (const logC of BINDING_LOG_CONCS) {
        const c = Math.pow(10, logC);
        for (let r = 1; r <= 2; r++) {
          const specific = 1 - occupancy(c, ki * factor);
          const signal = failed ? nsb + (total - nsb) * rand() : nsb + (total - nsb) * specific + noise * gaussian(rand);
          rows.push(`${s.sample},${(c * 1e9).toPrecision(4)},nM,${fmt(signal)},${r}`);
        }
      }
    }
    return rows.join('\n') + '\n';
  }
  // Functional agonist mode: basal signal, constitutive part of it, and the system maximum Em.
  const constitutive = spec.constitutiveActivity ? 3000 : 0;
  const basal = 1000 + constitutive;
  const em = 9000;
  const noise = 150;
  const refKA = Math.pow(10, REFERENCE_PROFILE.logKA);
  const refTau = Math.pow(10, REFERENCE_PROFILE.logTau[spec.code]);
  for (let r = 1; r <= 3; r++) {
    rows.push(`BASAL,,,${fmt(basal + noise * gaussian(rand))},${r}`);
    rows.push(`MAX,10,uM,${fmt(basal + operationalModel(1e-5, { em, tau: refTau, ka: refKA }) + noise * gaussian(rand))},${r}`);
  }
  for (const s of samples) {
    const ka = s.profile ? Math.pow(10, s.profile.logKA[spec.gene]) : refKA;
    const tau = s.profile ? Math.pow(10, s.profile.logTau[spec.code]) : refTau;
    const inverse = s.profile && spec.constitutiveActivity ? s.profile.inverse : 0;
    const failed = s.profile?.failedIn === spec.code;
    for (const logC of LOG_CONCS) {
      const c = Math.pow(10, logC);
      for (let r = 1; r <= 2; r++) {
        let signal = basal + operationalModel(c, { em, tau, ka }) - inverse * constitutive * occupancy(c, ka) + noise * gaussian(rand);
        if (failed) signal = basal + 4000 * rand();
        rows.push(`${s.sample},${(c * 1e9).toPrecision(4)},nM,${fmt(signal)},${r}`);
      }
    }
  }
  return rows.join('\n') + '\n';
}

/** A second ligand held at fixed concentrations in a mechanism run (the condition column). */
interface SecondLigand {
  sample: string;
  concsM: number[];
  /** Apparent agonist KA factor at [B]: 1 + [B]/KB (competitive), (1 + [B]/KB)/(1 + α[B]/KB) (ATCM). */
  kaFactor: (b: number) => number;
}

const MECHANISM_LOG_CONCS = [-10.5, -10, -9.5, -9, -8.5, -8, -7.5, -7, -6.5, -6, -5.5, -5, -4.5, -4];

/**
 * Long-format CSV of a Schild or allosteric-modulation run (domain/run-conditions.ts): the reference
 * agonist alone (control) and with each second ligand at each fixed concentration, in duplicate,
 * with BASAL and MAX wells; `alone` lists ligands also measured on their own (no agonist).
 */
export function simulateMechanismRun(spec: AssaySpec, agonistSample: string, ligands: SecondLigand[], role: 'antagonist' | 'modulator', alone: string[], seed: number): string {
  const rand = prng(seed);
  const rows: string[] = ['sample,concentration,unit,response,replicate,condition'];
  const fmt = (x: number) => x.toFixed(1);
  const basal = 1000;
  const em = 9000;
  const noise = 120;
  const ka = Math.pow(10, REFERENCE_PROFILE.logKA);
  const tau = Math.pow(10, REFERENCE_PROFILE.logTau[spec.code]);
  for (let r = 1; r <= 3; r++) {
    rows.push(`BASAL,,,${fmt(basal + noise * gaussian(rand))},${r},`);
    rows.push(`MAX,10,uM,${fmt(basal + operationalModel(1e-5, { em, tau, ka }) + noise * gaussian(rand))},${r},`);
  }
  const curve = (sample: string, condition: string, factor: number) => {
    for (const logC of MECHANISM_LOG_CONCS) {
      const c = Math.pow(10, logC);
      for (let r = 1; r <= 2; r++) rows.push(`${sample},${(c * 1e9).toPrecision(4)},nM,${fmt(basal + operationalModel(c, { em, tau, ka: ka * factor }) + noise * gaussian(rand))},${r},${condition}`);
    }
  };
  curve(agonistSample, '', 1);
  for (const l of ligands) for (const b of l.concsM) curve(agonistSample, `${role} ${l.sample} ${(b * 1e9).toPrecision(3)} nM`, l.kaFactor(b));
  for (const sample of alone) {
    for (const logC of MECHANISM_LOG_CONCS) {
      const c = Math.pow(10, logC);
      for (let r = 1; r <= 2; r++) rows.push(`${sample},${(c * 1e9).toPrecision(4)},nM,${fmt(basal + noise * gaussian(rand))},${r},`);
    }
  }
  return rows.join('\n') + '\n';
}

/** The demo's Schild run (SCHILD_PLAN) or allosteric-modulation run (PAM_INDEX) as CSV. */
function mechanismCsv(spec: AssaySpec, analogues: { registryNumber: string }[], referenceSample: string, seed: number): string {
  if (spec.kind === 'functional-antagonist') {
    const ligands = SCHILD_PLAN.map(({ index, alpha }) => {
      const logKB = demoProfile(index).logKA.HTR1A;
      const steps = alpha === null ? [0.5, 1.5, 2.5] : [0.5, 1.5, 2.5, 3.5];
      const kb = Math.pow(10, logKB);
      return {
        sample: `${analogues[index].registryNumber}-01`,
        concsM: steps.map((k) => Math.pow(10, Math.round((logKB + k) * 2) / 2)),
        kaFactor: (b: number) => (alpha === null ? 1 + b / kb : (1 + b / kb) / (1 + (alpha * b) / kb)),
      };
    });
    return simulateMechanismRun(spec, referenceSample, ligands, 'antagonist', [], seed);
  }
  const pam = demoProfile(PAM_INDEX).pam!;
  const kb = Math.pow(10, pam.logKB);
  const alpha = Math.pow(10, pam.logAlpha);
  const sample = `${analogues[PAM_INDEX].registryNumber}-01`;
  return simulateMechanismRun(spec, referenceSample, [{ sample, concsM: [1e-7, 1e-6, 1e-5], kaFactor: (b) => (1 + b / kb) / (1 + (alpha * b) / kb) }], 'modulator', [sample], seed);
}

async function ensurePanel(em: EntityManager, projectCode: string): Promise<Map<string, number>> {
  const ids = new Map<string, number>();
  for (const t of TARGETS) {
    let target = await em.findOne(Target, { geneSymbol: t.geneSymbol, species: 'human' });
    if (!target) {
      target = em.create(Target, { ...t, species: 'human', description: 'Demo panel (Tern programme).' });
      await em.persist(target).flush();
    }
    ids.set(t.geneSymbol, target.id);
  }
  const project = await em.findOne(Project, { code: projectCode });
  if (project && !(await em.count(ProjectTarget, { project }))) {
    for (const t of TARGETS) {
      em.persist(em.create(ProjectTarget, { project, target: ids.get(t.geneSymbol)!, role: t.geneSymbol === 'HTR1A' ? 'primary' : 'anti-target', agonismUnwanted: t.geneSymbol === 'HTR2B' }));
    }
    await em.flush();
  }
  return ids;
}

async function ensureReference(em: EntityManager, prefix: string, chemistId: number): Promise<number> {
  const parsed = analyseStructure(REFERENCE.smiles);
  const existing = await em.findOne(Compound, { idCode: parsed.idCode });
  if (existing) return existing.id;
  const { compoundId } = await registerParsed(em.fork(), chemistId, prefix, parsed, { name: REFERENCE.name, aliases: [REFERENCE.alias], batch: { purity: 99.5, amountMg: 500, source: 'commercial reference standard', notebookRef: 'TERN-REF-1' } }, REFERENCE.smiles, 'demo seed');
  return compoundId;
}

/** Sets a run's results to their demo review status, as the pharmacologist and the lead would. */
async function review(em: EntityManager, runId: number, status: 'draft' | 'submitted' | 'approved', pharmacologistId: number, leadId: number, submittedAt: Date) {
  if (status === 'draft') return;
  const results = await em.find(Result, { run: runId });
  for (const r of results) {
    r.status = status;
    r.submittedBy = em.getReference(User, pharmacologistId);
    r.submittedAt = submittedAt;
    em.persist(em.create(AuditEvent, { actorId: pharmacologistId, action: 'result.submit', entityType: 'Result', entityId: String(r.id), data: { source: 'demo seed' } }));
    if (status === 'approved') {
      r.reviewedBy = em.getReference(User, leadId);
      r.reviewedAt = new Date(submittedAt.getTime() + 86_400_000);
      em.persist(em.create(AuditEvent, { actorId: leadId, action: 'result.approve', entityType: 'Result', entityId: String(r.id), data: { source: 'demo seed' } }));
    }
  }
  await em.flush();
}

interface RunPlan {
  assay: string;
  date: string;
  /** Analogue indices (into the registry's demo compounds, in registry order). */
  from: number;
  to: number;
  status: 'draft' | 'submitted' | 'approved';
}

const RUNS: RunPlan[] = [
  { assay: 'T1A-BIND', date: '2026-10-06', from: 0, to: 40, status: 'approved' },
  { assay: 'T1A-BIND', date: '2026-10-20', from: 40, to: 80, status: 'approved' },
  { assay: 'T1A-CAMP', date: '2026-10-08', from: 0, to: 40, status: 'approved' },
  { assay: 'T1A-CAMP', date: '2026-11-18', from: 40, to: 80, status: 'submitted' },
  { assay: 'T1A-ARR', date: '2026-10-27', from: 0, to: 40, status: 'approved' },
  { assay: 'T1A-ARR', date: '2026-11-25', from: 40, to: 80, status: 'draft' },
  { assay: 'D2-BIND', date: '2026-10-13', from: 0, to: 80, status: 'approved' },
  { assay: 'A1A-BIND', date: '2026-10-15', from: 0, to: 80, status: 'approved' },
  { assay: '2B-BIND', date: '2026-10-22', from: 0, to: 80, status: 'approved' },
  { assay: '2B-CA', date: '2026-11-03', from: 0, to: 80, status: 'approved' },
  { assay: 'HERG-BIND', date: '2026-11-10', from: 0, to: 80, status: 'submitted' },
  // Mechanism runs: their samples come from SCHILD_PLAN and PAM_INDEX (from/to unused).
  { assay: 'T1A-SCHILD', date: '2026-11-05', from: 0, to: 0, status: 'approved' },
  { assay: 'T1A-PAM', date: '2026-11-12', from: 0, to: 0, status: 'approved' },
];

export async function seedDemoAssays(em: EntityManager, prefix: string): Promise<number> {
  const chemist = await em.findOne(User, { email: 'chemist@demo.test' });
  const pharmacologist = await em.findOne(User, { email: 'pharmacologist@demo.test' });
  const lead = await em.findOne(User, { email: 'lead@demo.test' });
  if (!chemist || !pharmacologist || !lead) throw new Error('the demo accounts must be seeded first');
  const targetIds = await ensurePanel(em, 'TERN');
  const referenceId = await ensureReference(em, prefix, chemist.id);
  for (const spec of ASSAYS) {
    if (await em.findOne(Assay, { code: spec.code })) continue;
    const { gene, reference, ...fields } = spec;
    em.persist(em.create(Assay, { ...fields, target: targetIds.get(gene)!, species: 'human', referenceCompound: reference ? referenceId : null, createdBy: pharmacologist.id, description: 'Demo protocol (invented).' } as never));
  }
  await em.flush();
  const analogues = await em.find(Compound, { series: { project: { code: 'TERN' } } }, { orderBy: { number: 'asc' } });
  const reference = await em.findOneOrFail(Compound, { id: referenceId });
  let created = 0;
  for (const [i, plan] of RUNS.entries()) {
    const assay = await em.findOneOrFail(Assay, { code: plan.assay });
    if (await em.findOne(Run, { assay, runDate: plan.date })) continue;
    const spec = ASSAYS.find((a) => a.code === plan.assay)!;
    const samples: Sample[] = analogues.slice(plan.from, plan.to).map((c, k) => ({ sample: `${c.registryNumber}-01`, profile: demoProfile(plan.from + k) }));
    if (spec.reference) samples.unshift({ sample: `${reference.registryNumber}-01`, profile: null });
    const mechanism = spec.kind === 'functional-antagonist' || spec.kind === 'allosteric-modulation';
    const csv = mechanism ? mechanismCsv(spec, analogues, `${reference.registryNumber}-01`, 1000 + i) : simulateRun(spec, samples, 1000 + i);
    const { runId } = await createRun(em.fork(), pharmacologist.id, assay.id, {
      runDate: plan.date,
      notes: 'Simulated demo run (operational model + noise, fixed seed).',
      dropBadRows: false,
      files: { long: { originalname: `${plan.assay.toLowerCase()}-${plan.date}.csv`, mimetype: 'text/csv', buffer: Buffer.from(csv) } },
    });
    await review(em.fork(), runId, plan.status, pharmacologist.id, lead.id, new Date(`${plan.date}T16:00:00Z`));
    created++;
  }
  // Ligand-type calls for every demo compound from its approved results (the demo's reviews set
  // statuses directly, so the calls are computed here; unchanged calls are left as they are).
  await em.fork().transactional((tx) => recomputeCalls(tx, [referenceId, ...analogues.map((c) => c.id)], pharmacologist.id));
  return created;
}
