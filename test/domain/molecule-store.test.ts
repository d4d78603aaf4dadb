// The search threads' store of decoded molecules: matching through it gives exactly what matching
// the ID codes gives, a changed ID code for an id is decoded again, and the bound holds.
import { expect } from 'chai';
import { Molecule } from 'openchemlib';
import { loadIntoStore, matchInStore, MoleculeStore } from '../../api/src/workers/molecule-store.js';
import { parseQuery, substructureMatch } from '../../api/src/domain/structure-search.js';

const SMILES = ['c1ccccc1O', 'CCO', 'c1ccncc1', 'Oc1ccccc1C', 'CCN(CC)CC', 'c1ccc2ccccc2c1', 'O=C(O)c1ccccc1', 'C1CCNCC1'];
const codes = SMILES.map((s) => Molecule.fromSmiles(s).getIDCode());
const task = (query: string, list: string[] = codes, ids = list.map((_, i) => i + 1)) => ({ query, ids: Int32Array.from(ids), codes: list.join('\n') });

describe('MoleculeStore (search threads)', () => {
  it('matches exactly as matching the ID codes does, atoms included', () => {
    const store = new MoleculeStore(100);
    for (const q of ['c1ccccc1', 'C(=O)O', 'N', 'C1CCNCC1', 'CC']) {
      const expected = codes.map((c, i) => [i + 1, substructureMatch(parseQuery(q), c)] as const).filter(([, atoms]) => atoms !== null);
      expect(matchInStore(store, task(q))).to.deep.equal(expected);
      expect(matchInStore(store, task(q))).to.deep.equal(expected); // second time from the store
    }
    expect(store.decoded).to.equal(codes.length);
  });

  it('decodes again when an id comes with another ID code (a restored database)', () => {
    const store = new MoleculeStore(100);
    expect(matchInStore(store, task('c1ccncc1', [codes[2]], [7]))).to.have.length(1);
    expect(matchInStore(store, task('c1ccncc1', [codes[1]], [7]))).to.have.length(0);
    expect(store.decoded).to.equal(2);
  });

  it('keeps at most its capacity, dropping the oldest', () => {
    const store = new MoleculeStore(3);
    expect(loadIntoStore(store, Int32Array.from([1, 2, 3, 4, 5]), codes.slice(0, 5).join('\n'))).to.equal(3);
    store.decoded = 0;
    matchInStore(store, task('C', codes.slice(2, 5), [3, 4, 5]));
    expect(store.decoded).to.equal(0);
    matchInStore(store, task('C', [codes[0]], [1]));
    expect(store.decoded).to.equal(1);
  });
});
