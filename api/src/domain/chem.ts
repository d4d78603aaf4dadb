// Structure handling with OpenChemLib (DESIGN §3): parse SMILES / molfiles, keep the parent
// (largest organic fragment), name the stripped counter-ions and solvents as the batch's salt
// form, canonical identity (ID codes), properties and depiction. Pure functions over text.
import { CanonizerUtil, Molecule, MoleculeProperties } from 'openchemlib';

export type StructureFormat = 'smiles' | 'molfile';
export type StereoStatus = 'achiral' | 'defined' | 'undefined' | 'partial';

export class StructureError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'StructureError';
  }
}

/** Largest text accepted as one structure (a 1 MB string is refused before parsing). */
export const MAX_STRUCTURE_LENGTH = 200_000;
/** Largest parent accepted, in heavy atoms (small-molecule registry). */
export const MAX_HEAVY_ATOMS = 250;
/**
 * Most atoms a SMILES may hold before it is parsed: OpenChemLib's SMILES reader grows faster than
 * linearly (a 600-atom cage takes seconds), so a parent of MAX_HEAVY_ATOMS with its counter-ions
 * fits and a hostile string is refused in microseconds.
 */
export const MAX_SMILES_ATOMS = 320;
/** Most atoms (hydrogens included) a molfile may announce; its reader is linear, so the bound is wider. */
export const MAX_MOLFILE_ATOMS = 2000;

/** Atoms written in a SMILES (bracket atoms and organic-subset symbols), counted without parsing. */
export function countSmilesAtoms(text: string): number {
  let n = 0;
  const rest = text.replace(/\[[^\]]*\]/g, () => {
    n++;
    return '';
  });
  return n + (rest.match(/Cl|Br|[BCNOSPFI]|[bcnops]/g)?.length ?? 0);
}

/** Refuses texts too big to parse quickly, before any parser sees them. */
export function checkStructureSize(text: string, format: StructureFormat): void {
  if (format === 'smiles') {
    const atoms = countSmilesAtoms(text);
    if (atoms > MAX_SMILES_ATOMS) throw new StructureError(`The SMILES has ${atoms} atoms; at most ${MAX_SMILES_ATOMS} are accepted (the registry takes small molecules).`);
    return;
  }
  const v3000 = /M {2}V30 COUNTS\s+(\d+)/.exec(text);
  const countsLine = text.replace(/\r/g, '').split('\n').find((l) => /V2000/.test(l));
  const atoms = v3000 ? Number(v3000[1]) : countsLine ? Number(countsLine.slice(0, 3)) : 0;
  if (atoms > MAX_MOLFILE_ATOMS) throw new StructureError(`The molfile announces ${atoms} atoms; at most ${MAX_MOLFILE_ATOMS} are accepted (the registry takes small molecules).`);
}

export interface ParentProperties {
  formula: string;
  mw: number;
  monoisotopicMass: number;
  clogp: number;
  tpsa: number;
  hbd: number;
  hba: number;
  rotatableBonds: number;
  heavyAtoms: number;
  stereoCentres: number;
  stereoStatus: StereoStatus;
}

export interface SaltComponent {
  /** Recognised name ("hydrochloride", "water" …) or null for an unnamed fragment. */
  name: string | null;
  smiles: string;
  formula: string;
  mw: number;
  /** Copies per parent molecule (may be a fraction, e.g. 0.5 for a hemisulfate). */
  count: number;
}

export interface SaltForm {
  /** "free base / neutral", "hydrochloride", "dihydrochloride", "sodium salt, hydrate" … */
  label: string;
  components: SaltComponent[];
  /** Hill formula of parent plus components, e.g. "C8H11NO2 · HCl". */
  batchFormula: string;
  batchFormulaWeight: number;
}

export interface ParsedStructure {
  idCode: string;
  /** ID code without stereo: finds stereoisomers of an existing compound. */
  noStereoIdCode: string;
  /** Tautomer-insensitive ID code: finds possible tautomers of an existing compound. */
  tautomerIdCode: string;
  smiles: string;
  molfile: string;
  properties: ParentProperties;
  salt: SaltForm;
  /** Parent fragments found in the input (a "2:1" salt has 2). */
  parentCount: number;
  /** Substructure-screen fingerprint as a bit string, when the caller computed it (import workers do). */
  fingerprint?: string;
}

// ---------------------------------------------------------------------------------------------
// Parsing

/** "molfile" when the text looks like one (a counts line or V3000 block), else "smiles". */
export function detectFormat(text: string): StructureFormat {
  return /\n.*(V2000|V3000)/.test(text) || /M {2}END/.test(text) ? 'molfile' : 'smiles';
}

function tryParse(text: string, format: StructureFormat): Molecule {
  try {
    return format === 'molfile' ? Molecule.fromMolfile(text) : Molecule.fromSmiles(text);
  } catch (err) {
    const detail = String((err as Error)?.message ?? err).split('\n')[0].replace(/^Class\$\S+:\s*/, '').slice(0, 200);
    throw new StructureError(`The ${format === 'molfile' ? 'molfile' : 'SMILES'} could not be read: ${detail || 'syntax error'}.`);
  }
}

function checkMolfileCounts(text: string): void {
  const lines = text.replace(/\r/g, '').split('\n');
  const countsIndex = lines.findIndex((l) => /V2000|V3000/.test(l));
  if (countsIndex < 0) throw new StructureError('The molfile has no counts line (line 4 must end in V2000 or V3000).');
  const counts = lines[countsIndex];
  if (counts.includes('V2000')) {
    const atoms = Number(counts.slice(0, 3));
    const bonds = Number(counts.slice(3, 6));
    if (!Number.isInteger(atoms) || !Number.isInteger(bonds) || atoms < 0 || bonds < 0) {
      throw new StructureError(`The molfile counts line is broken: "${counts.trim()}" must start with the atom and bond counts.`);
    }
    const available = lines.length - countsIndex - 1;
    if (atoms + bonds > available) {
      throw new StructureError(`The molfile counts line announces ${atoms} atoms and ${bonds} bonds, but the block has only ${available} more lines.`);
    }
    for (let i = 1; i <= atoms; i++) {
      const line = lines[countsIndex + i];
      const coords = [line.slice(0, 10), line.slice(10, 20), line.slice(20, 30)].map((c) => c.trim());
      if (!coords.every((c) => /^-?\d+(\.\d+)?$/.test(c))) {
        throw new StructureError(`The molfile's atom line ${i} does not start with three coordinates: "${line.trim().slice(0, 40)}".`);
      }
    }
  }
}

/** Parses one structure; throws StructureError with a message a chemist can act on. */
export function parseMolecule(text: string, format?: StructureFormat): Molecule {
  if (typeof text !== 'string' || !text.trim()) throw new StructureError('No structure given.');
  if (text.length > MAX_STRUCTURE_LENGTH) {
    throw new StructureError(`The structure text is ${text.length} characters long; at most ${MAX_STRUCTURE_LENGTH} are accepted.`);
  }
  const fmt = format ?? detectFormat(text);
  const input = fmt === 'smiles' ? text.trim() : text;
  if (fmt === 'smiles' && /\s/.test(input)) {
    throw new StructureError('A SMILES must not contain spaces or line breaks (give one structure; use a molfile for more).');
  }
  // Control characters are never part of a structure (OpenChemLib stops reading a SMILES at one).
  if (fmt === 'smiles' ? /[\u0000-\u001f\u007f]/.test(input) : /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.test(input)) {
    throw new StructureError(`The ${fmt === 'molfile' ? 'molfile' : 'SMILES'} contains control characters (binary data?); paste the structure as plain text.`);
  }
  checkStructureSize(input, fmt);
  if (fmt === 'smiles') checkSmilesBranches(input);
  if (fmt === 'molfile') checkMolfileCounts(input);
  const mol = tryParse(input, fmt);
  if (mol.getAllAtoms() === 0) throw new StructureError(`The ${fmt === 'molfile' ? 'molfile' : 'SMILES'} holds no atoms.`);
  checkValences(mol);
  checkIsotopes(mol);
  return mol;
}

/** OpenChemLib closes open branches silently ("CC(C(C" reads as pentane): refuse unbalanced ones. */
export function checkSmilesBranches(text: string): void {
  let depth = 0;
  const outside = text.replace(/\[[^\]]*\]/g, '');
  for (let i = 0; i < outside.length; i++) {
    if (outside[i] === '(') depth++;
    else if (outside[i] === ')' && --depth < 0) throw new StructureError('The SMILES could not be read: it closes a branch ")" that was never opened.');
  }
  if (depth > 0) throw new StructureError(`The SMILES could not be read: it leaves ${depth} branch${depth === 1 ? '' : 'es'} "(" open.`);
}

/** Mass numbers outside what any nuclide has are typing errors, not isotopes. */
function checkIsotopes(mol: Molecule): void {
  for (let a = 0; a < mol.getAllAtoms(); a++) {
    const mass = mol.getAtomMass(a);
    if (mass !== 0 && (mass < 1 || mass > 300)) throw new StructureError(`Atom ${a + 1} (${mol.getAtomLabel(a)}) has the mass number ${mass}, which no nuclide has.`);
  }
}

/** A registered structure is closed-shell: an unpaired electron is almost always a drawing error (a lone aromatic "c"). */
function checkRadicals(mol: Molecule): void {
  for (let a = 0; a < mol.getAllAtoms(); a++) {
    if (mol.getAtomRadical(a) !== 0) {
      throw new StructureError(`Atom ${a + 1} (${mol.getAtomLabel(a)}) has an unpaired electron (a radical, or an aromatic atom outside a ring); draw it with its hydrogens or bonds.`);
    }
  }
}

/** OpenChemLib reads e.g. a pentavalent carbon without complaint; refuse over-valent atoms. */
function checkValences(mol: Molecule): void {
  mol.ensureHelperArrays(Molecule.cHelperNeighbours);
  for (let a = 0; a < mol.getAllAtoms(); a++) {
    if (mol.getFreeValence(a) >= 0) continue;
    const charge = mol.getAtomCharge(a);
    const el = mol.getAtomLabel(a) + (charge ? `${Math.abs(charge) === 1 ? '' : Math.abs(charge)}${charge > 0 ? '+' : '-'}` : '');
    throw new StructureError(
      `Atom ${a + 1} (${el}) has ${mol.getOccupiedValence(a)} bonds but allows at most ${mol.getMaxValence(a)}: check the bonds, charges or hydrogens drawn on it.`,
    );
  }
}

// ---------------------------------------------------------------------------------------------
// Formulae

const ELEMENT_ORDER_CACHE = new Map<number, string>();

function symbol(atomicNo: number): string {
  let s = ELEMENT_ORDER_CACHE.get(atomicNo);
  if (!s) {
    const m = new Molecule(1, 0);
    m.addAtom(atomicNo);
    s = m.getAtomLabel(0);
    ELEMENT_ORDER_CACHE.set(atomicNo, s);
  }
  return s;
}

/** Element counts including implicit and explicit hydrogens. */
export function elementCounts(mol: Molecule): Map<string, number> {
  mol.ensureHelperArrays(Molecule.cHelperNeighbours);
  const counts = new Map<string, number>();
  const add = (el: string, n: number) => counts.set(el, (counts.get(el) ?? 0) + n);
  for (let a = 0; a < mol.getAllAtoms(); a++) {
    const no = mol.getAtomicNo(a);
    add(no === 1 ? 'H' : symbol(no), 1);
    if (no !== 1) {
      const h = mol.getImplicitHydrogens(a);
      if (h > 0) add('H', h);
    }
  }
  return counts;
}

/** Hill order: C, then H, then the rest alphabetically; without carbon, all alphabetically. */
export function hillFormula(counts: Map<string, number>): string {
  const els = [...counts.keys()].filter((e) => (counts.get(e) ?? 0) > 0);
  const hasC = counts.has('C');
  els.sort((a, b) => {
    if (hasC) {
      const rank = (e: string) => (e === 'C' ? 0 : e === 'H' ? 1 : 2);
      if (rank(a) !== rank(b)) return rank(a) - rank(b);
    }
    return a < b ? -1 : a > b ? 1 : 0;
  });
  return els.map((e) => e + (counts.get(e) === 1 ? '' : String(counts.get(e)))).join('');
}

/** Net charge written after a formula as is common practice (and RDKit does): "+", "+4", "-", "-2". */
export function chargeSuffix(charge: number): string {
  if (charge === 0) return '';
  const sign = charge > 0 ? '+' : '-';
  return Math.abs(charge) === 1 ? sign : `${sign}${Math.abs(charge)}`;
}

function formulaOf(mol: Molecule): { formula: string; mw: number; mono: number } {
  const f = mol.getMolecularFormula();
  let charge = 0;
  for (let a = 0; a < mol.getAllAtoms(); a++) charge += mol.getAtomCharge(a);
  return { formula: hillFormula(elementCounts(mol)) + chargeSuffix(charge), mw: f.relativeWeight, mono: f.absoluteWeight };
}

// ---------------------------------------------------------------------------------------------
// Salts and solvates

interface KnownComponent {
  name: string;
  /** Short formula for the batch formula line (HCl, H2SO4 …). */
  short: string;
  smiles: string[];
  /** Counter-ion of a base ("acid salt") or of an acid ("metal salt"), or a solvent. */
  kind: 'acid' | 'base' | 'solvent';
}

const KNOWN: KnownComponent[] = [
  { name: 'hydrochloride', short: 'HCl', smiles: ['Cl', '[Cl-]'], kind: 'acid' },
  { name: 'hydrobromide', short: 'HBr', smiles: ['Br', '[Br-]'], kind: 'acid' },
  { name: 'sulfate', short: 'H2SO4', smiles: ['OS(=O)(=O)O', '[O-]S(=O)(=O)O', '[O-]S(=O)(=O)[O-]'], kind: 'acid' },
  { name: 'mesylate', short: 'CH3SO3H', smiles: ['CS(=O)(=O)O', 'CS(=O)(=O)[O-]'], kind: 'acid' },
  { name: 'tosylate', short: 'C7H8O3S', smiles: ['Cc1ccc(cc1)S(=O)(=O)O', 'Cc1ccc(cc1)S(=O)(=O)[O-]'], kind: 'acid' },
  { name: 'maleate', short: 'C4H4O4', smiles: ['OC(=O)/C=C\\C(=O)O', 'OC(=O)/C=C\\C(=O)[O-]', '[O-]C(=O)/C=C\\C(=O)[O-]'], kind: 'acid' },
  { name: 'fumarate', short: 'C4H4O4', smiles: ['OC(=O)/C=C/C(=O)O', 'OC(=O)/C=C/C(=O)[O-]', '[O-]C(=O)/C=C/C(=O)[O-]'], kind: 'acid' },
  { name: 'citrate', short: 'C6H8O7', smiles: ['OC(=O)CC(O)(CC(=O)O)C(=O)O', 'OC(=O)CC(O)(CC(=O)O)C(=O)[O-]', 'OC(=O)CC(O)(CC(=O)[O-])C(=O)[O-]', '[O-]C(=O)CC(O)(CC(=O)[O-])C(=O)[O-]'], kind: 'acid' },
  { name: 'tartrate', short: 'C4H6O6', smiles: ['OC(C(O)C(=O)O)C(=O)O', 'O[C@H]([C@@H](O)C(=O)O)C(=O)O', 'O[C@@H]([C@H](O)C(=O)O)C(=O)O', 'OC(C(O)C(=O)[O-])C(=O)O', 'OC(C(O)C(=O)[O-])C(=O)[O-]'], kind: 'acid' },
  { name: 'trifluoroacetate', short: 'C2HF3O2', smiles: ['OC(=O)C(F)(F)F', '[O-]C(=O)C(F)(F)F'], kind: 'acid' },
  { name: 'sodium', short: 'Na', smiles: ['[Na+]', '[Na]'], kind: 'base' },
  { name: 'potassium', short: 'K', smiles: ['[K+]', '[K]'], kind: 'base' },
  { name: 'water', short: 'H2O', smiles: ['O', '[OH2]'], kind: 'solvent' },
  { name: 'methanol', short: 'CH4O', smiles: ['CO'], kind: 'solvent' },
  { name: 'ethanol', short: 'C2H6O', smiles: ['CCO'], kind: 'solvent' },
];

let knownByIdCode: Map<string, KnownComponent> | undefined;

function knownComponents(): Map<string, KnownComponent> {
  if (!knownByIdCode) {
    knownByIdCode = new Map();
    for (const k of KNOWN) {
      for (const s of k.smiles) {
        const m = Molecule.fromSmiles(s);
        knownByIdCode.set(m.getIDCode(), k);
        const n = m.getCompactCopy();
        neutralise(n);
        knownByIdCode.set(n.getIDCode(), k);
      }
    }
  }
  return knownByIdCode;
}

const MULTIPLIER: Record<number, string> = { 0.5: 'hemi', 1: '', 1.5: 'sesqui', 2: 'di', 3: 'tri', 4: 'tetra' };

function countLabel(name: string, count: number): string {
  const prefix = MULTIPLIER[count];
  if (prefix !== undefined) return `${prefix}${name}`;
  return `${name} (${count}×)`;
}

function describeSalt(components: SaltComponent[], kinds: Map<string, KnownComponent['kind']>): string {
  if (!components.length) return 'parent (no salt or solvate)';
  const parts: string[] = [];
  for (const c of components) {
    const kind = c.name ? kinds.get(c.name) : undefined;
    if (!c.name) parts.push(`unnamed component ${c.formula}${c.count !== 1 ? ` (${c.count}×)` : ''}`);
    else if (kind === 'base') parts.push(`${countLabel(c.name, c.count)} salt`);
    else if (c.name === 'water') parts.push(countLabel('hydrate', c.count).replace(/^dihydrate$/, 'dihydrate'));
    else if (kind === 'solvent') parts.push(`${countLabel(c.name, c.count)} solvate`);
    else parts.push(countLabel(c.name, c.count));
  }
  return parts.join(', ');
}

function formatCount(n: number): string {
  return Number.isInteger(n) ? (n === 1 ? '' : `${n} `) : `${n} `;
}

// ---------------------------------------------------------------------------------------------
// Neutralisation and stereo

/**
 * Removes charges a proton can explain (R-NH3+ → R-NH2, R-COO- → R-COOH); keeps quaternary N+ and
 * charge-separated groups (nitro, N-oxide, azide: the anion is bonded to a cation). An anion is
 * protonated only while the fragment is still negative, so a betaine or a quaternary ammonium
 * carboxylate stays a zwitterion instead of becoming a cation.
 */
function chargeSignature(mol: Molecule): string {
  let sig = '';
  for (let a = 0; a < mol.getAllAtoms(); a++) if (mol.getAtomCharge(a)) sig += `${a}:${mol.getAtomCharge(a)};`;
  return sig;
}

function neutralise(mol: Molecule): void {
  mol.ensureHelperArrays(Molecule.cHelperNeighbours);
  const bondedToCharge = (a: number, sign: number) => {
    for (let i = 0; i < mol.getAllConnAtoms(a); i++) if (Math.sign(mol.getAtomCharge(mol.getConnAtom(a, i))) === sign) return true;
    return false;
  };
  const cations: number[] = [];
  const anions: number[] = [];
  for (let a = 0; a < mol.getAllAtoms(); a++) {
    const charge = mol.getAtomCharge(a);
    const no = mol.getAtomicNo(a);
    if (charge === 1 && (no === 7 || no === 15) && mol.getImplicitHydrogens(a) > 0 && !bondedToCharge(a, -1)) cations.push(a);
    else if (charge === -1 && (no === 8 || no === 16 || no === 7) && !bondedToCharge(a, 1)) anions.push(a);
  }
  for (const a of cations) mol.setAtomCharge(a, 0);
  let q = netCharge(mol);
  for (const a of anions) {
    if (q >= 0) break;
    mol.setAtomCharge(a, 0);
    q++;
  }
  mol.ensureHelperArrays(Molecule.cHelperNeighbours);
}

function stereoOf(mol: Molecule): { centres: number; status: StereoStatus } {
  mol.ensureHelperArrays(Molecule.cHelperParities);
  let centres = 0;
  let undefinedCount = 0;
  for (let a = 0; a < mol.getAtoms(); a++) {
    if (!mol.isAtomStereoCenter(a)) continue;
    centres++;
    const parity = mol.getAtomParity(a);
    if (parity === Molecule.cAtomParityUnknown || parity === Molecule.cAtomParityNone) undefinedCount++;
  }
  for (let b = 0; b < mol.getBonds(); b++) {
    const parity = mol.getBondParity(b);
    if (parity === Molecule.cBondParityNone) continue;
    if (mol.getBondOrder(b) !== 2) continue;
    // OCL gives ring double bonds an E/Z parity too, but in rings of up to 7 atoms the geometry is
    // fixed by the ring (benzodiazepine C=N, morphine C7=C8): not a stereo element.
    if (mol.isSmallRingBond(b)) continue;
    centres++;
    if (parity === Molecule.cBondParityUnknown) undefinedCount++;
  }
  const status: StereoStatus = centres === 0 ? 'achiral' : undefinedCount === 0 ? 'defined' : undefinedCount === centres ? 'undefined' : 'partial';
  return { centres, status };
}

// ---------------------------------------------------------------------------------------------
// The whole intake

function isOrganic(mol: Molecule): boolean {
  for (let a = 0; a < mol.getAllAtoms(); a++) if (mol.getAtomicNo(a) === 6) return true;
  return false;
}

/** Parses a structure and derives everything registration stores. */
export interface AnalyseOptions {
  /**
   * Compute the tautomer-insensitive ID code (default true). It costs about 8 ms a molecule,
   * more than everything else together, so bulk imports leave it empty and a background pass
   * fills it in (tautomerIdCodeOf).
   */
  tautomer?: boolean;
}

/** The tautomer-insensitive ID code of a stored ID code (the background pass after an import). */
export function tautomerIdCodeOf(idCode: string): string {
  return CanonizerUtil.getIDCode(Molecule.fromIDCode(idCode), CanonizerUtil.NOSTEREO_TAUTOMER);
}

export function analyseStructure(text: string, format?: StructureFormat, options: AnalyseOptions = {}): ParsedStructure {
  const mol = parseMolecule(text, format);
  checkRadicals(mol);
  let charged = false;
  for (let a = 0; a < mol.getAllAtoms() && !charged; a++) charged = mol.getAtomCharge(a) !== 0;
  if (charged) {
    try {
      mol.canonizeCharge(true);
    } catch {
      // charges that cannot be balanced stay as drawn
    }
  }
  const fragments = mol.getFragments();
  const byIdCode = new Map<string, { mol: Molecule; count: number; heavy: number; organic: boolean }>();
  for (const f of fragments) {
    f.ensureHelperArrays(Molecule.cHelperNeighbours);
    // One fragment is the parent whatever it is: its ID code is computed once, below.
    const id = fragments.length === 1 ? '(single fragment)' : f.getIDCode();
    const entry = byIdCode.get(id);
    if (entry) entry.count++;
    else byIdCode.set(id, { mol: f, count: 1, heavy: f.getAtoms(), organic: isOrganic(f) });
  }
  const known = knownComponents();
  const candidates = [...byIdCode.entries()].filter(([id, e]) => e.organic && !known.has(id));
  const pool = candidates.length ? candidates : [...byIdCode.entries()].filter(([, e]) => e.organic);
  if (!pool.length) throw new StructureError('The structure has no organic fragment (no carbon atom) to register as the parent.');
  pool.sort((a, b) => b[1].heavy - a[1].heavy || b[1].mol.getAllAtoms() - a[1].mol.getAllAtoms() || (a[0] < b[0] ? -1 : 1));
  const [parentId, parentEntry] = pool[0];
  const parent = parentEntry.mol.getCompactCopy();
  const chargesBefore = chargeSignature(parent);
  neutralise(parent);
  // A molfile given as one neutral fragment is kept as drawn (its coordinates and layout).
  const keepMolfile = (format ?? detectFormat(text)) === 'molfile' && fragments.length === 1 && !charged && chargeSignature(parent) === chargesBefore;
  parent.ensureHelperArrays(Molecule.cHelperParities);
  const heavyAtoms = parent.getAtoms();
  if (heavyAtoms > MAX_HEAVY_ATOMS) {
    throw new StructureError(`The parent has ${heavyAtoms} heavy atoms; the registry takes small molecules of at most ${MAX_HEAVY_ATOMS}.`);
  }

  const parentFormula = formulaOf(parent);
  const props = new MoleculeProperties(parent);
  const stereo = stereoOf(parent);
  const idCode = parent.getIDCode();
  // Without stereocentres or stereo double bonds the ID code carries no stereo information and the
  // stereo-free code is the same string (checked on the NCI set, test/domain/chem.test.ts): skip
  // the second canonicalisation, which costs as much as the first.
  const noStereo = stereo.centres === 0 ? idCode : CanonizerUtil.getIDCode(parent, CanonizerUtil.NOSTEREO);
  const tautomer = options.tautomer === false ? '' : CanonizerUtil.getIDCode(parent, CanonizerUtil.NOSTEREO_TAUTOMER);

  const kinds = new Map<string, KnownComponent['kind']>();
  const components: SaltComponent[] = [];
  const shortParts: string[] = [];
  let batchWeight = parentFormula.mw;
  for (const [id, entry] of byIdCode) {
    if (id === parentId) continue;
    const k = known.get(id);
    const comp = entry.mol.getCompactCopy();
    neutralise(comp);
    const f = formulaOf(comp);
    const count = Math.round((entry.count / parentEntry.count) * 1000) / 1000;
    // A halide still charged after neutralisation balances a permanent cation (quaternary
    // ammonium): it is a chloride, not a hydrochloride (no HCl in the batch).
    const anion = k?.kind === 'acid' && netCharge(comp) < 0;
    const name = k ? (anion ? k.name.replace(/^hydro/, '') : k.name) : null;
    if (k) kinds.set(name!, k.kind);
    components.push({ name, smiles: entry.mol.toIsomericSmiles(), formula: f.formula, mw: f.mw, count });
    shortParts.push(`${formatCount(count)}${k && !anion ? k.short : f.formula}`);
    batchWeight += count * f.mw;
  }
  // The batch is what was drawn: for a charge-balanced drawing its weight is the drawn mass per
  // parent. Adding neutralised parts instead would count a proton twice in a metal salt (sodium
  // benzoate is C7H5NaO2, 144.10, not benzoic acid + Na, 145.11) and lose one in a salt of a
  // non-protonatable anion (R3NH+ BF4-). Unbalanced drawings keep the sum of neutralised parts.
  if (netCharge(mol) === 0) {
    let drawn = 0;
    for (const entry of byIdCode.values()) drawn += entry.count * entry.mol.getMolecularFormula().relativeWeight;
    batchWeight = drawn / parentEntry.count;
  }
  components.sort((a, b) => (a.name ?? '~').localeCompare(b.name ?? '~'));
  return {
    idCode,
    noStereoIdCode: noStereo,
    tautomerIdCode: tautomer,
    smiles: parent.toIsomericSmiles(),
    molfile: keepMolfile ? text : parent.toMolfile(),
    parentCount: parentEntry.count,
    properties: {
      formula: parentFormula.formula,
      mw: round(parentFormula.mw, 4),
      monoisotopicMass: round(parentFormula.mono, 5),
      clogp: round(props.logP, 3),
      tpsa: round(props.polarSurfaceArea, 2),
      hbd: props.donorCount,
      hba: props.acceptorCount,
      rotatableBonds: props.rotatableBondCount,
      heavyAtoms,
      stereoCentres: stereo.centres,
      stereoStatus: stereo.status,
    },
    salt: {
      label: describeSalt(components, kinds),
      components,
      batchFormula: [parentFormula.formula, ...shortParts].join(' · '),
      batchFormulaWeight: round(batchWeight, 4),
    },
  };
}

function netCharge(mol: Molecule): number {
  let q = 0;
  for (let a = 0; a < mol.getAllAtoms(); a++) q += mol.getAtomCharge(a);
  return q;
}

function round(x: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

// ---------------------------------------------------------------------------------------------
// Depiction

/** SVG of a stored ID code (2D coordinates are generated when the code has none). */
export function depictIdCode(idCode: string, width = 300, height = 220, highlight: readonly number[] = []): string {
  const mol = Molecule.fromIDCode(idCode);
  // Selected atoms (a substructure match) are drawn with the bonds between them highlighted.
  for (const atom of highlight) if (atom < mol.getAllAtoms()) mol.setAtomSelection(atom, true);
  return mol.toSVG(width, height, undefined, { autoCrop: true, autoCropMargin: 10, suppressChiralText: false } as never);
}

export function idCodeToSmiles(idCode: string): string {
  return Molecule.fromIDCode(idCode).toIsomericSmiles();
}

// ---------------------------------------------------------------------------------------------
// SD files

export interface SdfRecord {
  /** 1-based position in the file. */
  index: number;
  molfile: string;
  fields: Record<string, string>;
}

/** Splits an SD file into records with their data fields (no chemistry: parsing comes later). */
export function splitSdf(text: string): SdfRecord[] {
  const records: SdfRecord[] = [];
  const blocks = text.replace(/\r\n?/g, '\n').split(/^\$\$\$\$[^\n]*$/m);
  let index = 0;
  for (const raw of blocks) {
    const block = raw.replace(/^\n/, '');
    if (!block.trim()) continue;
    index++;
    const end = block.search(/^M {2}END\s*$/m);
    // Without "M  END" (a truncated or corrupt connection table) the data items still start at the
    // first "> <NAME>" line, so the record keeps its fields and the molfile fails later, on its own.
    const firstField = block.search(/^>[^\n]*<[^>\n]+>/m);
    const molfileEnd = end >= 0 ? (block.indexOf('\n', end) >= 0 ? block.indexOf('\n', end) : block.length) : firstField >= 0 ? firstField : block.length;
    const molfile = block.slice(0, molfileEnd);
    const rest = block.slice(molfileEnd);
    // A data item is a header line "> <NAME>" and value lines up to a blank line (CTfile spec); the
    // value may span several lines. A header line without the blank line before it also ends a value.
    const fields: Record<string, string> = {};
    const lines = rest.split('\n');
    const header = /^>.*?<([^>]+)>/;
    for (let i = 0; i < lines.length; ) {
      const m = header.exec(lines[i++]);
      if (!m) continue;
      const value: string[] = [];
      while (i < lines.length && lines[i].trim() !== '' && !header.test(lines[i])) value.push(lines[i++]);
      fields[m[1].trim()] = value.join('\n').trim();
    }
    records.push({ index, molfile, fields });
  }
  return records;
}
