import { Piscina } from 'piscina';
import { availableParallelism } from 'node:os';
import { analyseMany, fingerprints, matchMany, tautomers, type ChemResult, type ChemTask, type MatchTask } from '../workers/chem-worker.js';

const THREADS = Math.max(1, availableParallelism());
let pool: Piscina | undefined;
let poolBroken = false;

/** A worker-thread pool for OpenChemLib work (one thread per core), created on first use. */
function chemPool(): Piscina | undefined {
  if (poolBroken) return undefined;
  pool ??= new Piscina({
    filename: new URL('../workers/chem-worker.ts', import.meta.url).href,
    maxThreads: THREADS,
    minThreads: THREADS,
    idleTimeout: 30_000,
  });
  // A worker that cannot start (no TypeScript loader in this process) is reported here, not as
  // an uncaught exception; the next run falls back to this thread.
  pool.on('error', () => markBroken());
  return pool;
}

function markBroken(): void {
  poolBroken = true;
  const broken = pool;
  pool = undefined;
  void broken?.destroy().catch(() => undefined);
}

/**
 * Runs tasks of one worker function in the pool, in order; on this thread instead when the
 * workers cannot start (no TypeScript loader in this process, as under mocha).
 */
async function runTasks<T, R>(name: string, tasks: T[], local: (task: T) => R): Promise<R[]> {
  const p = chemPool();
  if (p) {
    try {
      return await Promise.all(tasks.map((task) => p.run(task, { name }) as Promise<R>));
    } catch (err) {
      if (!(err instanceof Error) || !/Cannot find module|ERR_UNKNOWN_FILE_EXTENSION|Unknown file extension|worker/i.test(err.message)) throw err;
      markBroken();
    }
  }
  return tasks.map(local);
}

/** Runs a worker function over a list, split into one part per thread so every core works; answers in the list's order. */
async function runSplit<T, R>(name: string, items: T[], local: (part: T[]) => R[]): Promise<R[]> {
  const size = Math.ceil(items.length / THREADS) || 1;
  const parts: T[][] = [];
  for (let i = 0; i < items.length; i += size) parts.push(items.slice(i, i + size));
  return (await runTasks(name, parts, local)).flat();
}

/** Analyses structures in the pool (no tautomer codes: see chem-worker). */
export function analyseInPool(tasks: ChemTask[]): Promise<ChemResult[]> {
  return runSplit('analyseMany', tasks, analyseMany);
}

/** Tautomer ID codes of stored ID codes, in the pool. */
export function tautomersInPool(idCodes: string[]): Promise<(string | null)[]> {
  return runSplit('tautomers', idCodes, tautomers);
}

/** Screening fingerprints of stored ID codes, in the pool. */
export function fingerprintsInPool(idCodes: string[]): Promise<string[]> {
  return runSplit('fingerprints', idCodes, fingerprints);
}

/**
 * One chunk of the atom-by-atom substructure check, in a worker (or on this thread when the
 * workers cannot start), so a heavy query never blocks other requests for long.
 */
export async function matchInPool(task: MatchTask): Promise<[number, number[]][]> {
  const [hits] = await runTasks('matchMany', [task], matchMany);
  return hits;
}

/**
 * Starts the worker threads now (each loads OpenChemLib, which takes a few seconds) so the
 * first structure search after a start does not pay for it.
 */
export async function warmChemPool(): Promise<void> {
  await runSplit('fingerprints', Array.from({ length: THREADS }, () => WARM_UP_ID_CODE), fingerprints);
}

/** ID code of ethanol, a trivial task for warming the pool. */
const WARM_UP_ID_CODE = 'eMHAIh@';

/** Threads in the pool: how many chunks a search keeps in flight. */
export const POOL_THREADS = THREADS;

export async function closeChemPool(): Promise<void> {
  await pool?.destroy();
  pool = undefined;
}
