// Decoded molecules kept between searches. Decoding an ID code costs about as much as two to four
// substructure matches (measured: 0.09–0.15 ms against 0.03 ms for the match on a decoded
// molecule, NCI set), so a search thread keeps the molecules it has decoded, up to a bound, and
// the atom-by-atom stage then pays for the match alone. Each entry keeps the ID code it was decoded
// from; a request that brings another code for the same id (a restored database) decodes again.
import type { Molecule } from 'openchemlib';
import { createMatcher, graphFromIdCode, parseQuery, type QueryKind } from '../domain/structure-search.js';

/** Heap a decoded drug-sized molecule takes with its ring and neighbour arrays (measured: 12–14 KB). */
export const BYTES_PER_MOLECULE = 16 * 1024;

export class MoleculeStore {
  private readonly molecules = new Map<number, { code: string; mol: Molecule }>();
  decoded = 0;

  constructor(readonly capacity: number) {}

  /** The decoded molecule of `id`, decoding (and keeping) it when it is new or its code changed. */
  get(id: number, code: string): Molecule {
    const have = this.molecules.get(id);
    if (have && have.code === code) return have.mol;
    const mol = graphFromIdCode(code);
    this.decoded++;
    if (have) this.molecules.delete(id);
    else if (this.molecules.size >= this.capacity) {
      // Oldest first out: the bound holds the heap; a store this full holds most of the registry anyway.
      const oldest = this.molecules.keys().next();
      if (!oldest.done) this.molecules.delete(oldest.value);
    }
    if (this.capacity > 0) this.molecules.set(id, { code, mol });
    return mol;
  }

  get size(): number {
    return this.molecules.size;
  }
}

export interface ShardTask {
  query: string;
  kind?: QueryKind;
  ids: Int32Array;
  /** The ID codes of `ids`, joined by "\n" (ID codes never hold a line break). */
  codes: string;
}

let cached: { key: string; match: (target: Molecule) => number[] | null } | undefined;

/** Checks each target against the query (parsed once per query and thread); answers [id, matched atoms] of the hits. */
export function matchInStore(store: MoleculeStore, task: ShardTask): [number, number[]][] {
  const key = `${task.kind ?? ''}\u0000${task.query}`;
  if (cached?.key !== key) cached = { key, match: createMatcher(parseQuery(task.query, task.kind)) };
  const codes = task.codes.length ? task.codes.split('\n') : [];
  const hits: [number, number[]][] = [];
  for (let i = 0; i < task.ids.length; i++) {
    const atoms = cached.match(store.get(task.ids[i], codes[i]));
    if (atoms) hits.push([task.ids[i], atoms]);
  }
  return hits;
}

/** Decodes and keeps the targets without matching (the start-up warm-up). */
export function loadIntoStore(store: MoleculeStore, ids: Int32Array, codes: string): number {
  const list = codes.length ? codes.split('\n') : [];
  for (let i = 0; i < ids.length; i++) {
    try {
      store.get(ids[i], list[i]);
    } catch {
      // an unreadable stored code is left to the search, which reports it like any other
    }
  }
  return store.size;
}
