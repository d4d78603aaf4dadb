// R-group decomposition of a series' members against the series core (DESIGN §3, §4).
// The core is a SMILES whose attachment points are mapped star atoms ([*:1], [*:2] …), or a
// molfile whose mapped atoms play that part. Each member is matched to the core without its
// attachment atoms by OpenChemLib's SSSearcher; the substituent at R(n) is everything reached
// from the matched anchor atom through atoms outside the core. A member that does not contain
// the core, or that carries a substituent on a core atom without an attachment point, or whose
// substituents join two attachment points, is reported as not decomposed (with the reason) and
// never dropped. Pure functions over text.
import { Molecule, SSSearcher } from 'openchemlib';

export interface ParsedCore {
  fragment: Molecule;
  /** Attachment labels ("R1" …) in order, each with its anchor atom index in `fragment`. */
  attachments: { label: string; anchor: number }[];
}

export class CoreError extends Error {}

/** Reads a core with mapped attachment atoms; throws CoreError naming what is wrong. */
export function parseCore(text: string): ParsedCore {
  if (!text.trim()) throw new CoreError('The core is empty.');
  // A molfile keeps its leading lines (the first, the name, is often empty); a SMILES is trimmed.
  const isMolfile = text.trim().includes('\n');
  let core: Molecule;
  try {
    core = isMolfile ? Molecule.fromMolfile(text) : Molecule.fromSmiles(text.trim());
  } catch (err) {
    throw new CoreError(`The core could not be read: ${(err as Error).message}`);
  }
  core.ensureHelperArrays(Molecule.cHelperNeighbours);
  const all = core.getAllAtoms();
  const include = new Array<boolean>(all).fill(true);
  const marks: { label: string; mapNo: number; anchorInCore: number }[] = [];
  // Attachment points: mapped atoms ([*:1] in SMILES); or, in a drawing without mapped atoms,
  // its placeholder atoms ("?", atomic number 0), numbered R1, R2 … in the order they were drawn.
  const mapped = Array.from({ length: all }, (_, a) => core.getAtomMapNo(a) > 0).some(Boolean);
  let drawn = 0;
  for (let a = 0; a < all; a++) {
    const mapNo = mapped ? core.getAtomMapNo(a) : core.getAtomicNo(a) === 0 ? ++drawn : 0;
    if (mapNo <= 0) continue;
    if (core.getAllConnAtoms(a) !== 1) throw new CoreError(`Attachment point R${mapNo} must be bonded to exactly one core atom.`);
    include[a] = false;
    marks.push({ label: `R${mapNo}`, mapNo, anchorInCore: core.getConnAtom(a, 0) });
  }
  if (marks.length === 0) throw new CoreError('The core has no attachment points: mark them as [*:1], [*:2] … in the SMILES, or draw them as "any atom" (?) in the editor.');
  const labels = new Set(marks.map((m) => m.label));
  if (labels.size !== marks.length) throw new CoreError('Each attachment number may appear only once in the core.');
  const fragment = new Molecule(0, 0);
  const atomMap: number[] = new Array(all).fill(-1);
  core.copyMoleculeByAtoms(fragment, include, true, atomMap);
  fragment.setFragment(true);
  fragment.ensureHelperArrays(Molecule.cHelperRings);
  if (fragment.getAllAtoms() === 0) throw new CoreError('The core has no atoms besides its attachment points.');
  marks.sort((a, b) => a.mapNo - b.mapNo);
  return { fragment, attachments: marks.map((m) => ({ label: m.label, anchor: atomMap[m.anchorInCore] })) };
}

export interface Decomposition {
  /** Substituent per label: SMILES with `*` at the attachment, or "H" when there is none. */
  groups: Record<string, string> | null;
  /** Why the member could not be decomposed (null when it was). */
  problem: string | null;
}

/** Substituent SMILES for atoms `atoms` of `mol` hanging from `anchor` (a core atom). */
function substituentSmiles(mol: Molecule, anchor: number, atoms: number[]): string {
  const include = new Array<boolean>(mol.getAllAtoms()).fill(false);
  include[anchor] = true;
  for (const a of atoms) include[a] = true;
  const piece = new Molecule(0, 0);
  const map: number[] = new Array(mol.getAllAtoms()).fill(-1);
  mol.copyMoleculeByAtoms(piece, include, true, map);
  piece.setAtomicNo(map[anchor], 0);
  piece.setAtomCharge(map[anchor], 0);
  return piece.toIsomericSmiles().replace('[?]', '*');
}

/** Tries one core match; answers the groups or the reason it does not decompose. */
function assign(mol: Molecule, core: ParsedCore, match: number[]): Decomposition {
  const inCore = new Set(match.filter((a) => a >= 0));
  const anchors = new Map<number, string>();
  for (const { label, anchor } of core.attachments) anchors.set(match[anchor], label);
  const owner = new Map<number, string>();
  const groups: Record<string, string> = {};
  for (const { label, anchor } of core.attachments) {
    const start = match[anchor];
    const seen: number[] = [];
    const stack: number[] = [];
    for (let i = 0; i < mol.getConnAtoms(start); i++) {
      const n = mol.getConnAtom(start, i);
      if (!inCore.has(n)) stack.push(n);
    }
    while (stack.length) {
      const a = stack.pop()!;
      if (owner.has(a)) {
        if (owner.get(a) !== label) return { groups: null, problem: `the substituents at ${owner.get(a)} and ${label} are joined` };
        continue;
      }
      owner.set(a, label);
      seen.push(a);
      for (let i = 0; i < mol.getConnAtoms(a); i++) {
        const n = mol.getConnAtom(a, i);
        if (inCore.has(n) && n !== start) {
          return { groups: null, problem: `the substituent at ${label} is bonded back to the core` };
        }
        if (!inCore.has(n) && !owner.has(n)) stack.push(n);
      }
    }
    groups[label] = seen.length ? substituentSmiles(mol, start, seen) : 'H';
  }
  for (const a of inCore) {
    if (anchors.has(a)) continue;
    for (let i = 0; i < mol.getConnAtoms(a); i++) {
      const n = mol.getConnAtom(a, i);
      if (!inCore.has(n)) return { groups: null, problem: 'a substituent sits on a core atom without an attachment point' };
    }
  }
  return { groups, problem: null };
}

/** Decomposes one member (a decoded molecule) against a parsed core. */
export function decompose(core: ParsedCore, mol: Molecule): Decomposition {
  mol.ensureHelperArrays(Molecule.cHelperRings);
  const searcher = new SSSearcher();
  searcher.setFragment(core.fragment);
  searcher.setMolecule(mol);
  if (searcher.findFragmentInMolecule({ countMode: 'overlapping' }) === 0) return { groups: null, problem: 'does not contain the core' };
  let first: Decomposition | null = null;
  for (const match of searcher.getMatchList()) {
    const result = assign(mol, core, [...match]);
    if (!result.problem) return result;
    first ??= result;
  }
  return first ?? { groups: null, problem: 'does not contain the core' };
}
