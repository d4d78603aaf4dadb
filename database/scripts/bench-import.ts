// npm run bench:import — end-to-end SDF import rate: a generated 10,000-record SDF (invented,
// deterministic analogues) is uploaded through the real HTTP API into a fresh bench database;
// the clock runs from the upload to the job's "done". Bar (DESIGN §7): >= 200 records/s.
import { MikroORM } from '@mikro-orm/postgresql';
import { Molecule } from 'openchemlib';
import pg from 'pg';
import type { AddressInfo } from 'node:net';
import { availableParallelism } from 'node:os';
import { createApp } from '../../api/src/app.js';
import { loadSettings } from '../../api/src/config.js';
import { User } from '../../api/src/entities/user.entity.js';
import { hashPassword } from '../../api/src/services/password.js';
import { closeChemPool } from '../../api/src/services/chem-pool.js';
import { parseMolecule } from '../../api/src/domain/chem.js';
import { ormConfig } from '../mikro-orm.config.js';

const COUNT = Number(process.argv[2] ?? 10_000);
const DB = process.env.BENCH_DATABASE_NAME ?? 'ligandry_bench';

const cores = ['O=C(N{R})c1ccc({S})cc1', 'CN1CCN(CC1)c1ccc(cc1{S})C(=O)N{R}', 'O=C(C{R})Nc1ccc2[nH]ccc2c1{S}', '{S}c1ccc2c(c1)CCN(C2)C(=O){R}', 'O=S(=O)(N{R})c1cccc({S})c1', '{S}c1ccc(cc1)OCC(O)CN{R}'];
const rs = ['C', 'CC', 'CCC', 'CC(C)C', 'C1CC1', 'C1CCCC1', 'C1CCCCC1', 'c1ccccc1', 'c1ccc(F)cc1', 'c1ccc(Cl)cc1', 'c1ccncc1', 'Cc1ccccc1', 'CCOC', 'CCN(C)C', 'CC(F)(F)F', 'c1cccs1', 'C1CCOCC1', 'CCc1ccccc1', 'c1ccc(OC)cc1', 'c1ccc(C#N)cc1', 'CCCC', 'CCCCC', 'CC1CC1', 'C(C)(C)C', 'c1cnccn1'];
const ss = ['F', 'Cl', 'Br', 'C', 'OC', 'C#N', 'C(F)(F)F', 'O', 'N', 'CC', 'OCC', 'SC', 'N(C)C', 'C(=O)C', 'OC(F)(F)F'];
const linkers = ['', 'C', 'CC', 'CCC', 'CCO', 'CCCC'];

/** Distinct invented analogues, in a fixed order (6 cores × 25 R × 15 S × 5 linkers). */
function smilesList(n: number): string[] {
  const out = new Set<string>();
  for (const linker of linkers) for (const core of cores) for (const r of rs) for (const s of ss) {
    if (out.size >= n) break;
    const smiles = core.replace('{R}', linker + r).replace('{S}', s);
    try {
      parseMolecule(smiles, 'smiles'); // only structures OpenChemLib reads as written
      out.add(smiles);
    } catch {
      // skip
    }
  }
  return [...out];
}

function sdf(smiles: string[]): string {
  return smiles
    .map((s, i) => {
      const m = Molecule.fromSmiles(s);
      return `${m.toMolfile().replace(/^[^\n]*/, `BENCH-${i + 1}`)}\n>  <NAME>\nBench analogue ${i + 1}\n\n$$$$\n`;
    })
    .join('');
}

const settings = { ...loadSettings({ ...process.env, DATABASE_NAME: DB, LOG_LEVEL: process.env.LOG_LEVEL ?? 'error' }), importMaxBytes: 200 * 1024 * 1024 };
const admin = new pg.Client({ host: settings.pgHost, port: settings.pgPort, user: 'postgres', database: 'postgres' });
await admin.connect();
await admin.query(`DROP DATABASE IF EXISTS ${DB} WITH (FORCE)`);
await admin.query(`CREATE DATABASE ${DB}`);
await admin.end();
const orm = await MikroORM.init(ormConfig({ host: settings.pgHost, port: settings.pgPort, dbName: DB }));
await orm.getMigrator().up();
const em = orm.em.fork();
em.persist(em.create(User, { email: 'bench@bench.test', name: 'Bench', role: 'chemist', passwordHash: await hashPassword('bench-password-1') }));
await em.flush();

let t = performance.now();
const unique = smilesList(COUNT);
const file = sdf(unique);
console.log(`generated ${unique.length} distinct records (${(file.length / 1e6).toFixed(1)} MB SDF) in ${((performance.now() - t) / 1000).toFixed(1)} s (not timed below)`);

const app = createApp({ orm, settings });
const server = await new Promise<import('node:http').Server>((resolve) => {
  const s = app.listen(0, '127.0.0.1', () => resolve(s));
});
const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'bench@bench.test', password: 'bench-password-1' }) });
const { token } = (await login.json()) as { token: string };
const auth = { Authorization: `Bearer ${token}` };

t = performance.now();
const form = new FormData();
form.append('file', new Blob([file], { type: 'chemical/x-mdl-sdfile' }), 'bench.sdf');
const started = await fetch(`${base}/api/compounds/import`, { method: 'POST', headers: auth, body: form });
const job = (await started.json()) as { id: number };
if (!started.ok) throw new Error(`upload answered ${started.status}: ${JSON.stringify(job)}`);
let status: { status: string; processed: number; created: number; duplicates: number; errors: number; total: number };
let lastReport = 0;
for (;;) {
  await new Promise((r) => setTimeout(r, 250));
  status = (await (await fetch(`${base}/api/compounds/import/${job.id}`, { headers: auth })).json()) as typeof status;
  if (performance.now() - lastReport > 5000) {
    console.log(`  … ${status.processed}/${status.total}`);
    lastReport = performance.now();
  }
  if (status.status === 'done' || status.status === 'failed') break;
}
const seconds = (performance.now() - t) / 1000;
console.log(`import ${status.status}: ${status.created} created, ${status.duplicates} duplicates, ${status.errors} errors of ${status.total}`);
console.log(`bench:import ${status.total} records in ${seconds.toFixed(1)} s = ${(status.total / seconds).toFixed(0)} records/s end to end (parse, canonicalise, properties, insert; ${availableParallelism()} cores, worker pool); bar 200 records/s`);
t = performance.now();
await app.imports.drain();
console.log(`background pass: tautomer ID codes filled in ${((performance.now() - t) / 1000).toFixed(1)} s after the import (not part of the rate)`);
server.close();
await closeChemPool();
await orm.close();
