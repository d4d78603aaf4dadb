// Flattening the SAR table for export (CSV and SDF): exactly the columns the grid shows, in its
// order, values rounded as the grid shows them, with qualifiers, SD, n and units in their own
// columns so a spreadsheet or a script reads numbers, not "7.3 ± 0.2 (3)". Pure functions.
import { SAR_PARAMETERS, type Qualifier, type SarParameter } from './sar.js';

/** A column of the SAR table, by the id the grid and the exports use. */
export interface ExportColumn {
  id: string;
  header: string;
  kind: 'compound' | 'property' | 'rgroup' | 'value' | 'margin' | 'efficiency' | 'call';
  unit?: string;
  targetId?: number;
  parameter?: SarParameter;
  /** The assay of a per-assay value (potency and efficacy are not pooled across readouts). */
  assay?: { id: number; code: string; readout: string };
}

export interface ExportCell {
  value: number | null;
  qualifier: Qualifier;
  sd: number | null;
  n: number;
  flag: string | null;
}

export interface ExportRow {
  registryNumber: string;
  name: string | null;
  smiles: string;
  seriesCode: string;
  mw: number;
  clogp: number;
  tpsa: number;
  heavyAtoms: number;
  /** Column id → aggregate. */
  cells: Record<string, ExportCell>;
  margins: Record<string, { value: number; qualifier: Qualifier; fold: number; window: string }>;
  worstMargin: { value: number; qualifier: Qualifier; fold: number; window: string; targetId: number } | null;
  le: { value: number; qualifier: Qualifier } | null;
  lipe: { value: number; qualifier: Qualifier } | null;
  rgroups: Record<string, string> | null;
  rgroupProblem: string | null;
  calls?: Record<string, { call: string; source: 'rule' | 'manual'; contradicted: boolean }>;
  score?: number | null;
  scoreNote?: string | null;
}

export type Field = string | number | null;

/** Decimals the grid shows for each kind of number. */
export const DECIMALS = { margin: 2, fold: 0, le: 2, lipe: 2, mw: 1, clogp: 2, tpsa: 1, heavyAtoms: 0 } as const;

export function round(value: number | null | undefined, decimals: number): number | null {
  if (value === null || value === undefined || !Number.isFinite(value)) return null;
  const f = 10 ** decimals;
  return Math.round(value * f) / f;
}

/**
 * Headers and records for `columns` (ids as in the SAR response's column definitions).
 * `targetLabel` names a target in headers (its gene symbol).
 */
export function exportTable(columns: ExportColumn[], rows: ExportRow[], targetLabel: (targetId: number) => string): { headers: string[]; records: Field[][] } {
  const headers: string[] = [];
  const getters: ((r: ExportRow) => Field)[] = [];
  const add = (header: string, get: (r: ExportRow) => Field) => {
    headers.push(header);
    getters.push(get);
  };
  for (const c of columns) {
    switch (c.id) {
      case 'structure':
        add('SMILES', (r) => r.smiles);
        continue;
      case 'registryNumber':
        add('Registry number', (r) => r.registryNumber);
        add('Name', (r) => r.name);
        continue;
      case 'series':
        add('Series', (r) => r.seriesCode);
        continue;
      case 'mw':
      case 'clogp':
      case 'tpsa':
      case 'heavyAtoms': {
        const key = c.id;
        add(c.unit ? `${c.header} (${c.unit})` : c.header, (r) => round(r[key], DECIMALS[key]));
        continue;
      }
      case 'le':
      case 'lipe': {
        const key = c.id;
        add(c.unit ? `${c.header} (${c.unit})` : c.header, (r) => round(r[key]?.value, DECIMALS[key]));
        add(`${c.header} qualifier`, (r) => r[key]?.qualifier ?? null);
        continue;
      }
      case 'score':
        add('Score', (r) => round(r.score, 2));
        add('Score note', (r) => r.scoreNote ?? null);
        continue;
      case 'worstMargin':
        add('Worst margin (log units)', (r) => round(r.worstMargin?.value, DECIMALS.margin));
        add('Worst margin qualifier', (r) => r.worstMargin?.qualifier ?? null);
        add('Worst margin fold', (r) => round(r.worstMargin?.fold, DECIMALS.fold));
        add('Worst margin target', (r) => (r.worstMargin ? targetLabel(r.worstMargin.targetId) : null));
        add('Worst margin window', (r) => r.worstMargin?.window ?? null);
        continue;
    }
    if (c.kind === 'rgroup') {
      const label = c.header;
      add(label, (r) => r.rgroups?.[label] ?? (r.rgroupProblem ? `not decomposed: ${r.rgroupProblem}` : null));
      continue;
    }
    if (c.kind === 'call' && c.targetId !== undefined) {
      const tid = String(c.targetId);
      const name = `${targetLabel(c.targetId)} call`;
      add(name, (r) => r.calls?.[tid]?.call ?? null);
      add(`${name} basis`, (r) => (r.calls?.[tid] ? (r.calls[tid].source === 'manual' ? 'manual override' : 'computed by rule') : null));
      continue;
    }
    if (c.kind === 'margin' && c.targetId !== undefined) {
      const tid = String(c.targetId);
      const name = `${targetLabel(c.targetId)} margin`;
      add(`${name} (log units)`, (r) => round(r.margins[tid]?.value, DECIMALS.margin));
      add(`${name} qualifier`, (r) => r.margins[tid]?.qualifier ?? null);
      add(`${name} fold`, (r) => round(r.margins[tid]?.fold, DECIMALS.fold));
      add(`${name} window`, (r) => r.margins[tid]?.window ?? null);
      continue;
    }
    if (c.kind === 'value' && c.targetId !== undefined && c.parameter) {
      const id = c.id;
      const def = SAR_PARAMETERS[c.parameter];
      const name = `${targetLabel(c.targetId)} ${def.label}${c.assay ? ` ${c.assay.code}` : ''}`;
      add(name, (r) => round(r.cells[id]?.value, def.decimals));
      add(`${name} qualifier`, (r) => r.cells[id]?.qualifier ?? null);
      add(`${name} SD`, (r) => round(r.cells[id]?.sd, def.decimals));
      add(`${name} n`, (r) => r.cells[id]?.n ?? null);
      add(`${name} unit`, (r) => (r.cells[id] ? def.unit : null));
      add(`${name} note`, (r) => r.cells[id]?.flag ?? null);
      continue;
    }
    throw new Error(`unknown column ${c.id}`);
  }
  return { headers, records: rows.map((r) => getters.map((g) => g(r))) };
}

/** One SDF record: the molfile, then each non-empty field as a data item (CTfile format, SD file section). */
export function sdfRecord(molfile: string, headers: string[], record: Field[]): string {
  const body = molfile.replace(/\s+$/, '').replace(/\r\n/g, '\n');
  const lines = [body];
  headers.forEach((h, i) => {
    const v = record[i];
    if (v === null || v === '') return;
    // Data header names may not hold "<" or ">" (they delimit the name); the value is one line.
    lines.push(`>  <${h.replace(/[<>]/g, '')}>`, String(v).replace(/\r?\n/g, ' '), '');
  });
  return `${lines.join('\n')}\n$$$$\n`;
}
