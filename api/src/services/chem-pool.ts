import { Piscina } from 'piscina';
import { availableParallelism } from 'node:os';
import { analyseMany, tautomers, type ChemResult, type ChemTask } from '../workers/chem-worker.js';

let pool: Piscina | undefined;
let poolBroken = false;

/** A worker-thread pool for OpenChemLib work (one thread per core), created on first use. */
function chemPool(): Piscina | undefined {
  if (poolBroken) return undefined;
  pool ??= new Piscina({
    filename: new URL('../workers/chem-worker.ts', import.meta.url).href,
    maxThreads: Math.max(1, availableParallelism()),
    minThreads: Math.max(1, availableParallelism()),
    idleTimeout: 30_000,
  });
  return pool;
}

/** Analyses structures in the pool; falls back to this thread if workers cannot start. */
export async function analyseInPool(tasks: ChemTask[]): Promise<ChemResult[]> {
  const p = chemPool();
  if (p) {
    try {
      return (await p.run(tasks)) as ChemResult[];
    } catch (err) {
      if (!(err instanceof Error) || !/Cannot find module|ERR_UNKNOWN_FILE_EXTENSION|worker/i.test(err.message)) throw err;
      poolBroken = true;
    }
  }
  return analyseMany(tasks);
}

export async function tautomersInPool(idCodes: string[]): Promise<(string | null)[]> {
  const p = chemPool();
  if (p) {
    try {
      return (await p.run(idCodes, { name: 'tautomers' })) as (string | null)[];
    } catch (err) {
      if (!(err instanceof Error) || !/Cannot find module|ERR_UNKNOWN_FILE_EXTENSION|worker/i.test(err.message)) throw err;
      poolBroken = true;
    }
  }
  return tautomers(idCodes);
}

export async function closeChemPool(): Promise<void> {
  await pool?.destroy();
  pool = undefined;
}
