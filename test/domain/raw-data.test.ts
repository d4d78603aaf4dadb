import { expect } from 'chai';
import { readFileSync } from 'node:fs';
import {
  CONCENTRATION_UNITS,
  LONG_TEMPLATE_CSV,
  PLATE_MAP_TEMPLATE_CSV,
  PLATE_MATRIX_TEMPLATE_CSV,
  parseLongCsv,
  parsePlate,
  parseWell,
  toMolar,
  wellName,
  type RawDataParse,
} from '../../api/src/domain/raw-data.js';

const csv = (...lines: string[]) => lines.join('\n') + '\n';
const HEADER = 'sample,concentration,unit,response';

/** The single issue of a parse, failing with the whole list otherwise. */
function onlyIssue(result: RawDataParse) {
  expect(result.errors, JSON.stringify(result.errors)).to.have.length(1);
  return result.errors[0];
}

describe('domain/raw-data', () => {
  describe('units and wells', () => {
    const expected: [string, number][] = [
      ['M', 3],
      ['mM', 3e-3],
      ['µM', 3e-6], // micro sign U+00B5
      ['uM', 3e-6],
      ['μM', 3e-6], // Greek mu U+03BC
      ['nM', 3e-9],
      ['pM', 3e-12],
    ];
    for (const [unit, molar] of expected) {
      it(`converts 3 ${unit} to ${molar} M exactly`, () => {
        expect(toMolar(3, unit)).to.equal(molar);
      });
    }
    it('accepts exactly the seven unit spellings', () => {
      expect(Object.keys(CONCENTRATION_UNITS)).to.have.members(expected.map(([unit]) => unit));
    });
    it('rejects other spellings and cases', () => {
      for (const unit of ['nm', 'NM', 'um', 'mol/L', 'µmol', '', 'constructor']) expect(toMolar(1, unit), unit).to.equal(null);
    });
    it('converts 10 nM without binary rounding noise', () => {
      expect(toMolar(10, 'nM')).to.equal(1e-8);
      expect(toMolar(0.3, 'nM')).to.equal(3e-10);
      expect(toMolar(1e-3, 'uM')).to.equal(1e-9);
    });
    it('names wells from 0-based positions', () => {
      expect([wellName(0, 0), wellName(2, 6), wellName(15, 23)]).to.deep.equal(['A1', 'C7', 'P24']);
      expect(() => wellName(16, 0)).to.throw(RangeError);
      expect(() => wellName(0, 24)).to.throw(RangeError);
    });
    it('parses well names in any case, with leading zeros, and refuses others', () => {
      expect(parseWell('c07')).to.deep.equal({ row: 2, col: 6 });
      expect(parseWell(' P24 ')).to.deep.equal({ row: 15, col: 23 });
      for (const name of ['Q1', 'A0', 'A25', '7C', 'AA1', '']) expect(parseWell(name), name).to.equal(null);
    });
  });

  describe('long CSV', () => {
    it('parses a valid file with every optional column, in any column order and header case', () => {
      const result = parseLongCsv(
        csv(
          ' Well ,Sample,Replicate,Concentration,Unit,Response,Condition',
          'a01,CPD-000012-01,1,10,nM,523.5,antagonist 10 nM',
          'A2, CPD-000012 ,2,+1e-3,mM,-4.5e2,',
          'B1,basal,1,,,101,',
          'B2,Max,1,10,µM,1000,',
          'B3,BLANK,,0,,12,',
        ),
      );
      expect(result.errors).to.deep.equal([]);
      expect(result.badLines).to.deep.equal([]);
      expect(result.points).to.deep.equal([
        { sample: 'CPD-000012-01', control: null, concentrationM: 1e-8, response: 523.5, replicate: 1, well: 'A1', condition: 'antagonist 10 nM', line: 2 },
        { sample: 'CPD-000012', control: null, concentrationM: 1e-6, response: -450, replicate: 2, well: 'A2', condition: null, line: 3 },
        { sample: null, control: 'basal', concentrationM: null, response: 101, replicate: 1, well: 'B1', condition: null, line: 4 },
        { sample: null, control: 'max', concentrationM: 1e-5, response: 1000, replicate: 1, well: 'B2', condition: null, line: 5 },
        { sample: null, control: 'blank', concentrationM: 0, response: 12, replicate: null, well: 'B3', condition: null, line: 6 },
      ]);
    });
    it('lets controls leave concentration and unit empty', () => {
      const result = parseLongCsv(csv(HEADER, 'BASAL,,,10', 'max,,,900', 'Blank,,,2'));
      expect(result.errors).to.deep.equal([]);
      expect(result.points.map((p) => [p.control, p.sample, p.concentrationM])).to.deep.equal([
        ['basal', null, null],
        ['max', null, null],
        ['blank', null, null],
      ]);
    });
    it('reads semicolon-separated files with a decimal comma', () => {
      const result = parseLongCsv(csv('sample;concentration;unit;response', 'CPD-000001-01;1,5;nM;12,25', 'CPD-000001-01;2.5e-1;uM;7'));
      expect(result.errors).to.deep.equal([]);
      expect(result.points.map((p) => [p.concentrationM, p.response])).to.deep.equal([
        [1.5e-9, 12.25],
        [2.5e-7, 7],
      ]);
    });
    it('reads tab-separated files', () => {
      const result = parseLongCsv(csv('sample\tconcentration\tunit\tresponse', 'CPD-000001-01\t3\tpM\t0.5'));
      expect(result.errors).to.deep.equal([]);
      expect(result.points[0]).to.include({ sample: 'CPD-000001-01', concentrationM: 3e-12, response: 0.5 });
    });
    it('does not take a comma as decimal separator in a comma-separated file', () => {
      const issue = onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,"1,5",nM,3')));
      expect(issue.where).to.equal('row 2, column concentration');
    });
    it('strips a UTF-8 BOM and accepts CRLF line ends', () => {
      const result = parseLongCsv('\uFEFF' + HEADER + '\r\nCPD-000001-01,1,nM,5\r\n');
      expect(result.errors).to.deep.equal([]);
      expect(result.points).to.have.length(1);
    });
    it('ignores blank lines but counts them in line numbers', () => {
      const result = parseLongCsv(csv(HEADER, '', 'CPD-000001-01,1,nM,5', '   ', ',,,', 'CPD-000001-01,2,nM,x'));
      expect(result.points.map((p) => p.line)).to.deep.equal([3]);
      expect(onlyIssue(result).where).to.equal('row 6, column response');
      expect(result.badLines).to.deep.equal([6]);
    });
    it('keeps the good rows and lists the bad ones', () => {
      const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nM,5', 'CPD-000001-01,1,nM,', 'CPD-000001-01,3,nM,7'));
      expect(result.points.map((p) => p.line)).to.deep.equal([2, 4]);
      expect(result.badLines).to.deep.equal([3]);
    });

    describe('errors', () => {
      it('refuses an empty file', () => {
        expect(onlyIssue(parseLongCsv(' \n\n'))).to.include({ where: 'file', message: 'the file is empty' });
        expect(onlyIssue(parseLongCsv('\uFEFF')).where).to.equal('file');
      });
      it('refuses a file without a header line', () => {
        expect(onlyIssue(parseLongCsv(csv('CPD-000001-01,1,nM,5'))).where).to.equal('file');
      });
      it('refuses a header without data rows', () => {
        const issue = onlyIssue(parseLongCsv(csv(HEADER, '')));
        expect(issue).to.deep.equal({ where: 'file', message: 'the file has a header but no data rows' });
      });
      it('names missing required columns', () => {
        const issue = onlyIssue(parseLongCsv(csv('sample,concentration', 'CPD-000001-01,1')));
        expect(issue.where).to.equal('header');
        expect(issue.message).to.contain('unit, response');
      });
      it('names unknown columns', () => {
        const issue = onlyIssue(parseLongCsv(csv(HEADER + ',Plate,comment', 'CPD-000001-01,1,nM,5,P1,x')));
        expect(issue.where).to.equal('header');
        expect(issue.message).to.contain('Plate, comment');
      });
      it('refuses an empty sample', () => {
        const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nM,5', ' ,1,nM,5'));
        expect(onlyIssue(result).where).to.equal('row 3, column sample');
        expect(result.badLines).to.deep.equal([3]);
      });
      it('refuses a unit that is not one of the accepted spellings, listing them', () => {
        const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nm,5'));
        const issue = onlyIssue(result);
        expect(issue.where).to.equal('row 2, column unit');
        expect(issue.message).to.contain('M, mM, µM, uM, μM, nM, pM');
        expect(result.badLines).to.deep.equal([2]);
      });
      it('refuses a concentration without a unit', () => {
        expect(onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,1,,5'))).where).to.equal('row 2, column unit');
      });
      it('refuses a test sample without a concentration', () => {
        expect(onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,,nM,5'))).where).to.equal('row 2, column concentration');
      });
      it('refuses a non-numeric response', () => {
        const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nM,5', 'CPD-000001-01,3,nM,n/a'));
        expect(onlyIssue(result).where).to.equal('row 3, column response');
        expect(result.badLines).to.deep.equal([3]);
      });
      it('refuses a non-finite response', () => {
        expect(onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nM,1e999'))).where).to.equal('row 2, column response');
        expect(onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,1,nM,Infinity'))).where).to.equal('row 2, column response');
      });
      it('refuses a negative concentration', () => {
        const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,-1,nM,5'));
        expect(onlyIssue(result).where).to.equal('row 2, column concentration');
        expect(result.badLines).to.deep.equal([2]);
      });
      it('allows concentration zero only for controls', () => {
        expect(onlyIssue(parseLongCsv(csv(HEADER, 'CPD-000001-01,0,nM,5'))).where).to.equal('row 2, column concentration');
        expect(parseLongCsv(csv(HEADER, 'BASAL,0,nM,5')).errors).to.deep.equal([]);
      });
      it('refuses a replicate that is not a positive whole number', () => {
        const head = HEADER + ',replicate';
        for (const replicate of ['0', '1.5', '-1', 'two']) {
          const result = parseLongCsv(csv(head, `CPD-000001-01,1,nM,5,${replicate}`));
          expect(onlyIssue(result).where, replicate).to.equal('row 2, column replicate');
          expect(result.badLines).to.deep.equal([2]);
        }
      });
      it('refuses a bad well name', () => {
        const result = parseLongCsv(csv(HEADER + ',well', 'CPD-000001-01,1,nM,5,Q3'));
        expect(onlyIssue(result).where).to.equal('row 2, column well');
        expect(result.badLines).to.deep.equal([2]);
      });
      it('refuses the same well twice, naming both rows', () => {
        const result = parseLongCsv(csv(HEADER + ',well', 'CPD-000001-01,1,nM,5,C7', 'CPD-000001-01,3,nM,6,B2', 'CPD-000001-01,10,nM,7,c07'));
        const issue = onlyIssue(result);
        expect(issue.where).to.equal('row 4, column well');
        expect(issue.message).to.contain('C7').and.contain('rows 2 and 4');
        expect(result.badLines).to.deep.equal([4]);
      });
      it('refuses a row with fewer values than the header', () => {
        const result = parseLongCsv(csv(HEADER + ',well', 'CPD-000001-01,1,nM,5'));
        expect(onlyIssue(result).where).to.equal('row 2');
        expect(result.badLines).to.deep.equal([2]);
      });
      it('reports every problem of a row separately', () => {
        const result = parseLongCsv(csv(HEADER, 'CPD-000001-01,abc,mol,x'));
        expect(result.errors.map((e) => e.where)).to.deep.equal(['row 2, column concentration', 'row 2, column unit', 'row 2, column response']);
        expect(result.badLines).to.deep.equal([2]);
      });
    });
  });

  describe('plate', () => {
    const LETTERS = 'ABCDEFGHIJKLMNOP';
    /** A matrix whose cell at row r, column c holds value(r, c) ('' for an empty well). */
    function matrix(rows: number, cols: number, value: (r: number, c: number) => string = (r, c) => String(100 * r + c)): string {
      const lines = [',' + Array.from({ length: cols }, (_, c) => c + 1).join(',')];
      for (let r = 0; r < rows; r++) lines.push(LETTERS[r] + ',' + Array.from({ length: cols }, (_, c) => value(r, c)).join(','));
      return csv(...lines);
    }
    const MAP_HEADER = 'well,sample,concentration,unit,replicate,condition';

    for (const [size, rows, cols] of [
      [96, 8, 12],
      [384, 16, 24],
    ] as const) {
      it(`round-trips a full ${size}-well plate`, () => {
        const mapLines = [MAP_HEADER];
        for (let r = 0; r < rows; r++) {
          for (let c = 0; c < cols; c++) mapLines.push(`${wellName(r, c)},CPD-00000${(r % 2) + 1}-01,${c + 1},nM,${(r % 3) + 1},run ${size}`);
        }
        const result = parsePlate(matrix(rows, cols), csv(...mapLines));
        expect(result.errors).to.deep.equal([]);
        expect(result.plateSize).to.equal(size);
        expect(result.points).to.have.length(size);
        const last = result.points[size - 1];
        expect(last).to.deep.equal({
          sample: `CPD-00000${((rows - 1) % 2) + 1}-01`,
          control: null,
          concentrationM: toMolar(cols, 'nM'),
          response: 100 * (rows - 1) + cols - 1,
          replicate: ((rows - 1) % 3) + 1,
          well: wellName(rows - 1, cols - 1),
          condition: `run ${size}`,
          line: size + 1,
        });
        for (const point of result.points) {
          const { row, col } = parseWell(point.well!)!;
          expect(point.response).to.equal(100 * row + col);
        }
      });
    }
    it('ignores unmapped wells, empty or not', () => {
      const result = parsePlate(matrix(8, 12, (r, c) => (r === 0 && c === 0 ? '7' : '')), csv(MAP_HEADER, 'a1,BASAL,,,,'));
      expect(result.errors).to.deep.equal([]);
      expect(result.points).to.deep.equal([
        { sample: null, control: 'basal', concentrationM: null, response: 7, replicate: null, well: 'A1', condition: null, line: 2 },
      ]);
    });
    it('reads a semicolon-separated matrix with a decimal comma', () => {
      const lines = [';' + Array.from({ length: 12 }, (_, c) => c + 1).join(';')];
      for (let r = 0; r < 8; r++) lines.push(LETTERS[r] + ';' + Array.from({ length: 12 }, (_, c) => `${r},${c}`).join(';'));
      const result = parsePlate(csv(...lines), csv('well;sample;concentration;unit', 'C7;CPD-000001-01;0,5;uM'));
      expect(result.errors).to.deep.equal([]);
      expect(result.points[0]).to.include({ well: 'C7', response: 2.6, concentrationM: 5e-7 });
    });
    it('refuses a matrix of the wrong size, saying what is expected', () => {
      const result = parsePlate(matrix(8, 11), csv(MAP_HEADER, 'A1,BASAL,,,,'));
      expect(result.errors).to.deep.include({
        where: 'matrix',
        message: 'wrong plate size: found 8 rows × 11 columns; expected 8 × 12 (96-well) or 16 × 24 (384-well)',
      });
      expect(result.points).to.deep.equal([]);
    });
    it('refuses a matrix with a missing row', () => {
      const text = matrix(8, 12).split('\n').filter((line) => !line.startsWith('D,')).join('\n');
      expect(onlyIssue(parsePlate(text, csv(MAP_HEADER, 'A1,BASAL,,,,'))).message).to.equal(
        'wrong plate size: found 7 rows × 12 columns; expected 8 × 12 (96-well) or 16 × 24 (384-well)',
      );
    });
    it('refuses row letters out of order', () => {
      const text = matrix(8, 12).replace('\nB,', '\nX,');
      const issue = onlyIssue(parsePlate(text, csv(MAP_HEADER, 'A1,BASAL,,,,')));
      expect(issue.where).to.equal('matrix');
      expect(issue.message).to.contain('expected row B');
    });
    it('refuses a matrix row with a value too few', () => {
      const text = matrix(8, 12).replace(/\nC,([^\n]*),\d+\n/, '\nC,$1\n');
      const issue = onlyIssue(parsePlate(text, csv(MAP_HEADER, 'A1,BASAL,,,,')));
      expect(issue).to.deep.equal({ where: 'matrix', message: 'line 4 (row C) has 11 values; expected 12' });
    });
    it('names the well of a non-numeric matrix cell', () => {
      const result = parsePlate(matrix(8, 12, (r, c) => (r === 2 && c === 6 ? 'OVER' : '1')), csv(MAP_HEADER, 'C7,CPD-000001-01,1,nM,,', 'C8,CPD-000001-01,3,nM,,'));
      expect(onlyIssue(result)).to.deep.equal({ where: 'well C7', message: 'response "OVER" is not a finite number' });
      expect(result.badLines).to.deep.equal([2]);
      expect(result.points.map((p) => p.well)).to.deep.equal(['C8']);
    });
    it('refuses a mapped well outside the plate', () => {
      const result = parsePlate(matrix(8, 12), csv(MAP_HEADER, 'A1,BASAL,,,,', 'P24,CPD-000001-01,1,nM,,'));
      expect(onlyIssue(result)).to.deep.equal({ where: 'row 3, column well', message: 'well P24 is outside a 96-well plate' });
      expect(result.badLines).to.deep.equal([3]);
    });
    it('refuses the same well mapped twice, naming both rows', () => {
      const result = parsePlate(matrix(8, 12), csv(MAP_HEADER, 'B2,BASAL,,,,', 'A1,MAX,,,,', 'b02,CPD-000001-01,1,nM,,'));
      const issue = onlyIssue(result);
      expect(issue.where).to.equal('row 4, column well');
      expect(issue.message).to.contain('B2').and.contain('rows 2 and 4');
      expect(result.badLines).to.deep.equal([4]);
    });
    it('refuses a mapped well that is empty in the matrix', () => {
      const result = parsePlate(matrix(8, 12, (r, c) => (r === 7 && c === 11 ? '' : '1')), csv(MAP_HEADER, 'A1,BASAL,,,,', 'H12,BLANK,,,,'));
      expect(onlyIssue(result)).to.deep.equal({ where: 'row 3, well H12', message: 'well H12 is mapped but empty in the matrix' });
      expect(result.badLines).to.deep.equal([3]);
    });
    it('validates map cells like the long format, naming row, well and column', () => {
      const result = parsePlate(matrix(8, 12), csv(MAP_HEADER, 'A1,CPD-000001-01,1,mol,,', 'A2,,1,nM,,', 'A3,CPD-000001-01,1,nM,0,'));
      expect(result.errors.map((e) => e.where)).to.deep.equal([
        'row 2, well A1, column unit',
        'row 3, well A2, column sample',
        'row 4, well A3, column replicate',
      ]);
      expect(result.badLines).to.deep.equal([2, 3, 4]);
    });
    it('refuses a map without the well column', () => {
      const issue = onlyIssue(parsePlate(matrix(8, 12), csv('sample,concentration,unit', 'BASAL,,')));
      expect(issue.where).to.equal('map header');
      expect(issue.message).to.contain('well');
    });
  });

  describe('templates', () => {
    it('the long template parses without errors', () => {
      const result = parseLongCsv(LONG_TEMPLATE_CSV);
      expect(result.errors).to.deep.equal([]);
      expect(result.points.filter((p) => p.sample === 'CPD-000001-01')).to.have.length(16);
      expect(new Set(result.points.map((p) => p.control))).to.deep.equal(new Set([null, 'basal', 'max', 'blank']));
    });
    it('the plate templates parse without errors', () => {
      const result = parsePlate(PLATE_MATRIX_TEMPLATE_CSV, PLATE_MAP_TEMPLATE_CSV);
      expect(result.errors).to.deep.equal([]);
      expect(result.plateSize).to.equal(96);
      expect(new Set(result.points.map((p) => p.sample))).to.deep.equal(new Set(['CPD-000001-01', 'CPD-000002-01', null]));
    });
    const files: [string, string][] = [
      ['raw-data-long.csv', LONG_TEMPLATE_CSV],
      ['plate-matrix-96.csv', PLATE_MATRIX_TEMPLATE_CSV],
      ['plate-map-96.csv', PLATE_MAP_TEMPLATE_CSV],
    ];
    for (const [file, constant] of files) {
      it(`fixtures/templates/${file} equals the exported constant`, () => {
        expect(readFileSync(new URL(`../../fixtures/templates/${file}`, import.meta.url), 'utf8')).to.equal(constant);
      });
    }
  });
});
