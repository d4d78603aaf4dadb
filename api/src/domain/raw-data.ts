// Raw concentration–response data of one assay run, in our two upload formats:
//  (a) a long CSV, one measurement per line;
//  (b) a plate: a matrix CSV of responses laid out like the plate plus a plate-map CSV saying
//      what is in each used well.
// Pure functions: they parse and validate, naming the row, column or well of every problem, and
// leave resolving the sample identifiers against the registry to the caller.

import { parse as parseCsv, type Info } from 'csv-parse/sync';

export type ControlKind = 'basal' | 'max' | 'blank';

export interface RawPoint {
  /** Batch or registry number as written (trimmed); null for a control. */
  sample: string | null;
  /** Set when the sample cell is one of the control keywords BASAL, MAX, BLANK. */
  control: ControlKind | null;
  /** mol/L; null only for a control written without a concentration. */
  concentrationM: number | null;
  response: number;
  replicate: number | null;
  /** Normalised well name, "A1".."P24". */
  well: string | null;
  /** Free text; "antagonist|modulator <batch> <conc> <unit>" in mechanism runs (run-conditions.ts). */
  condition: string | null;
  /** 1-based line of the long CSV, or of the plate map. */
  line: number | null;
}

/** where: "file", "header", "row 5", "row 5, column unit", "well C7", "matrix", "map header", … */
export interface RawDataIssue {
  where: string;
  message: string;
}

export interface RawDataParse {
  /** The rows without errors. */
  points: RawPoint[];
  errors: RawDataIssue[];
  /** Lines (long CSV, or plate map) that had errors, ascending: dropping them leaves `points`. */
  badLines: number[];
}

// Powers of ten, so toMolar scales in decimal (10 nM is exactly 1e-8, not 1.0000000000000001e-8).
const UNIT_EXPONENTS: Readonly<Record<string, number>> = {
  M: 0,
  mM: -3,
  'µM': -6, // U+00B5 micro sign
  uM: -6,
  'μM': -6, // U+03BC Greek small letter mu
  nM: -9,
  pM: -12,
};

/** Accepted concentration units (exact spellings, case-sensitive) → factor to mol/L. */
export const CONCENTRATION_UNITS: Record<string, number> = Object.freeze(
  Object.fromEntries(Object.entries(UNIT_EXPONENTS).map(([unit, exponent]) => [unit, Number(`1e${exponent}`)])),
);

const ACCEPTED_UNITS = Object.keys(UNIT_EXPONENTS).join(', ');

/** value in `unit` → mol/L; null for an unknown unit or a non-finite value. */
export function toMolar(value: number, unit: string): number | null {
  if (!Object.hasOwn(UNIT_EXPONENTS, unit) || !Number.isFinite(value)) return null;
  const exponent = UNIT_EXPONENTS[unit];
  if (exponent === 0) return value;
  const [mantissa, valueExponent = '0'] = String(value).split('e');
  return Number(`${mantissa}e${Number(valueExponent) + exponent}`);
}

const ROW_LETTERS = 'ABCDEFGHIJKLMNOP';

/** 0-based row and column → "A1". */
export function wellName(row: number, col: number): string {
  if (!Number.isInteger(row) || row < 0 || row >= ROW_LETTERS.length || !Number.isInteger(col) || col < 0 || col >= 24) {
    throw new RangeError(`no well at row ${row}, column ${col} (0-based; at most 16 × 24)`);
  }
  return `${ROW_LETTERS[row]}${col + 1}`;
}

/** "A1", "a01", " P24 " → 0-based row and column; null if not a well of a plate of up to 384 wells. */
export function parseWell(name: string): { row: number; col: number } | null {
  const match = /^([A-Pa-p])0*([1-9]\d?)$/.exec(name.trim());
  if (!match) return null;
  const col = Number(match[2]) - 1;
  if (col >= 24) return null;
  return { row: ROW_LETTERS.indexOf(match[1].toUpperCase()), col };
}

const CONTROL_KEYWORDS: Readonly<Record<string, ControlKind>> = { BASAL: 'basal', MAX: 'max', BLANK: 'blank' };

// ---------------------------------------------------------------------------------------------
// Reading CSV text

type Separator = ',' | ';' | '\t';

interface CsvRow {
  cells: string[];
  /** 1-based line on which the record starts. */
  line: number;
}

interface CsvText {
  rows: CsvRow[];
  separator: Separator;
}

/** Strips a BOM, unifies line ends, detects the separator from the first non-blank line and splits
 * into trimmed cells. Lines that are blank or hold only separators are dropped. */
function readCsv(text: string): CsvText | { error: string } {
  const normalised = text.replace(/^\uFEFF/, '').replace(/\r\n?/g, '\n');
  const firstLine = normalised.split('\n').find((line) => line.trim() !== '') ?? '';
  const separator = detectSeparator(firstLine);
  // With `info: true` each record comes as { record, info } (the typings only know string[][]).
  let records: { record: string[]; info: Info }[];
  try {
    records = parseCsv(normalised, {
      delimiter: separator,
      info: true,
      relax_column_count: true,
      relax_quotes: true,
      skip_empty_lines: true,
    }) as unknown as { record: string[]; info: Info }[];
  } catch (err) {
    const line = (err as { lines?: unknown }).lines;
    const reason = err instanceof Error ? err.message : String(err);
    return { error: typeof line === 'number' ? `cannot read the CSV near line ${line}: ${reason}` : `cannot read the CSV: ${reason}` };
  }
  const rows: CsvRow[] = [];
  for (const { record, info } of records) {
    const cells = record.map((cell) => cell.trim());
    if (cells.every((cell) => cell === '')) continue;
    // info.lines is the line the record ends on; quoted cells may span lines.
    const spanned = record.reduce((n, cell) => n + (cell.match(/\n/g)?.length ?? 0), 0);
    rows.push({ cells, line: info.lines - spanned });
  }
  return { rows, separator };
}

function detectSeparator(headerLine: string): Separator {
  let best: Separator = ',';
  let bestCount = count(headerLine, ',');
  for (const candidate of [';', '\t'] as const) {
    const n = count(headerLine, candidate);
    if (n > bestCount) {
      best = candidate;
      bestCount = n;
    }
  }
  return best;
}

function count(text: string, char: string): number {
  return text.split(char).length - 1;
}

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A decimal number with optional sign and exponent; with decimalComma, "1,5" is 1.5. Returns
 * null for text that is not a number (the result may be ±Infinity for huge exponents). */
function parseNumber(text: string, decimalComma: boolean): number | null {
  let t = text.trim();
  if (decimalComma && !t.includes('.') && count(t, ',') === 1) t = t.replace(',', '.');
  return NUMBER.test(t) ? Number(t) : null;
}

// ---------------------------------------------------------------------------------------------
// Header and per-row validation shared by the long CSV and the plate map

interface TableSpec {
  required: readonly string[];
  optional: readonly string[];
}

const LONG_SPEC: TableSpec = {
  required: ['sample', 'concentration', 'unit', 'response'],
  optional: ['replicate', 'well', 'condition'],
};

const MAP_SPEC: TableSpec = {
  required: ['well', 'sample', 'concentration', 'unit'],
  optional: ['replicate', 'condition'],
};

type ColumnIndex = Map<string, number>;

/** Maps column names to positions; null (with issues) when the header is unusable. */
function readHeader(cells: string[], spec: TableSpec, where: { file: string; header: string }, errors: RawDataIssue[]): ColumnIndex | null {
  const known = [...spec.required, ...spec.optional];
  const names = cells.map((cell) => cell.toLowerCase());
  if (!names.some((name) => known.includes(name))) {
    errors.push({ where: where.file, message: `no header row: the first line must name the columns ${spec.required.join(', ')} (optional: ${spec.optional.join(', ')})` });
    return null;
  }
  const index: ColumnIndex = new Map();
  const unknown: string[] = [];
  const repeated: string[] = [];
  names.forEach((name, i) => {
    if (name === '') return; // an unnamed column is accepted as long as it stays empty
    if (!known.includes(name)) unknown.push(cells[i]);
    else if (index.has(name)) repeated.push(name);
    else index.set(name, i);
  });
  const missing = spec.required.filter((name) => !index.has(name));
  let usable = true;
  if (missing.length) {
    errors.push({ where: where.header, message: `missing required column${missing.length > 1 ? 's' : ''}: ${missing.join(', ')}` });
    usable = false;
  }
  if (unknown.length) {
    errors.push({ where: where.header, message: `unknown column${unknown.length > 1 ? 's' : ''}: ${unknown.join(', ')}; allowed: ${known.join(', ')}` });
    usable = false;
  }
  if (repeated.length) {
    errors.push({ where: where.header, message: `column${repeated.length > 1 ? 's' : ''} given twice: ${repeated.join(', ')}` });
    usable = false;
  }
  return usable ? index : null;
}

/** Fields common to a long-CSV line and a plate-map line. */
interface SampleFields {
  sample: string | null;
  control: ControlKind | null;
  concentrationM: number | null;
  replicate: number | null;
  condition: string | null;
}

interface RowContext {
  cell(column: string): string;
  /** where-text for a problem in `column` of this row */
  at(column: string): string;
  decimalComma: boolean;
  errors: RawDataIssue[];
}

/** Validates sample, concentration, unit, replicate and condition; null if any of them is wrong. */
function readSampleFields(row: RowContext): SampleFields | null {
  const before = row.errors.length;
  const fail = (column: string, message: string) => row.errors.push({ where: row.at(column), message });

  const sampleText = row.cell('sample');
  const control = CONTROL_KEYWORDS[sampleText.toUpperCase()] ?? null;
  const isTestSample = sampleText !== '' && !control;
  if (sampleText === '') fail('sample', 'sample is empty: give a batch or registry number, or BASAL, MAX or BLANK for a control');

  const concentrationText = row.cell('concentration');
  let concentration: number | null = null;
  if (concentrationText === '') {
    if (isTestSample) fail('concentration', 'concentration is required for a test sample (only BASAL, MAX and BLANK may leave it empty)');
  } else {
    const value = parseNumber(concentrationText, row.decimalComma);
    if (value === null || !Number.isFinite(value)) fail('concentration', `concentration "${concentrationText}" is not a number`);
    else if (value < 0) fail('concentration', `concentration ${concentrationText} is negative`);
    else if (value === 0 && !control) fail('concentration', 'concentration 0 is allowed only for controls (BASAL, MAX, BLANK)');
    else concentration = value;
  }

  const unit = row.cell('unit');
  if (unit !== '' && !Object.hasOwn(UNIT_EXPONENTS, unit)) fail('unit', `unit "${unit}" is not accepted; accepted: ${ACCEPTED_UNITS}`);
  else if (unit === '' && concentration !== null && concentration !== 0) fail('unit', `unit is required with a concentration; accepted: ${ACCEPTED_UNITS}`);

  const replicateText = row.cell('replicate');
  let replicate: number | null = null;
  if (replicateText !== '') {
    const value = parseNumber(replicateText, row.decimalComma);
    if (value === null || !Number.isInteger(value) || value < 1) fail('replicate', `replicate "${replicateText}" is not a positive whole number`);
    else replicate = value;
  }

  if (row.errors.length > before) return null;
  return {
    sample: control ? null : sampleText,
    control,
    concentrationM: concentration === null || concentration === 0 ? concentration : toMolar(concentration, unit),
    replicate,
    condition: row.cell('condition') || null,
  };
}

/** Checks a data line against the header: at least as many cells, nothing in unnamed columns
 * or beyond the last named one. */
function checkRowShape(cells: string[], header: string[], where: string, errors: RawDataIssue[]): boolean {
  if (cells.length < header.length) {
    errors.push({ where, message: `has ${cells.length} values but the header has ${header.length} columns` });
    return false;
  }
  const stray = cells.findIndex((cell, i) => cell !== '' && (header[i] ?? '') === '');
  if (stray >= 0) {
    errors.push({ where, message: `has a value ("${cells[stray]}") in column ${stray + 1}, which has no name in the header` });
    return false;
  }
  return true;
}

/** Header cells without trailing empty ones (a trailing separator is common in exported files). */
function namedHeader(cells: string[]): string[] {
  const named = [...cells];
  while (named.length > 0 && named[named.length - 1] === '') named.pop();
  return named;
}

function rowContext(cells: string[], index: ColumnIndex, decimalComma: boolean, at: (column: string) => string, errors: RawDataIssue[]): RowContext {
  return {
    cell: (column) => {
      const i = index.get(column);
      return i === undefined ? '' : (cells[i] ?? '');
    },
    at,
    decimalComma,
    errors,
  };
}

function finish(points: RawPoint[], errors: RawDataIssue[], badLines: Set<number>): RawDataParse {
  return { points, errors, badLines: [...badLines].sort((a, b) => a - b) };
}

// ---------------------------------------------------------------------------------------------
// (a) Long CSV

/** Parses the long format: one line per measurement, see LONG_TEMPLATE_CSV. */
export function parseLongCsv(text: string): RawDataParse {
  const errors: RawDataIssue[] = [];
  const badLines = new Set<number>();
  const points: RawPoint[] = [];

  const csv = readCsv(text);
  if ('error' in csv) return finish(points, [{ where: 'file', message: csv.error }], badLines);
  const [header, ...rows] = csv.rows;
  if (!header) return finish(points, [{ where: 'file', message: 'the file is empty' }], badLines);
  const columns = namedHeader(header.cells);
  const index = readHeader(columns, LONG_SPEC, { file: 'file', header: 'header' }, errors);
  if (!index) return finish(points, errors, badLines);
  if (rows.length === 0) return finish(points, [{ where: 'file', message: 'the file has a header but no data rows' }], badLines);

  const decimalComma = csv.separator === ';';
  const wellLines = new Map<string, number>();
  for (const { cells, line } of rows) {
    const before = errors.length;
    const at = (column: string) => `row ${line}, column ${column}`;
    if (!checkRowShape(cells, columns, `row ${line}`, errors)) {
      badLines.add(line);
      continue;
    }
    const row = rowContext(cells, index, decimalComma, at, errors);
    const fields = readSampleFields(row);

    const responseText = row.cell('response');
    const response = parseNumber(responseText, decimalComma);
    if (responseText === '') errors.push({ where: at('response'), message: 'response is empty' });
    else if (response === null || !Number.isFinite(response)) errors.push({ where: at('response'), message: `response "${responseText}" is not a finite number` });

    const wellText = row.cell('well');
    let well: string | null = null;
    if (wellText !== '') {
      const position = parseWell(wellText);
      if (!position) {
        errors.push({ where: at('well'), message: `"${wellText}" is not a well name (A1 to P24)` });
      } else {
        well = wellName(position.row, position.col);
        const first = wellLines.get(well);
        if (first !== undefined) errors.push({ where: at('well'), message: `well ${well} appears twice: rows ${first} and ${line}` });
        else wellLines.set(well, line);
      }
    }

    if (errors.length > before || !fields || response === null) {
      badLines.add(line);
      continue;
    }
    points.push({ ...fields, response, well, line });
  }
  return finish(points, errors, badLines);
}

// ---------------------------------------------------------------------------------------------
// (b) Plate: matrix + plate map

const PLATE_SHAPES = [
  { size: 96, rows: 8, cols: 12 },
  { size: 384, rows: 16, cols: 24 },
] as const;

type Matrix = { size: 96 | 384; cells: (string | undefined)[][]; decimalComma: boolean };

/** Reads the response matrix; `matrix` is null when its shape is wrong. */
function readMatrix(text: string, errors: RawDataIssue[]): { matrix: Matrix | null; guessedSize: 96 | 384 } {
  const csv = readCsv(text);
  if ('error' in csv) {
    errors.push({ where: 'matrix', message: csv.error });
    return { matrix: null, guessedSize: 96 };
  }
  const [header, ...rows] = csv.rows;
  if (!header) {
    errors.push({ where: 'matrix', message: 'the matrix file is empty' });
    return { matrix: null, guessedSize: 96 };
  }
  const headerCells = namedHeader(header.cells);
  const cols = headerCells.length - 1;
  const shape = PLATE_SHAPES.find((s) => s.rows === rows.length && s.cols === cols);
  if (!shape) {
    errors.push({
      where: 'matrix',
      message: `wrong plate size: found ${rows.length} rows × ${cols} columns; expected 8 × 12 (96-well) or 16 × 24 (384-well)`,
    });
    return { matrix: null, guessedSize: rows.length > 8 || cols > 12 ? 384 : 96 };
  }
  const before = errors.length;
  const numbers = headerCells.slice(1);
  if (numbers.some((cell, i) => cell !== String(i + 1))) {
    errors.push({
      where: 'matrix',
      message: `the first line must be an empty corner cell then the column numbers 1 to ${cols}; found "${numbers.join(',')}"`,
    });
  }
  const letters = ROW_LETTERS.slice(0, shape.rows);
  rows.forEach(({ cells, line }, r) => {
    if (cells[0].toUpperCase() !== letters[r]) {
      errors.push({
        where: 'matrix',
        message: `line ${line} starts with "${cells[0]}"; expected row ${letters[r]} (rows A to ${letters[shape.rows - 1]} in order)`,
      });
    } else if (cells.length < cols + 1 || cells.slice(cols + 1).some((cell) => cell !== '')) {
      const values = cells.length < cols + 1 ? cells.length - 1 : namedHeader(cells).length - 1;
      errors.push({ where: 'matrix', message: `line ${line} (row ${letters[r]}) has ${values} values; expected ${cols}` });
    }
  });
  if (errors.length > before) return { matrix: null, guessedSize: shape.size };
  return {
    matrix: { size: shape.size, cells: rows.map(({ cells }) => cells.slice(1, cols + 1).map((cell) => cell || undefined)), decimalComma: csv.separator === ';' },
    guessedSize: shape.size,
  };
}

/** Numeric responses by well; non-numeric cells become issues at "well C7". */
function matrixResponses(matrix: Matrix, errors: RawDataIssue[]): Map<string, number | 'empty' | 'invalid'> {
  const responses = new Map<string, number | 'empty' | 'invalid'>();
  matrix.cells.forEach((row, r) =>
    row.forEach((cell, c) => {
      const well = wellName(r, c);
      if (cell === undefined) {
        responses.set(well, 'empty');
        return;
      }
      const value = parseNumber(cell, matrix.decimalComma);
      if (value === null || !Number.isFinite(value)) {
        errors.push({ where: `well ${well}`, message: `response "${cell}" is not a finite number` });
        responses.set(well, 'invalid');
      } else {
        responses.set(well, value);
      }
    }),
  );
  return responses;
}

/** Parses a plate: the response matrix (see PLATE_MATRIX_TEMPLATE_CSV) and the plate map saying
 * what is in each used well (see PLATE_MAP_TEMPLATE_CSV). Unmapped wells are ignored. */
export function parsePlate(matrixText: string, mapText: string): RawDataParse & { plateSize: 96 | 384 } {
  const errors: RawDataIssue[] = [];
  const badLines = new Set<number>();
  const points: RawPoint[] = [];

  const { matrix, guessedSize } = readMatrix(matrixText, errors);
  const plateSize = matrix?.size ?? guessedSize;
  const responses = matrix ? matrixResponses(matrix, errors) : null;
  const result = (): RawDataParse & { plateSize: 96 | 384 } => ({ ...finish(points, errors, badLines), plateSize });

  const csv = readCsv(mapText);
  if ('error' in csv) {
    errors.push({ where: 'map', message: csv.error });
    return result();
  }
  const [header, ...rows] = csv.rows;
  if (!header) {
    errors.push({ where: 'map', message: 'the plate map is empty' });
    return result();
  }
  const columns = namedHeader(header.cells);
  const index = readHeader(columns, MAP_SPEC, { file: 'map', header: 'map header' }, errors);
  if (!index) return result();
  if (rows.length === 0) {
    errors.push({ where: 'map', message: 'the plate map has a header but no rows' });
    return result();
  }

  const shape = PLATE_SHAPES.find((s) => s.size === plateSize)!;
  const decimalComma = csv.separator === ';';
  const wellLines = new Map<string, number>();
  for (const { cells, line } of rows) {
    const before = errors.length;
    if (!checkRowShape(cells, columns, `row ${line}`, errors)) {
      badLines.add(line);
      continue;
    }
    const wellText = cells[index.get('well')!] ?? '';
    const position = wellText === '' ? null : parseWell(wellText);
    const well = position ? wellName(position.row, position.col) : null;
    const at = (column: string) => (well && column !== 'well' ? `row ${line}, well ${well}, column ${column}` : `row ${line}, column ${column}`);
    const row = rowContext(cells, index, decimalComma, at, errors);

    if (wellText === '') errors.push({ where: at('well'), message: 'well is empty' });
    else if (!position || !well) errors.push({ where: at('well'), message: `"${wellText}" is not a well name (A1 to P24)` });
    else if (matrix && (position.row >= shape.rows || position.col >= shape.cols)) {
      errors.push({ where: at('well'), message: `well ${well} is outside a ${plateSize}-well plate` });
    } else {
      const first = wellLines.get(well);
      if (first !== undefined) errors.push({ where: at('well'), message: `well ${well} is mapped twice: rows ${first} and ${line}` });
      else wellLines.set(well, line);
    }

    const fields = readSampleFields(row);

    let response: number | null = null;
    const value = well && responses ? responses.get(well) : undefined;
    if (value === 'empty') errors.push({ where: `row ${line}, well ${well}`, message: `well ${well} is mapped but empty in the matrix` });
    else if (typeof value === 'number') response = value;
    // 'invalid' was reported at the well already; the line still cannot give a point.

    if (errors.length > before || value === 'invalid') badLines.add(line);
    if (errors.length > before || !fields || response === null) continue;
    points.push({ ...fields, response, well, line });
  }
  return result();
}

// ---------------------------------------------------------------------------------------------
// Templates (also in fixtures/templates/, kept equal by test/domain/raw-data.test.ts)

/**
 * Long format: one line per measured well, header first, columns in any order, separated by
 * commas, semicolons (then a decimal comma is allowed) or tabs.
 * - sample: batch or registry number (CPD-000001-01, CPD-000001), or a control keyword:
 *   BASAL (no compound: basal signal, or total binding), MAX (reference full agonist at its
 *   maximal concentration, or the agonist alone in antagonist mode), BLANK (background, or
 *   non-specific binding).
 * - concentration + unit (M, mM, µM, uM, μM, nM, pM): required for test samples; controls may
 *   leave both empty.
 * - response: the measured signal.
 * - optional: replicate (1, 2, …), well (A1 to P24, each at most once), condition (free text;
 *   in Schild and allosteric-modulation runs it names the second ligand and its fixed
 *   concentration, "antagonist CPD-000002-01 10 nM" or "modulator CPD-000003-01 1 uM" — see
 *   run-conditions.ts; not used in this example).
 * The example: one test sample at 8 concentrations in duplicate, BASAL and MAX in duplicate, one
 * BLANK.
 */
export const LONG_TEMPLATE_CSV = `sample,concentration,unit,response,replicate,well
CPD-000001-01,0.3,nM,1447,1,A1
CPD-000001-01,1,nM,1917,1,A2
CPD-000001-01,3,nM,3128,1,A3
CPD-000001-01,10,nM,5559,1,A4
CPD-000001-01,30,nM,8074,1,A5
CPD-000001-01,100,nM,9759,1,A6
CPD-000001-01,300,nM,10435,1,A7
CPD-000001-01,1000,nM,10677,1,A8
CPD-000001-01,0.3,nM,1489,2,B1
CPD-000001-01,1,nM,1935,2,B2
CPD-000001-01,3,nM,3198,2,B3
CPD-000001-01,10,nM,5665,2,B4
CPD-000001-01,30,nM,8252,2,B5
CPD-000001-01,100,nM,9943,2,B6
CPD-000001-01,300,nM,10647,2,B7
CPD-000001-01,1000,nM,10882,2,B8
BASAL,,,1187,1,A9
BASAL,,,1236,2,B9
MAX,10,uM,10954,1,A10
MAX,10,uM,10712,2,B10
BLANK,,,164,,A11
`;

/**
 * Plate matrix: the responses laid out like the plate. First line: an empty corner cell then the
 * column numbers 1 to 12 (96-well) or 1 to 24 (384-well); then one line per plate row, A to H
 * (or A to P) in order, starting with the row letter. Wells the map does not use may be empty.
 * The example: a 96-well plate, rows A to D used (see PLATE_MAP_TEMPLATE_CSV), rows E to H empty.
 */
export const PLATE_MATRIX_TEMPLATE_CSV = `,1,2,3,4,5,6,7,8,9,10,11,12
A,10699,10410,9779,8052,5581,3108,1942,1425,1210,10870,158,
B,10505,10282,9620,7953,5468,3077,1900,1424,1174,10655,171,
C,7085,5763,4009,2370,1651,1332,1259,1211,1239,10931,149,
D,6966,5699,3920,2351,1613,1331,1226,1202,1192,10702,166,
E,,,,,,,,,,,,
F,,,,,,,,,,,,
G,,,,,,,,,,,,
H,,,,,,,,,,,,
`;

/**
 * Plate map: what is in each used well. Columns well, sample, concentration, unit (as in the long
 * format), optional replicate and condition. Each well at most once; wells not listed are ignored.
 * The example: two test samples at 8 concentrations in duplicate (CPD-000001-01 in rows A and B,
 * CPD-000002-01 in rows C and D, columns 1 to 8), BASAL in column 9, MAX (reference agonist
 * 10 µM) in column 10, BLANK in column 11.
 */
export const PLATE_MAP_TEMPLATE_CSV = `well,sample,concentration,unit,replicate
A1,CPD-000001-01,1000,nM,1
A2,CPD-000001-01,300,nM,1
A3,CPD-000001-01,100,nM,1
A4,CPD-000001-01,30,nM,1
A5,CPD-000001-01,10,nM,1
A6,CPD-000001-01,3,nM,1
A7,CPD-000001-01,1,nM,1
A8,CPD-000001-01,0.3,nM,1
A9,BASAL,,,
A10,MAX,10,uM,
A11,BLANK,,,
B1,CPD-000001-01,1000,nM,2
B2,CPD-000001-01,300,nM,2
B3,CPD-000001-01,100,nM,2
B4,CPD-000001-01,30,nM,2
B5,CPD-000001-01,10,nM,2
B6,CPD-000001-01,3,nM,2
B7,CPD-000001-01,1,nM,2
B8,CPD-000001-01,0.3,nM,2
B9,BASAL,,,
B10,MAX,10,uM,
B11,BLANK,,,
C1,CPD-000002-01,1000,nM,1
C2,CPD-000002-01,300,nM,1
C3,CPD-000002-01,100,nM,1
C4,CPD-000002-01,30,nM,1
C5,CPD-000002-01,10,nM,1
C6,CPD-000002-01,3,nM,1
C7,CPD-000002-01,1,nM,1
C8,CPD-000002-01,0.3,nM,1
C9,BASAL,,,
C10,MAX,10,uM,
C11,BLANK,,,
D1,CPD-000002-01,1000,nM,2
D2,CPD-000002-01,300,nM,2
D3,CPD-000002-01,100,nM,2
D4,CPD-000002-01,30,nM,2
D5,CPD-000002-01,10,nM,2
D6,CPD-000002-01,3,nM,2
D7,CPD-000002-01,1,nM,2
D8,CPD-000002-01,0.3,nM,2
D9,BASAL,,,
D10,MAX,10,uM,
D11,BLANK,,,
`;
