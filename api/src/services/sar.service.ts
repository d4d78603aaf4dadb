// The SAR table (DESIGN §3, §4): one row per compound of a project's series, one column group per
// target, one column per parameter, pivoted here because ag-grid community has no pivot mode.
// Reads go through two SQL queries (compounds, results); the arithmetic is domain/sar.ts.
import { createHash } from 'node:crypto';
import type { EntityManager, Knex } from '@mikro-orm/postgresql';
import { Molecule } from 'openchemlib';
import {
  aggregate,
  ligandEfficiency,
  lipophilicEfficiency,
  SAR_PARAMETERS,
  selectivityMargin,
  windowState,
  type Aggregate,
  type Margin,
  type Observation,
  type Qualifier,
  type SarParameter,
  type WindowState,
} from '../domain/sar.js';
import { CoreError, decompose, parseCore } from '../domain/rgroups.js';
import type { ExportColumn } from '../domain/sar-export.js';
import { DEFAULT_RANKING, rankScore, type RankingConfig } from '../domain/selectivity.js';
import { HttpError } from '../http-error.js';
import { substructureFilter, type QueryFormat } from './compound-search.service.js';
import { textMatches } from './compound-query.service.js';

export interface SarQuery {
  project: string;
  seriesIds?: number[];
  targetIds?: number[];
  parameters: SarParameter[];
  /** Show each receptor's ligand-type call (a column per receptor). */
  calls?: boolean;
  /** Only these compounds (still those of the project's series). */
  compoundIds?: number[];
  substructure?: { structure: string; format?: QueryFormat };
  text?: string;
  includeSubmitted: boolean;
  /** Parameter the selectivity margins compare (pKi or pEC50). */
  selectivityBy: 'pKi' | 'pEC50';
  /** Window in log units; the project's setting when absent. */
  window?: number;
  timeLimitMs: number;
}

export interface SarCell extends Aggregate {
  /** Results of status `submitted` among those aggregated (only when they are included). */
  submitted: number;
}

export interface SarMargin extends Margin {
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
  /** Column id (`t:<target>:<parameter>` or `a:<assay>:<parameter>`) → aggregate. */
  cells: Record<string, SarCell>;
  /** anti-target id → margin of the primary target over it. */
  margins: Record<string, SarMargin>;
  worstMargin: (SarMargin & { targetId: number }) | null;
  le: { value: number; qualifier: Qualifier } | null;
  lipe: { value: number; qualifier: Qualifier } | null;
  rgroups: Record<string, string> | null;
  rgroupProblem: string | null;
  /** Atoms matched by the substructure filter (for highlighting), when one was given. */
  match: number[] | null;
  /** target id → ligand-type call (computed suggestion, or a pharmacologist's override). */
  calls: Record<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>;
  /** The project's ranking score (domain/selectivity.ts), or null with the reason in scoreNote. */
  score: number | null;
  scoreNote: string | null;
}

interface CompoundRow {
  id: number;
  registry_number: string;
  name: string | null;
  aliases: string[] | null;
  id_code: string;
  smiles: string;
  series_id: number;
  series_code: string;
  mw: number;
  clogp: number;
  tpsa: number;
  heavy_atoms: number;
  hbd: number;
  hba: number;
  created_at: Date;
  rgroup_key: string | null;
  rgroups: { groups: Record<string, string> | null; problem: string | null } | null;
}

/** A query's rows as arrays (pg's array row mode: far fewer objects than one per row and field). */
async function arrayRows(knex: Knex, text: string, values: unknown[]): Promise<unknown[][]> {
  const client = knex.client as { acquireConnection(): Promise<{ query(q: { text: string; values: unknown[]; rowMode: 'array' }): Promise<{ rows: unknown[][] }> }>; releaseConnection(c: unknown): Promise<void> };
  const connection = await client.acquireConnection();
  try {
    return (await connection.query({ text, values, rowMode: 'array' })).rows;
  } finally {
    await client.releaseConnection(connection);
  }
}

interface PanelEntry {
  role: 'primary' | 'anti-target';
  agonismUnwanted: boolean;
  target: { id: number; name: string; geneSymbol: string; species: string };
}

/** Project by id or code, with its panel (plain SQL: this read runs on every SAR request). */
async function loadProject(em: EntityManager, key: string): Promise<{ project: { id: number; code: string; name: string; selectivityWindow: number; ranking: RankingConfig }; panel: PanelEntry[] }> {
  const knex = em.getConnection().getKnex();
  const byId = /^\d+$/.test(key);
  const project = (await knex.raw<{ rows: { id: number; code: string; name: string; selectivity_window: number; ranking: RankingConfig | null }[] }>(
    `select id, code, name, selectivity_window, ranking from project where ${byId ? 'id = ?' : 'code = ?'}`,
    [byId ? Number(key) : key.toUpperCase()],
  )).rows[0];
  if (!project) throw HttpError.notFound(`No project ${byId ? `with id ${key}` : key}.`);
  const panel = (await knex.raw<{ rows: { role: 'primary' | 'anti-target'; agonism_unwanted: boolean; id: number; name: string; gene_symbol: string; species: string }[] }>(
    `select pt.role, pt.agonism_unwanted, t.id, t.name, t.gene_symbol, t.species
       from project_target pt join target t on t.id = pt.target_id where pt.project_id = ? order by pt.role desc, t.name`,
    [project.id],
  )).rows;
  return {
    project: { id: project.id, code: project.code, name: project.name, selectivityWindow: project.selectivity_window, ranking: { ...DEFAULT_RANKING, ...(project.ranking ?? {}) } },
    panel: panel.map((p) => ({ role: p.role, agonismUnwanted: p.agonism_unwanted, target: { id: p.id, name: p.name, geneSymbol: p.gene_symbol, species: p.species } })),
  };
}


export function coreKey(core: string): string {
  return createHash('sha256').update(core.trim()).digest('hex').slice(0, 32);
}

/**
 * R-group decompositions, kept on the compound rows with the key of the core they were made
 * against: computed once per member and core, again only when the series core changes.
 */
async function ensureRgroups(knex: Knex, compounds: CompoundRow[], cores: Map<number, { key: string; core: ReturnType<typeof parseCore> | null }>) {
  const stale = compounds.filter((c) => {
    const core = cores.get(c.series_id);
    return core && core.core && c.rgroup_key !== core.key;
  });
  if (!stale.length) return;
  const updates: { id: number; key: string; value: string }[] = [];
  for (const c of stale) {
    const { key, core } = cores.get(c.series_id)!;
    let value: { groups: Record<string, string> | null; problem: string | null };
    try {
      value = decompose(core!, Molecule.fromIDCode(c.id_code));
    } catch (err) {
      value = { groups: null, problem: `could not be decomposed (${(err as Error).message})` };
    }
    c.rgroups = value;
    c.rgroup_key = key;
    updates.push({ id: c.id, key, value: JSON.stringify(value) });
  }
  await knex.raw(
    `update compound c set rgroup_key = u.key, rgroups = u.value::jsonb
       from unnest(?::int[], ?::text[], ?::text[]) as u(id, key, value) where c.id = u.id`,
    [updates.map((u) => u.id), updates.map((u) => u.key), updates.map((u) => u.value)],
  );
}

/** Pivots a project's compounds by target × parameter. */
export async function sarTable(em: EntityManager, q: SarQuery, now: () => number = Date.now) {
  const started = now();
  const knex = em.getConnection().getKnex();
  const { project, panel } = await loadProject(em, q.project);
  const windowLog = q.window ?? project.selectivityWindow;
  const primary = panel.find((p) => p.role === 'primary') ?? null;

  // Targets: those asked for (any receptor), else the project's panel.
  let targets: { id: number; name: string; geneSymbol: string; species: string; role: 'primary' | 'anti-target' | null; agonismUnwanted: boolean }[];
  const panelById = new Map(panel.map((p) => [p.target.id, p]));
  if (q.targetIds?.length) {
    const rows = (await knex.raw<{ rows: { id: number; name: string; gene_symbol: string; species: string }[] }>(
      'select id, name, gene_symbol, species from target where id = any(?::int[])',
      [q.targetIds],
    )).rows;
    const missing = q.targetIds.filter((id) => !rows.some((r) => r.id === id));
    if (missing.length) throw HttpError.badRequest(`targets: no target with id ${missing.join(', ')}`, [{ field: 'targets', message: `no target with id ${missing.join(', ')}` }]);
    const byId = new Map(rows.map((r) => [r.id, r]));
    targets = q.targetIds.map((id) => {
      const r = byId.get(id)!;
      const p = panelById.get(id);
      return { id, name: r.name, geneSymbol: r.gene_symbol, species: r.species, role: p?.role ?? null, agonismUnwanted: p?.agonismUnwanted ?? false };
    });
  } else {
    targets = panel.map((p) => ({ id: p.target.id, name: p.target.name, geneSymbol: p.target.geneSymbol, species: p.target.species, role: p.role, agonismUnwanted: p.agonismUnwanted }));
  }

  // Series of the project (all, or those asked for) with their cores.
  const seriesRows = (await knex.raw<{ rows: { id: number; code: string; name: string; core: string | null }[] }>(
    'select id, code, name, core from series where project_id = ? order by code',
    [project.id],
  )).rows;
  if (q.seriesIds?.length) {
    const unknown = q.seriesIds.filter((id) => !seriesRows.some((s) => s.id === id));
    if (unknown.length) throw HttpError.badRequest(`series: no series with id ${unknown.join(', ')} in project ${project.code}`, [{ field: 'series', message: `not in project ${project.code}: ${unknown.join(', ')}` }]);
  }
  const chosenSeries = q.seriesIds?.length ? seriesRows.filter((s) => q.seriesIds!.includes(s.id)) : seriesRows;
  const cores = new Map<number, { key: string; core: ReturnType<typeof parseCore> | null; problem: string | null; labels: string[] }>();
  for (const s of chosenSeries) {
    if (!s.core?.trim()) continue;
    try {
      const core = parseCore(s.core);
      cores.set(s.id, { key: coreKey(s.core), core, problem: null, labels: core.attachments.map((a) => a.label) });
    } catch (err) {
      if (!(err instanceof CoreError)) throw err;
      cores.set(s.id, { key: coreKey(s.core), core: null, problem: err.message, labels: [] });
    }
  }

  let compounds = (await knex.raw<{ rows: CompoundRow[] }>(
    `select c.id, c.registry_number, c.name, c.aliases, c.id_code, c.smiles, c.series_id, s.code as series_code,
            c.mw, c.clogp, c.tpsa, c.heavy_atoms, c.hbd, c.hba, c.created_at, c.rgroup_key, c.rgroups
       from compound c join series s on s.id = c.series_id
      where c.series_id = any(?::int[])
      order by s.code, c.number`,
    [chosenSeries.map((s) => s.id)],
  )).rows;

  if (q.compoundIds) {
    const only = new Set(q.compoundIds);
    compounds = compounds.filter((c) => only.has(c.id));
  }
  // Text: the registry's fuzzy match over numbers, names and aliases.
  if (q.text?.trim()) {
    const ids = new Set(await textMatches(em, q.text, { id: { $in: compounds.map((c) => c.id) } }));
    compounds = compounds.filter((c) => ids.has(c.id));
  }
  let substructure: { complete: boolean; note: string | null } | null = null;
  let matches: Map<number, number[]> | null = null;
  if (q.substructure?.structure.trim()) {
    const found = await substructureFilter(em, q.substructure, compounds.map((c) => c.id), q.timeLimitMs, now);
    matches = found.hits;
    substructure = { complete: found.complete, note: found.note };
    compounds = compounds.filter((c) => matches!.has(c.id));
  }
  await ensureRgroups(knex, compounds, cores);

  // Results: only the parameters needed (shown ones, the selectivity parameter and pKi for LE and
  // LipE), read from the JSON values in SQL so that no whole value documents cross the wire, as
  // arrays rather than objects (tens of thousands of rows: see DEVELOPERS.md, SAR table costs).
  const needed = [...new Set<SarParameter>([...q.parameters, q.selectivityBy, 'pKi'])];
  const selects = needed
    .map((key) => {
      const k = SAR_PARAMETERS[key].valueKey;
      return `(r.values->'${k}'->>'value')::float8, r.values->'${k}'->>'qualifier'`;
    })
    .join(', ');
  const statuses = q.includeSubmitted ? ['approved', 'submitted'] : ['approved'];
  const targetIds = [...new Set([...targets.map((t) => t.id), ...(primary ? [primary.target.id] : [])])];
  const assayRows = targetIds.length
    ? (await knex.raw<{ rows: { id: number; target_id: number; code: string; readout: string; kind: string }[] }>('select id, target_id, code, readout, kind from assay where target_id = any(?::int[])', [targetIds])).rows
    : [];
  const assayMeta = new Map(assayRows.map((a) => [a.id, a]));
  const resultRows = compounds.length && assayRows.length ? await arrayRows(knex,
    `select r.compound_id, r.assay_id, r.status = 'submitted', ${selects}
       from result r where r.compound_id = any($1::int[]) and r.assay_id = any($2::int[]) and r.status = any($3::text[])`,
    [compounds.map((c) => c.id), [...assayMeta.keys()], statuses],
  ) : [];

  // Observations per compound, keyed by number: −(target·16 + p) − 1 for a value pooled over the
  // target's assays (affinities, and the selectivity parameter), assay·16 + p for a per-assay value.
  type Slot = { obs: Observation[]; submitted: number };
  const observations = new Map<number, Map<number, Slot>>();
  const assaysSeen = new Map<number, { id: number; targetId: number; code: string; readout: string; kind: string; parameters: Set<SarParameter> }>();
  const shown = needed.map((key) => q.parameters.includes(key));
  const pooledParam = needed.map((key) => SAR_PARAMETERS[key].level === 'target' || key === q.selectivityBy);
  const perAssay = needed.map((key) => SAR_PARAMETERS[key].level === 'assay');
  const targetKey = (tid: number, pi: number) => -(tid * 16 + pi) - 1;
  const add = (byKey: Map<number, Slot>, key: number, value: number, qualifier: Qualifier, submitted: boolean) => {
    let slot = byKey.get(key);
    if (!slot) byKey.set(key, (slot = { obs: [], submitted: 0 }));
    slot.obs.push({ value, qualifier });
    if (submitted) slot.submitted++;
  };
  for (const r of resultRows) {
    const cid = r[0] as number;
    const aid = r[1] as number;
    const submitted = r[2] as boolean;
    const assay = assayMeta.get(aid)!;
    let byKey = observations.get(cid);
    if (!byKey) observations.set(cid, (byKey = new Map()));
    for (let pi = 0; pi < needed.length; pi++) {
      const v = r[3 + 2 * pi] as number | null;
      if (v === null) continue;
      const raw = r[4 + 2 * pi] as string | null;
      const qual: Qualifier = raw === '<' || raw === '>' ? raw : '=';
      if (pooledParam[pi]) add(byKey, targetKey(assay.target_id, pi), v, qual, submitted);
      if (perAssay[pi] && shown[pi]) {
        add(byKey, aid * 16 + pi, v, qual, submitted);
        let seen = assaysSeen.get(aid);
        if (!seen) assaysSeen.set(aid, (seen = { id: aid, targetId: assay.target_id, code: assay.code, readout: assay.readout, kind: assay.kind, parameters: new Set() }));
        seen.parameters.add(needed[pi]);
      }
    }
  }

  // Calls: shown per receptor when asked for; the primary target's always (the ranking may require one).
  const callTargets = q.calls ? targetIds : primary ? [primary.target.id] : [];
  const callRows = compounds.length && callTargets.length
    ? await arrayRows(knex, 'select compound_id, target_id, call, source, contradicted from ligand_call where compound_id = any($1::int[]) and target_id = any($2::int[])', [compounds.map((c) => c.id), callTargets])
    : [];
  const callsByCompound = new Map<number, SarRow['calls']>();
  for (const [cid, tid, call, source, contradicted] of callRows as [number, number, string, 'rule' | 'manual', boolean][]) {
    let m = callsByCompound.get(cid);
    if (!m) callsByCompound.set(cid, (m = {}));
    m[tid] = { call, source, contradicted };
  }

  const scoreOf = (pKi: SarCell | null, worst: SarRow['worstMargin'], lipe: { value: number; qualifier: Qualifier } | null, primaryCall: string | null) => {
    const s = rankScore({ potency: pKi?.value != null ? { value: pKi.value, qualifier: pKi.qualifier } : null, worstMargin: worst, lipe, primaryCall }, project.ranking);
    return { score: s.score, scoreNote: s.excluded };
  };
  const antiTargets = targets.filter((t) => t.id !== primary?.target.id && t.role === 'anti-target');
  const shownTargets = new Set(targets.map((t) => t.id));
  const rows: SarRow[] = compounds.map((c) => {
    const cells: SarRow['cells'] = {};
    const pooled = new Map<number, SarCell>();
    for (const [key, slot] of observations.get(c.id) ?? []) {
      const agg = aggregate(slot.obs);
      if (!agg) continue;
      const cell = agg as SarCell;
      cell.submitted = slot.submitted;
      if (key < 0) {
        const code = -key - 1;
        const tid = Math.floor(code / 16);
        const pi = code % 16;
        pooled.set(key, cell);
        if (shown[pi] && !perAssay[pi] && shownTargets.has(tid)) cells[`t:${tid}:${needed[pi]}`] = cell;
      } else {
        cells[`a:${Math.floor(key / 16)}:${needed[key % 16]}`] = cell;
      }
    }
    const poolOf = (tid: number, key: SarParameter) => pooled.get(targetKey(tid, needed.indexOf(key))) ?? null;
    const primaryAgg = primary ? poolOf(primary.target.id, q.selectivityBy) : null;
    const margins: SarRow['margins'] = {};
    let worst: SarRow['worstMargin'] = null;
    for (const t of antiTargets) {
      const m = selectivityMargin(primaryAgg, poolOf(t.id, q.selectivityBy));
      if (!m) continue;
      const entry = m as SarMargin;
      entry.window = windowState(m, windowLog);
      margins[t.id] = entry;
      if (!worst || entry.value < worst.value) worst = { ...entry, targetId: t.id };
    }
    const primaryPKi = primary ? poolOf(primary.target.id, 'pKi') : null;
    const le = primaryPKi?.value != null ? ligandEfficiency(primaryPKi.value, c.heavy_atoms) : null;
    const lipe = primaryPKi?.value != null ? lipophilicEfficiency(primaryPKi.value, c.clogp) : null;
    return {
      id: c.id,
      registryNumber: c.registry_number,
      name: c.name,
      aliases: c.aliases ?? [],
      idCode: c.id_code,
      smiles: c.smiles,
      seriesId: c.series_id,
      seriesCode: c.series_code,
      mw: c.mw,
      clogp: c.clogp,
      tpsa: c.tpsa,
      heavyAtoms: c.heavy_atoms,
      hbd: c.hbd,
      hba: c.hba,
      registeredAt: new Date(c.created_at).toISOString(),
      cells,
      margins,
      worstMargin: worst,
      le: le === null ? null : { value: le, qualifier: primaryPKi!.qualifier },
      lipe: lipe === null ? null : { value: lipe, qualifier: primaryPKi!.qualifier },
      rgroups: cores.get(c.series_id)?.core ? c.rgroups?.groups ?? null : null,
      rgroupProblem: cores.get(c.series_id)?.core ? c.rgroups?.problem ?? null : null,
      match: matches?.get(c.id) ?? null,
      calls: callsByCompound.get(c.id) ?? {},
      ...scoreOf(primaryPKi, worst, lipe === null ? null : { value: lipe, qualifier: primaryPKi!.qualifier }, primary ? callsByCompound.get(c.id)?.[primary.target.id]?.call ?? null : null),
    };
  });

  return {
    project: { id: project.id, code: project.code, name: project.name, selectivityWindow: project.selectivityWindow, ranking: project.ranking },
    primaryTarget: primary ? { id: primary.target.id, name: primary.target.name, geneSymbol: primary.target.geneSymbol } : null,
    selectivityBy: q.selectivityBy,
    window: windowLog,
    includeSubmitted: q.includeSubmitted,
    parameters: q.parameters.map((key) => ({ key, label: SAR_PARAMETERS[key].label, unit: SAR_PARAMETERS[key].unit })),
    calls: q.calls ?? false,
    targets,
    series: chosenSeries.map((s) => ({ id: s.id, code: s.code, name: s.name, core: s.core, rgroupLabels: cores.get(s.id)?.labels ?? [], coreProblem: cores.get(s.id)?.problem ?? null })),
    columns: columnDefinitions(targets, q.parameters, [...assaysSeen.values()], q.calls ?? false, primary?.target.id ?? null, antiTargets.map((t) => t.id), chosenSeries.flatMap((s) => cores.get(s.id)?.labels ?? [])),
    rows,
    total: rows.length,
    substructure,
    elapsedMs: now() - started,
  };
}

/** A column of the table: the export flattens exactly these (domain/sar-export.ts owns the shape). */
export type SarColumn = ExportColumn;

export interface SarColumnGroup {
  id: string;
  header: string;
  targetId?: number;
  role?: 'primary' | 'anti-target' | null;
  children: SarColumn[];
}

/** Column definitions in the order the grid shows them; the export names its columns by these ids. */
export function columnDefinitions(
  targets: { id: number; name: string; geneSymbol: string; role: 'primary' | 'anti-target' | null }[],
  parameters: SarParameter[],
  assays: { id: number; targetId: number; code: string; readout: string; parameters: Set<SarParameter> }[],
  calls: boolean,
  primaryId: number | null,
  antiTargetIds: number[],
  rgroupLabels: string[],
): SarColumnGroup[] {
  const groups: SarColumnGroup[] = [
    {
      id: 'compound',
      header: 'Compound',
      children: [
        { id: 'structure', header: 'Structure', kind: 'compound' },
        { id: 'registryNumber', header: 'Registry number', kind: 'compound' },
        { id: 'series', header: 'Series', kind: 'compound' },
      ],
    },
  ];
  const labels = [...new Set(rgroupLabels)].sort((a, b) => Number(a.slice(1)) - Number(b.slice(1)));
  if (labels.length) groups.push({ id: 'rgroups', header: 'R-groups', children: labels.map((l) => ({ id: `rgroup:${l}`, header: l, kind: 'rgroup' as const })) });
  for (const t of targets) {
    const children: SarColumn[] = parameters
      .filter((key) => SAR_PARAMETERS[key].level === 'target')
      .map((key) => ({ id: `t:${t.id}:${key}`, header: SAR_PARAMETERS[key].label, kind: 'value' as const, unit: SAR_PARAMETERS[key].unit, targetId: t.id, parameter: key }));
    if (antiTargetIds.includes(t.id) && primaryId !== null) children.push({ id: `m:${t.id}`, header: 'Δ vs primary', kind: 'margin', unit: 'log units', targetId: t.id });
    if (calls) children.push({ id: `c:${t.id}`, header: 'Call', kind: 'call', targetId: t.id });
    for (const a of assays.filter((x) => x.targetId === t.id).sort((x, y) => x.code.localeCompare(y.code))) {
      for (const key of parameters) {
        if (SAR_PARAMETERS[key].level !== 'assay' || !a.parameters.has(key)) continue;
        children.push({ id: `a:${a.id}:${key}`, header: SAR_PARAMETERS[key].label, kind: 'value', unit: SAR_PARAMETERS[key].unit, targetId: t.id, parameter: key, assay: { id: a.id, code: a.code, readout: a.readout } });
      }
    }
    groups.push({ id: `target:${t.id}`, header: `${t.geneSymbol} — ${t.name}`, targetId: t.id, role: t.role, children });
  }
  if (primaryId !== null) {
    groups.push({
      id: 'efficiency',
      header: 'Selectivity and efficiency',
      children: [
        { id: 'score', header: 'Score', kind: 'efficiency' },
        { id: 'worstMargin', header: 'Worst margin', kind: 'margin', unit: 'log units' },
        { id: 'le', header: 'LE', kind: 'efficiency', unit: 'kcal/mol per heavy atom' },
        { id: 'lipe', header: 'LipE', kind: 'efficiency' },
      ],
    });
  }
  groups.push({
    id: 'properties',
    header: 'Properties',
    children: [
      { id: 'mw', header: 'MW', kind: 'property', unit: 'g/mol' },
      { id: 'clogp', header: 'cLogP', kind: 'property' },
      { id: 'tpsa', header: 'TPSA', kind: 'property', unit: 'Å²' },
      { id: 'heavyAtoms', header: 'Heavy atoms', kind: 'property' },
    ],
  });
  return groups;
}

/** Individual results behind one value cell (a column id), with their runs and dates (its tooltip and curves). */
export async function sarCellResults(em: EntityManager, compoundId: number, column: string, includeSubmitted: boolean) {
  const m = /^(t|a):(\d+):(\w+)$/.exec(column);
  const parameter = m?.[3] as SarParameter | undefined;
  if (!m || !parameter || !(parameter in SAR_PARAMETERS)) {
    throw HttpError.badRequest('column: must be a value column id such as t:12:pKi or a:7:pEC50', [{ field: 'column', message: 'not a value column id' }]);
  }
  const scope = m[1] === 't' ? 'a.target_id = ?' : 'a.id = ?';
  const rows = (await em.getConnection().getKnex().raw<{ rows: Record<string, unknown>[] }>(
    `select r.id, r.status, r.values, r.run_id, run.run_date, a.id as assay_id, a.code as assay_code, a.name as assay_name, a.kind, a.readout, r.source
       from result r join assay a on a.id = r.assay_id left join run on run.id = r.run_id
      where r.compound_id = ? and ${scope} and r.status = any(?::text[]) and (r.values -> ?) is not null
      order by coalesce(run.run_date, to_char(r.created_at, 'YYYY-MM-DD')) desc, r.id desc`,
    [compoundId, Number(m[2]), includeSubmitted ? ['approved', 'submitted'] : ['approved'], SAR_PARAMETERS[parameter].valueKey],
  )).rows;
  return {
    parameter,
    items: rows.map((r) => ({
      id: Number(r.id),
      status: r.status,
      source: r.source,
      values: r.values,
      runId: r.run_id === null ? null : Number(r.run_id),
      runDate: r.run_date ?? null,
      assay: { id: Number(r.assay_id), code: r.assay_code, name: r.assay_name, kind: r.kind, readout: r.readout },
    })),
  };
}
