// Worker thread (piscina): the OpenChemLib work of a bulk import, so both cores parse while the
// main thread writes to the database and keeps answering requests.
import { analyseStructure, StructureError, tautomerIdCodeOf, type ParsedStructure, type StructureFormat } from '../domain/chem.js';

export interface ChemTask {
  index: number;
  text: string;
  format?: StructureFormat;
}

export type ChemResult = { index: number; ok: true; parsed: ParsedStructure } | { index: number; ok: false; message: string };

export function analyseMany(tasks: ChemTask[]): ChemResult[] {
  return tasks.map((t) => {
    try {
      return { index: t.index, ok: true, parsed: analyseStructure(t.text, t.format, { tautomer: false }) };
    } catch (err) {
      const message = err instanceof StructureError ? err.message : `The structure could not be processed: ${String((err as Error)?.message ?? err).split('\n')[0].slice(0, 200)}`;
      return { index: t.index, ok: false, message };
    }
  });
}

/** Tautomer ID codes for stored ID codes (null where OpenChemLib cannot compute one). */
export function tautomers(idCodes: string[]): (string | null)[] {
  return idCodes.map((id) => {
    try {
      return tautomerIdCodeOf(id);
    } catch {
      return null;
    }
  });
}

