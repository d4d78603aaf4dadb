// Worker thread (piscina): the OpenChemLib work of a bulk import, so both cores parse while the
// main thread writes to the database and keeps answering requests.
import { analyseStructure, StructureError, tautomerIdCodeOf, type ParsedStructure, type StructureFormat } from '../domain/chem.js';
import { createMatcher, fingerprintFromIdCode, parseQuery, toBitString } from '../domain/structure-search.js';

export interface ChemTask {
  index: number;
  text: string;
  format?: StructureFormat;
}

export type ChemResult = { index: number; ok: true; parsed: ParsedStructure } | { index: number; ok: false; message: string };

export function analyseMany(tasks: ChemTask[]): ChemResult[] {
  return tasks.map((t) => {
    try {
      const parsed = analyseStructure(t.text, t.format, { tautomer: false });
      return { index: t.index, ok: true, parsed: { ...parsed, fingerprint: toBitString(fingerprintFromIdCode(parsed.idCode)) } };
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


export interface MatchTask {
  query: string;
  kind?: 'smiles' | 'molfile' | 'smarts';
  targets: [number, string][];
}

let cachedQuery: { key: string; match: (idCode: string) => number[] | null } | undefined;

/** Atom-by-atom substructure check of [id, ID code] pairs; answers [id, matched atoms] of the hits. */
export function matchMany(task: MatchTask): [number, number[]][] {
  const key = `${task.kind ?? ''}\u0000${task.query}`;
  if (cachedQuery?.key !== key) cachedQuery = { key, match: createMatcher(parseQuery(task.query, task.kind)) };
  const hits: [number, number[]][] = [];
  for (const [id, idCode] of task.targets) {
    const atoms = cachedQuery.match(idCode);
    if (atoms) hits.push([id, atoms]);
  }
  return hits;
}

/** Screening fingerprints (bit strings) of stored ID codes. */
export function fingerprints(idCodes: string[]): string[] {
  return idCodes.map((id) => toBitString(fingerprintFromIdCode(id)));
}
