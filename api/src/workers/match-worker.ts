// A search thread (node:worker_threads): owns one shard of the registry (compound id modulo the
// number of threads) and keeps its decoded molecules in a MoleculeStore, so the atom-by-atom
// stage of a search pays for matching, not decoding. Messages: { seq, type: 'match' | 'load', … }.
import { parentPort, workerData } from 'node:worker_threads';
import { loadIntoStore, matchInStore, MoleculeStore, type ShardTask } from './molecule-store.js';

export type ShardMessage = ({ type: 'match' } & ShardTask) | { type: 'load'; ids: Int32Array; codes: string };

const store = new MoleculeStore((workerData as { capacity: number }).capacity);

parentPort!.on('message', ({ seq, message }: { seq: number; message: ShardMessage }) => {
  try {
    const result = message.type === 'match' ? matchInStore(store, message) : loadIntoStore(store, message.ids, message.codes);
    parentPort!.postMessage({ seq, ok: true, result, stored: store.size });
  } catch (err) {
    parentPort!.postMessage({ seq, ok: false, message: String((err as Error)?.message ?? err).split('\n')[0] });
  }
});
