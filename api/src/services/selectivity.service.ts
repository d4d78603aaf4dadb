// Selectivity review for project leads (DESIGN §3, §4): the receptor matrix, side-by-side
// comparison, the ranking, decisions with the data they rested on, and the project overview.
// Every number comes from the SAR table's pivot (sar.service.ts), so the two always agree.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Molecule, SSSearcher } from 'openchemlib';
import { Compound, Decision, Project, User } from '../entities/index.js';
import { DECISIONS, type DecisionKind, type IDecision } from '../entities/decision.entity.js';
import { SavedView } from '../entities/saved-view.entity.js';
import { AGONIST_CALLS, DEFAULT_RANKING, decisionChanges, rankScore, type DecisionSnapshot, type RankingConfig } from '../domain/selectivity.js';
import { LIGAND_CALLS } from '../domain/ligand-call.js';
import { parseCore } from '../domain/rgroups.js';
import { HttpError } from '../http-error.js';
import { audit } from './audit.service.js';
import type { Mailer } from './mail.service.js';
import { sarTable, type SarRow } from './sar.service.js';

export const DECISION_CAUTION =
  'Scores, margins and calls are computed suggestions for a qualified pharmacologist to confirm; a decision records a person\'s judgement, not a safety assessment.';

type Table = Awaited<ReturnType<typeof sarTable>>;

export interface MatrixQuery {
  project: string;
  compoundIds?: number[];
  seriesIds?: number[];
  viewId?: number;
  userId: number;
}

/** The SAR pivot behind the matrix: pKi at every panel receptor, calls, margins, the score. */
async function pivot(em: EntityManager, q: MatrixQuery, extra: { parameters?: ('pKi' | 'pEC50' | 'emax' | 'alpha')[] } = {}): Promise<Table> {
  let seriesIds = q.seriesIds;
  let substructure: string | null = null;
  if (q.viewId) {
    const view = await em.findOne(SavedView, { id: q.viewId, $or: [{ owner: q.userId }, { shared: true }] });
    if (!view) throw HttpError.badRequest(`view: no saved view with id ${q.viewId} that you can see`, [{ field: 'view', message: 'no such view' }]);
    seriesIds = view.state.seriesIds;
    substructure = view.state.substructure;
  }
  return sarTable(em, {
    project: q.project,
    seriesIds,
    compoundIds: q.compoundIds,
    parameters: extra.parameters ?? ['pKi'],
    calls: true,
    substructure: substructure ? { structure: substructure } : undefined,
    includeSubmitted: false,
    selectivityBy: 'pKi',
    timeLimitMs: 10_000,
  });
}

/** What a decision rests on, read off a pivot row. */
export function snapshotOf(table: Table, row: SarRow): DecisionSnapshot {
  const primaryId = table.primaryTarget?.id;
  const pKi = primaryId !== undefined ? row.cells[`t:${primaryId}:pKi`] ?? null : null;
  return {
    primaryPKi: pKi && pKi.value !== null ? { value: pKi.value, qualifier: pKi.qualifier } : null,
    worstMargin: row.worstMargin ? { value: row.worstMargin.value, qualifier: row.worstMargin.qualifier, targetId: row.worstMargin.targetId, window: row.worstMargin.window } : null,
    primaryCall: primaryId !== undefined ? row.calls[primaryId]?.call ?? null : null,
    unwantedAgonism: unwantedAgonism(table, row),
    windowLog: table.window,
    score: row.score,
  };
}

/** Receptors where agonism is unwanted and the compound is called an agonist. */
function unwantedAgonism(table: Table, row: SarRow): number[] {
  return table.targets.filter((t) => t.agonismUnwanted && AGONIST_CALLS.includes(row.calls[t.id]?.call ?? '')).map((t) => t.id);
}

async function currentDecisions(em: EntityManager, projectId: number, compoundIds: number[]) {
  const list = compoundIds.length ? await em.find(Decision, { project: projectId, compound: { $in: compoundIds }, current: true }, { populate: ['author'] }) : [];
  return new Map(list.map((d) => [d.compound.id, d]));
}

export function decisionView(d: IDecision) {
  return {
    id: d.id,
    compoundId: d.compound.id,
    registryNumber: (d.compound as { registryNumber?: string }).registryNumber ?? null,
    decision: d.decision,
    rationale: d.rationale,
    author: { id: d.author.id, name: d.author.name },
    at: d.createdAt.toISOString(),
    snapshot: d.snapshot,
    flagged: d.flaggedReason !== null && d.flaggedReason !== undefined,
    flaggedReason: d.flaggedReason ?? null,
    flaggedAt: d.flaggedAt?.toISOString() ?? null,
    current: d.current,
  };
}

/** Compounds × the panel's receptors: ΔpKi against the primary target with the call at each. */
export async function selectivityMatrix(em: EntityManager, q: MatrixQuery) {
  const table = await pivot(em, q);
  const primaryId = table.primaryTarget?.id ?? null;
  const decisions = await currentDecisions(em, table.project.id, table.rows.map((r) => r.id));
  const rows = table.rows
    .map((r) => {
      const snapshot = snapshotOf(table, r);
      const score = rankScore({ potency: snapshot.primaryPKi, worstMargin: snapshot.worstMargin, lipe: r.lipe, primaryCall: snapshot.primaryCall }, table.project.ranking);
      const cells: Record<string, { pKi: SarRow['cells'][string] | null; margin: SarRow['margins'][string] | null; call: string | null; callSource: 'rule' | 'manual' | null; unwantedAgonism: boolean }> = {};
      for (const t of table.targets) {
        cells[t.id] = {
          pKi: r.cells[`t:${t.id}:pKi`] ?? null,
          margin: r.margins[t.id] ?? null,
          call: r.calls[t.id]?.call ?? null,
          callSource: r.calls[t.id]?.source ?? null,
          unwantedAgonism: snapshot.unwantedAgonism.includes(t.id),
        };
      }
      const decision = decisions.get(r.id);
      return {
        compound: { id: r.id, registryNumber: r.registryNumber, name: r.name, idCode: r.idCode, seriesCode: r.seriesCode, heavyAtoms: r.heavyAtoms, clogp: r.clogp },
        primary: primaryId !== null ? r.cells[`t:${primaryId}:pKi`] ?? null : null,
        cells,
        worstMargin: r.worstMargin,
        insideWindow: Object.values(r.margins).some((m) => m.window === 'inside'),
        unwantedAgonism: snapshot.unwantedAgonism,
        le: r.le,
        lipe: r.lipe,
        score,
        decision: decision ? decisionView(decision) : null,
      };
    })
    // Worst margin first: the compounds closest to failing selectivity lead; no margin last.
    .sort((a, b) => (a.worstMargin?.value ?? Number.POSITIVE_INFINITY) - (b.worstMargin?.value ?? Number.POSITIVE_INFINITY));
  return {
    project: table.project,
    primaryTarget: table.primaryTarget,
    window: table.window,
    ranking: table.project.ranking,
    targets: table.targets,
    rows,
    caution: DECISION_CAUTION,
  };
}

/** The matrix as CSV rows (header first): what the screen shows, units and qualifiers apart. */
export function matrixCsv(m: Awaited<ReturnType<typeof selectivityMatrix>>): (string | number | null)[][] {
  const r2 = (v: number | null | undefined) => (v === null || v === undefined ? null : Math.round(v * 100) / 100);
  const header: string[] = ['Registry number', 'Series', 'Primary pKi', 'Primary pKi qualifier'];
  for (const t of m.targets) header.push(`${t.geneSymbol} pKi`, `${t.geneSymbol} pKi qualifier`, `${t.geneSymbol} ΔpKi vs primary`, `${t.geneSymbol} ΔpKi qualifier`, `${t.geneSymbol} window`, `${t.geneSymbol} call`, `${t.geneSymbol} unwanted agonism`);
  header.push('Worst margin (log units)', 'Worst margin qualifier', 'Score', 'Score note', 'Decision', 'Decision flagged');
  const rows = m.rows.map((r) => {
    const out: (string | number | null)[] = [r.compound.registryNumber, r.compound.seriesCode, r2(r.primary?.value), r.primary?.qualifier ?? null];
    for (const t of m.targets) {
      const c = r.cells[t.id];
      out.push(r2(c.pKi?.value), c.pKi?.qualifier ?? null, r2(c.margin?.value), c.margin?.qualifier ?? null, c.margin?.window ?? null, c.call, c.unwantedAgonism ? 'yes' : null);
    }
    out.push(r2(r.worstMargin?.value), r.worstMargin?.qualifier ?? null, r2(r.score.score), r.score.excluded, r.decision?.decision ?? null, r.decision?.flagged ? r.decision.flaggedReason : null);
    return out;
  });
  return [header, ...rows];
}

/** Atoms of each structure outside the shared series core (the differences to highlight), or null. */
function differences(idCodes: string[], core: string | null): (number[] | null)[] {
  if (!core) return idCodes.map(() => null);
  try {
    const parsed = parseCore(core);
    const searcher = new SSSearcher();
    searcher.setFragment(parsed.fragment);
    return idCodes.map((idCode) => {
      const mol = Molecule.fromIDCode(idCode);
      searcher.setMolecule(mol);
      if (searcher.findFragmentInMolecule({ countMode: 'firstMatch' }) === 0) return null;
      const inCore = new Set([...searcher.getMatchList()[0]].filter((a) => a >= 0));
      const out: number[] = [];
      for (let a = 0; a < mol.getAtoms(); a++) if (!inCore.has(a)) out.push(a);
      return out;
    });
  } catch {
    return idCodes.map(() => null);
  }
}

/** The pivot of 2 to 6 compounds of a project, in the order asked (400 naming what is wrong otherwise). */
export async function comparisonTable(em: EntityManager, q: MatrixQuery & { compoundIds: number[] }) {
  const ids = [...new Set(q.compoundIds)];
  if (ids.length < 2 || ids.length > 6) throw HttpError.badRequest(`compounds: choose 2 to 6 compounds to compare, not ${ids.length}`, [{ field: 'compounds', message: 'choose 2 to 6' }]);
  const table = await pivot(em, { ...q, compoundIds: ids }, { parameters: ['pKi', 'pEC50', 'emax', 'alpha'] });
  const missing = ids.filter((id) => !table.rows.some((r) => r.id === id));
  if (missing.length) throw HttpError.badRequest(`compounds: ${missing.join(', ')} not in project ${table.project.code}`, [{ field: 'compounds', message: `not in project ${table.project.code}: ${missing.join(', ')}` }]);
  return { table, ids, rows: ids.map((id) => table.rows.find((r) => r.id === id)!) };
}

/** 2 to 6 compounds side by side: potency, efficacy and call at every receptor, properties, LE, LipE. */
export async function compareCompounds(em: EntityManager, q: MatrixQuery & { compoundIds: number[] }) {
  const { table, ids, rows } = await comparisonTable(em, q);
  const seriesIds = new Set(rows.map((r) => r.seriesId));
  const series = seriesIds.size === 1 ? table.series.find((s) => s.id === rows[0].seriesId) ?? null : null;
  const highlight = differences(rows.map((r) => r.idCode), series?.core ?? null);
  const full = await em.find(Compound, { id: { $in: ids } });
  const props = new Map(full.map((c) => [c.id, c]));
  const decisions = await currentDecisions(em, table.project.id, ids);
  return {
    project: table.project,
    primaryTarget: table.primaryTarget,
    window: table.window,
    targets: table.targets,
    columns: table.columns,
    commonCore: series ? { seriesCode: series.code, core: series.core } : null,
    compounds: rows.map((r, i) => {
      const c = props.get(r.id)!;
      const snapshot = snapshotOf(table, r);
      return {
        id: r.id,
        registryNumber: r.registryNumber,
        name: r.name,
        idCode: r.idCode,
        seriesCode: r.seriesCode,
        differences: highlight[i],
        properties: { formula: c.formula, mw: c.mw, clogp: c.clogp, tpsa: c.tpsa, hbd: c.hbd, hba: c.hba, rotatableBonds: c.rotatableBonds, heavyAtoms: c.heavyAtoms },
        cells: r.cells,
        margins: r.margins,
        calls: r.calls,
        worstMargin: r.worstMargin,
        le: r.le,
        lipe: r.lipe,
        score: rankScore({ potency: snapshot.primaryPKi, worstMargin: snapshot.worstMargin, lipe: r.lipe, primaryCall: snapshot.primaryCall }, table.project.ranking),
        decision: decisions.get(r.id) ? decisionView(decisions.get(r.id)!) : null,
      };
    }),
    caution: DECISION_CAUTION,
  };
}

/** Records a decision (superseding the last), audited; the compound's chemist and pharmacologists are e-mailed. */
export async function recordDecision(em: EntityManager, mailer: Mailer, actorId: number, body: { projectId: number; compoundId: number; decision: DecisionKind; rationale: string }) {
  const project = await em.findOne(Project, { id: body.projectId });
  if (!project) throw HttpError.badRequest(`projectId: no project with id ${body.projectId}`, [{ field: 'projectId', message: 'no such project' }]);
  const table = await pivot(em, { project: String(project.id), compoundIds: [body.compoundId], userId: actorId });
  const row = table.rows[0];
  if (!row) throw HttpError.badRequest(`compoundId: compound ${body.compoundId} is not in a series of ${project.code}`, [{ field: 'compoundId', message: `not in project ${project.code}` }]);
  const snapshot = snapshotOf(table, row);
  const id = await em.transactional(async (tx) => {
    await tx.nativeUpdate(Decision, { project: project.id, compound: body.compoundId, current: true }, { current: false });
    const d = tx.create(Decision, { project: project.id, compound: body.compoundId, decision: body.decision, rationale: body.rationale, author: actorId, snapshot, flaggedReason: null, flaggedAt: null, current: true });
    await tx.flush();
    audit(tx, actorId, 'decision.record', 'Decision', d.id, { projectId: project.id, compoundId: body.compoundId, decision: body.decision, rationale: body.rationale, snapshot });
    await tx.flush();
    return d.id;
  });
  // Who to tell: the compound's registrant (the chemist) and whoever entered or submitted its results.
  const people = (await em.getConnection().getKnex().raw<{ rows: { email: string }[] }>(
    `select distinct u.email from app_user u where u.active and u.id <> ? and (
        u.id = (select registrant_id from compound where id = ?)
        or u.id in (select created_by_id from result where compound_id = ?)
        or u.id in (select submitted_by_id from result where compound_id = ? and submitted_by_id is not null))`,
    [actorId, body.compoundId, body.compoundId, body.compoundId],
  )).rows.map((r) => r.email);
  const author = await em.findOneOrFail(User, { id: actorId });
  mailer.sendLater({
    to: people,
    subject: `[Ligandry] ${row.registryNumber} in ${project.code}: ${body.decision}`,
    text: `${author.name} decided to ${body.decision === 'progress' ? 'progress' : body.decision === 'hold' ? 'hold' : 'stop'} ${row.registryNumber} in ${project.name}.\n\nRationale: ${body.rationale}\n\nAt the time: primary pKi ${snapshot.primaryPKi ? `${snapshot.primaryPKi.qualifier === '=' ? '' : snapshot.primaryPKi.qualifier}${snapshot.primaryPKi.value.toFixed(2)}` : 'not measured'}, worst margin ${snapshot.worstMargin ? `${snapshot.worstMargin.value.toFixed(2)} log units (${snapshot.worstMargin.window} the window)` : 'not measured'}, call at the primary target ${snapshot.primaryCall ?? 'none'}.\n\n${DECISION_CAUTION}\n`,
  });
  const saved = await em.fork().findOneOrFail(Decision, { id }, { populate: ['author', 'compound'] });
  return decisionView(saved);
}

export async function listDecisions(em: EntityManager, q: { projectId?: number; compoundId?: number; flagged?: boolean; limit: number }) {
  const where: Record<string, unknown> = {};
  if (q.projectId) where.project = q.projectId;
  if (q.compoundId) where.compound = q.compoundId;
  if (q.flagged) where.flaggedReason = { $ne: null };
  const items = await em.find(Decision, where, { populate: ['author', 'compound'], orderBy: { createdAt: 'desc', id: 'desc' }, limit: q.limit });
  return { items: items.map(decisionView), caution: DECISION_CAUTION };
}

/**
 * Looks again at the current decisions on these compounds: where later data changed the picture
 * (domain/selectivity.ts decisionChanges), the decision is flagged with the reasons. Runs after a
 * result is approved.
 */
export async function reviewDecisions(em: EntityManager, compoundIds: number[]): Promise<number> {
  const current = await em.find(Decision, { compound: { $in: compoundIds }, current: true, flaggedReason: null }, { populate: ['project'] });
  let flagged = 0;
  for (const d of current) {
    const table = await pivot(em, { project: String(d.project.id), compoundIds: [d.compound.id], userId: 0 });
    const row = table.rows[0];
    if (!row) continue;
    const reasons = decisionChanges(d.snapshot, snapshotOf(table, row));
    if (!reasons.length) continue;
    d.flaggedReason = reasons.join('; ');
    d.flaggedAt = new Date();
    audit(em, null, 'decision.flag', 'Decision', d.id, { reasons });
    flagged++;
  }
  if (flagged) await em.flush();
  return flagged;
}

/** A project's selectivity window and ranking settings. */
export async function updateProjectSettings(em: EntityManager, actorId: number, projectId: number, body: { selectivityWindow?: number; ranking?: Partial<RankingConfig> }) {
  const project = await em.findOne(Project, { id: projectId });
  if (!project) throw HttpError.notFound(`No project with id ${projectId}.`);
  const bad = (body.ranking?.requiredCalls ?? []).filter((c) => !(LIGAND_CALLS as readonly string[]).includes(c));
  if (bad.length) throw HttpError.badRequest(`ranking.requiredCalls: unknown call ${bad.join(', ')}`, [{ field: 'ranking.requiredCalls', message: `unknown: ${bad.join(', ')}` }]);
  if (body.selectivityWindow !== undefined) project.selectivityWindow = body.selectivityWindow;
  if (body.ranking) project.ranking = { ...DEFAULT_RANKING, ...(project.ranking ?? {}), ...body.ranking };
  audit(em, actorId, 'project.settings', 'Project', projectId, body);
  await em.flush();
  return { id: project.id, selectivityWindow: project.selectivityWindow, ranking: { ...DEFAULT_RANKING, ...(project.ranking ?? {}) } };
}

/** The leads' landing page: counts, the review queue, recent decisions, the best ranked, the scatter. */
export async function projectOverview(em: EntityManager, projectKey: string, userId: number) {
  const matrix = await selectivityMatrix(em, { project: projectKey, userId });
  const knex = em.getConnection().getKnex();
  const projectId = matrix.project.id;
  const bySeries = (await knex.raw<{ rows: { code: string; name: string; compounds: string; progress: string; hold: string; stop: string; flagged: string }[] }>(
    `select s.code, s.name, count(c.id) as compounds,
            count(d.id) filter (where d.decision = 'progress') as progress,
            count(d.id) filter (where d.decision = 'hold') as hold,
            count(d.id) filter (where d.decision = 'stop') as stop,
            count(d.id) filter (where d.flagged_reason is not null) as flagged
       from series s left join compound c on c.series_id = s.id
       left join decision d on d.compound_id = c.id and d.project_id = s.project_id and d.current
      where s.project_id = ? group by s.code, s.name order by s.code`,
    [projectId],
  )).rows.map((r) => ({ code: r.code, name: r.name, compounds: Number(r.compounds), progress: Number(r.progress), hold: Number(r.hold), stop: Number(r.stop), undecided: Number(r.compounds) - Number(r.progress) - Number(r.hold) - Number(r.stop), flagged: Number(r.flagged) }));
  const awaiting = (await knex.raw<{ rows: { status: string; n: string }[] }>(
    `select r.status, count(*) as n from result r join compound c on c.id = r.compound_id join series s on s.id = c.series_id
      where s.project_id = ? group by r.status`,
    [projectId],
  )).rows.reduce<Record<string, number>>((acc, r) => ({ ...acc, [r.status]: Number(r.n) }), {});
  const recent = (await listDecisions(em, { projectId, limit: 10 })).items;
  const ranked = matrix.rows.filter((r) => r.score.score !== null).sort((a, b) => b.score.score! - a.score.score!);
  return {
    project: matrix.project,
    primaryTarget: matrix.primaryTarget,
    window: matrix.window,
    series: bySeries,
    results: { draft: awaiting.draft ?? 0, submitted: awaiting.submitted ?? 0, approved: awaiting.approved ?? 0, rejected: awaiting.rejected ?? 0 },
    recentDecisions: recent,
    flaggedDecisions: recent.filter((d) => d.flagged && d.current),
    topRanked: ranked.slice(0, 10).map((r) => ({ compound: r.compound, score: r.score, worstMargin: r.worstMargin, primary: r.primary, decision: r.decision })),
    scatter: matrix.rows
      .filter((r) => r.primary?.value != null)
      .map((r) => ({ id: r.compound.id, registryNumber: r.compound.registryNumber, seriesCode: r.compound.seriesCode, potency: r.primary!.value, potencyQualifier: r.primary!.qualifier, margin: r.worstMargin?.value ?? null, marginQualifier: r.worstMargin?.qualifier ?? null, decision: r.decision?.decision ?? null })),
    caution: DECISION_CAUTION,
  };
}

export { DECISIONS };
