// The atom-by-atom stage of structure search on dedicated search threads, one per core. Each thread
// owns the compounds whose id modulo the thread count is its index and keeps their decoded
// molecules (workers/molecule-store.ts), so a repeated or overlapping search does not decode
// again. A pool of interchangeable workers (piscina, as for imports) cannot keep that affinity.
// When the threads cannot start (no TypeScript loader in this process), the same code runs on
// this thread with one store per shard.
import { Worker } from 'node:worker_threads';
import { availableParallelism, totalmem } from 'node:os';
import { BYTES_PER_MOLECULE, loadIntoStore, matchInStore, MoleculeStore } from '../workers/molecule-store.js';
import type { ShardMessage } from '../workers/match-worker.js';
import type { QueryKind } from '../domain/structure-search.js';

export const SHARDS = Math.max(1, availableParallelism());

/**
 * Molecules each thread keeps: a quarter of the machine's memory over the threads, or
 * SEARCH_STORE_MOLECULES (0 turns the store off). 24 GB and 2 cores: about 190,000 per thread.
 */
export const STORE_CAPACITY = process.env.SEARCH_STORE_MOLECULES !== undefined
  ? Math.max(0, Number(process.env.SEARCH_STORE_MOLECULES) || 0)
  : Math.floor(totalmem() / 4 / SHARDS / BYTES_PER_MOLECULE);

/** Targets sent to a thread in one message: the deadline is checked between messages. */
const CHUNK = 2000;

const WORKER_URL = new URL(`../workers/match-worker${import.meta.url.endsWith('.ts') ? '.ts' : '.js'}`, import.meta.url).href;

type Pending = { resolve: (value: unknown) => void; reject: (err: Error) => void };

class Shard {
  private worker: Worker | undefined;
  private local: MoleculeStore | undefined;
  private readonly pending = new Map<number, Pending>();
  private seq = 0;
  stored = 0;

  constructor(readonly index: number) {}

  private start(): Worker | undefined {
    if (this.local) return undefined;
    if (this.worker) return this.worker;
    const heapMb = Math.ceil((STORE_CAPACITY * BYTES_PER_MOLECULE) / 2 ** 20) + 512;
    try {
      const options = { workerData: { capacity: STORE_CAPACITY }, resourceLimits: { maxOldGenerationSizeMb: heapMb } };
      const worker = WORKER_URL.endsWith('.ts')
        ? // tsx's --import hooks do not reach worker threads: the thread loads the module through tsx's API.
          new Worker(`import('tsx/esm/api').then(({ tsImport }) => tsImport(${JSON.stringify(WORKER_URL)}, ${JSON.stringify(import.meta.url)}))`, { ...options, eval: true })
        : new Worker(new URL(WORKER_URL), options);
      worker.unref();
      worker.on('message', (m: { seq: number; ok: boolean; result?: unknown; message?: string; stored?: number }) => {
        const p = this.pending.get(m.seq);
        this.pending.delete(m.seq);
        if (m.stored !== undefined) this.stored = m.stored;
        if (m.ok) p?.resolve(m.result);
        else p?.reject(new Error(m.message));
      });
      worker.on('error', (err) => this.fail(err));
      worker.on('exit', (code) => this.fail(new Error(`search thread ${this.index} stopped (exit code ${code})`)));
      this.worker = worker;
      return worker;
    } catch {
      this.local = new MoleculeStore(STORE_CAPACITY);
      return undefined;
    }
  }

  /** A thread that cannot start (no TypeScript loader) or stopped: its work moves to this thread. */
  private fail(err: Error): void {
    const cannotStart = /Cannot find (module|package)|ERR_UNKNOWN_FILE_EXTENSION|Unknown file extension|ERR_MODULE_NOT_FOUND/i.test(err.message);
    this.worker = undefined;
    if (cannotStart) this.local ??= new MoleculeStore(STORE_CAPACITY);
    const pending = [...this.pending.values()];
    this.pending.clear();
    for (const p of pending) p.reject(err);
  }

  async run<R>(message: ShardMessage): Promise<R> {
    for (let attempt = 0; attempt < 2; attempt++) {
      const worker = this.start();
      if (!worker) break;
      try {
        return await new Promise<R>((resolve, reject) => {
          const seq = ++this.seq;
          this.pending.set(seq, { resolve: resolve as (v: unknown) => void, reject });
          worker.postMessage({ seq, message });
        });
      } catch (err) {
        // A thread that could not start falls back to this one; any other failure is the search's.
        if (!this.local) throw err;
      }
    }
    const store = this.local!;
    const result = message.type === 'match' ? matchInStore(store, message) : loadIntoStore(store, message.ids, message.codes);
    this.stored = store.size;
    return result as R;
  }

  get running(): boolean {
    return this.worker !== undefined;
  }

  async close(): Promise<void> {
    const worker = this.worker;
    this.worker = undefined;
    await worker?.terminate();
  }
}

let shards: Shard[] | undefined;
const pool = () => (shards ??= Array.from({ length: SHARDS }, (_, i) => new Shard(i)));

/** Splits [id, ID code] pairs by owning shard, each in its given order, in chunks. */
function byShard(targets: [number, string][]): { ids: Int32Array; codes: string }[][] {
  const parts: [number, string][][] = Array.from({ length: SHARDS }, () => []);
  for (const t of targets) parts[t[0] % SHARDS].push(t);
  return parts.map((part) => {
    const chunks: { ids: Int32Array; codes: string }[] = [];
    for (let i = 0; i < part.length; i += CHUNK) {
      const slice = part.slice(i, i + CHUNK);
      chunks.push({ ids: Int32Array.from(slice, (t) => t[0]), codes: slice.map((t) => t[1]).join('\n') });
    }
    return chunks;
  });
}

export interface ShardedMatch {
  hits: Map<number, number[]>;
  checked: number;
  /** Every target was checked. */
  complete: boolean;
  /** The deadline stopped the check (otherwise an incomplete first-page check stopped because the page was known). */
  timedOut: boolean;
}

/**
 * Checks every target against the query on the search threads, each thread its own shard, until
 * done or past the deadline (checked between chunks). `hits` maps id → matched atoms.
 */
export async function matchAll(query: string, kind: QueryKind | undefined, targets: [number, string][], deadline: number, now: () => number = Date.now): Promise<ShardedMatch> {
  const hits = new Map<number, number[]>();
  let checked = 0;
  const plan = byShard(targets);
  await Promise.all(pool().map(async (shard, i) => {
    for (const chunk of plan[i]) {
      if (now() > deadline) return;
      const found = await shard.run<[number, number[]][]>({ type: 'match', query, kind, ...chunk });
      for (const [id, atoms] of found) hits.set(id, atoms);
      checked += chunk.ids.length;
    }
  }));
  return { hits, checked, complete: checked >= targets.length, timedOut: checked < targets.length };
}

/** Supplies the next `n` targets in the answer's order; fewer than `n` when no more follow. */
export type TargetSource = (n: number) => Promise<[number, string][]>;

/** A TargetSource over a list held in memory. */
export function listSource(targets: [number, string][]): TargetSource {
  let next = 0;
  return async (n) => targets.slice(next, (next += n));
}

/**
 * The first `wanted` hits in the targets' order: takes growing slices from `source` (all threads
 * on each) until that many are found, the targets run out or the deadline passes. `checked`
 * counts the targets checked; every hit among them is in `hits`.
 */
export async function matchFirst(query: string, kind: QueryKind | undefined, source: TargetSource, wanted: number, deadline: number, now: () => number = Date.now): Promise<ShardedMatch> {
  const hits = new Map<number, number[]>();
  let checked = 0;
  let step = Math.max(16, wanted * 2);
  while (hits.size < wanted) {
    if (now() > deadline) return { hits, checked, complete: false, timedOut: true };
    const part = await source(step);
    const found = await matchAll(query, kind, part, deadline, now);
    for (const [id, atoms] of found.hits) hits.set(id, atoms);
    checked += found.checked;
    if (found.timedOut) return { hits, checked, complete: false, timedOut: true };
    if (part.length < step) return { hits, checked, complete: true, timedOut: false };
    step = Math.min(step * 4, 20_000);
  }
  return { hits, checked, complete: false, timedOut: false };
}

/** Decodes the given compounds into their shards' stores (the start-up warm-up); answers the molecules kept. */
export async function loadShards(targets: [number, string][]): Promise<number> {
  const plan = byShard(targets);
  await Promise.all(pool().map(async (shard, i) => {
    for (const chunk of plan[i]) await shard.run<number>({ type: 'load', ...chunk });
  }));
  return pool().reduce((n, s) => n + s.stored, 0);
}

/** Search threads running now (0: none started yet, or the work runs on this thread). */
export function runningThreads(): number {
  return shards?.filter((s) => s.running).length ?? 0;
}

/** Molecules kept over all shards. */
export function storedMolecules(): number {
  return shards?.reduce((n, s) => n + s.stored, 0) ?? 0;
}

export async function closeShards(): Promise<void> {
  const all = shards ?? [];
  shards = undefined;
  await Promise.all(all.map((s) => s.close()));
}
