// npm run bench:search — substructure search over 100,000 registered compounds (DESIGN §7, bar:
// median ≤ 150 ms per query). The benchmark database (ligandry_bench_search) is built once,
// deterministically: the NCI open set shipped in Debian's rdkit-data (first_5K.smi) plus invented
// enumerated analogues, registered through the registry's own bulk path (parent, ID code,
// properties, fingerprint). Each query then runs through searchCompounds (SQL screen + worker
// pool) and as a full atom-by-atom scan of every row, and the hit sets must be identical. When
// Debian's postgresql-15-rdkit is installed, the same queries run through its cartridge too.
import { MikroORM } from '@mikro-orm/postgresql';
import pg from 'pg';
import { existsSync, readFileSync } from 'node:fs';
import { loadSettings } from '../../api/src/config.js';
import { analyseInPool, closeChemPool, matchInPool, POOL_THREADS } from '../../api/src/services/chem-pool.js';
import { searchCompounds } from '../../api/src/services/compound-search.service.js';
import { closeShards, loadShards, runningThreads, STORE_CAPACITY } from '../../api/src/services/match-shards.js';
import { registerMany, type BulkEntry } from '../../api/src/services/registry.service.js';
import { User } from '../../api/src/entities/user.entity.js';
import { ormConfig } from '../mikro-orm.config.js';

const TARGET = Number(process.argv[2] ?? 100_000);
const DB = process.env.BENCH_SEARCH_DATABASE_NAME ?? 'ligandry_bench_search';
const NCI = '/usr/share/RDKit/Data/NCI/first_5K.smi';
const RUNS = 7;

// Invented scaffolds with two attachment points, and substituents, for the enumerated analogues.
const SCAFFOLDS = [
  '{A}c1ccc2OC(CN{B})CCc2c1', 'O=C(N{B})C1CCN(Cc2ccc({A})cn2)CC1', '{A}c1ccc(cc1)C(=O)N{B}', 'O=S(=O)(N{B})c1ccc({A})s1',
  '{A}c1ccc2[nH]cc(CCN{B})c2c1', '{A}c1cccc(c1)N1CCN(C{B})CC1', 'O=C(C{B})Nc1ccc({A})cc1', '{A}c1ccc(OCC(O)CN{B})cc1',
  '{A}c1ncc(cn1)C(=O)N{B}', 'O=C1N({B})CCc2cc({A})ccc12', '{A}C1CCN(CC1)C(=O)c1ccc{B}o1', '{A}c1ccc2nc(N{B})sc2c1',
  'O=C(O{B})c1cc({A})ccn1', 'O=C(N{B})c1cc({A})c2OCOc2c1', 'C1CC(CCN1{B})Oc1ccc({A})cc1', '{A}c1ccc(cc1)-c1nnc(S{B})o1',
];
const A = ['', 'F', 'Cl', 'Br', 'C', 'OC', 'C#N', 'C(F)(F)F', 'O', 'N', 'CC', 'OCC', 'SC', 'N(C)C', 'C(=O)C', 'OC(F)(F)F', 'C(=O)O', 'S(=O)(=O)C', 'C1CC1', 'c1ccccc1', 'N1CCOCC1', 'C#C'];
const B = ['C', 'CC', 'CCC', 'CC(C)C', 'C1CC1', 'CC1CC1', 'C1CCCC1', 'C1CCCCC1', 'c1ccccc1', 'Cc1ccccc1', 'c1ccc(F)cc1', 'c1ccc(Cl)cc1', 'c1ccncc1', 'c1cccnc1', 'CCOC', 'CCN(C)C', 'CC(F)(F)F', 'c1cccs1', 'C1CCOCC1', 'CCc1ccccc1', 'c1ccc(OC)cc1', 'c1ccc(C#N)cc1', 'CCCC', 'CCCCC', 'C(C)(C)C', 'c1cnccn1', 'CCO', 'CCCO', 'CC(=O)N', 'c1ccc2ccccc2c1', 'C1CCNCC1', 'CCc1cccs1', 'CC#N', 'c1ccoc1', 'CCSC', 'CC(C)(C)O', 'c1ncccn1', 'C1CC(F)(F)C1', 'CCC(F)(F)F', 'c1cc(F)cc(F)c1', 'c1ccc(O)cc1', 'CCN1CCOCC1', 'C1COC1', 'CC1CCCO1', 'c1cnoc1', 'c1cscn1', 'c1ccc(C)nc1', 'Cc1cccs1', 'CCCC#N', 'C(C)C(=O)N', 'CC(C)N', 'c1ccc2[nH]ccc2c1', 'c1ccc(N)cc1', 'CCCCN', 'Cc1ccon1', 'c1ccc(cc1)S(=O)(=O)N', 'CC1CCCCC1', 'C1CCC(O)CC1', 'CCN', 'c1ccc(Br)cc1'];
const LINKERS = ['', 'C', 'CC', 'CCC', 'CO', 'CCO'];

const QUERIES: { label: string; smiles: string }[] = [
  { label: 'benzene ring (very common)', smiles: 'c1ccccc1' },
  { label: 'pyridine ring', smiles: 'c1ccncc1' },
  { label: 'piperidine ring', smiles: 'C1CCNCC1' },
  { label: 'chroman scaffold', smiles: 'c1ccc2OCCCc2c1' },
  { label: 'piperidine-4-carboxamide scaffold', smiles: 'O=C(N)C1CCNCC1' },
  { label: 'indole ring', smiles: 'c1ccc2[nH]ccc2c1' },
  { label: 'carboxylic acid or ester', smiles: 'C(=O)O' },
  { label: 'sulfonamide', smiles: 'S(=O)(=O)N' },
  { label: 'thiophene ring', smiles: 'c1ccsc1' },
  { label: 'trifluoromethoxy aryl', smiles: 'FC(F)(F)Oc1ccccc1' },
  { label: 'oxadiazole thioether (rare)', smiles: 'c1nnc(S)o1' },
  { label: 'nitro group, C-attached', smiles: 'C[N+](=O)[O-]' },
];

function enumerated(): string[] {
  // Substituent ring closures get their own numbers (%21…, %31…) so they never clash with the scaffold's.
  const ring = (x: string, base: number) => x.replace(/(\d)/g, (_m, d: string) => `%${base + Number(d)}`);
  const out: string[] = [];
  for (const linker of LINKERS) {
    for (const s of SCAFFOLDS) {
      for (const a of A) {
        for (const b of B) {
          const ra = ring(a, 30);
          out.push(s.replace('({A})', ra ? `(${ra})` : '').replace('{A}', ra).replace('{B}', linker + ring(b, 20)));
        }
      }
    }
  }
  return out;
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const p95 = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.ceil(xs.length * 0.95) - 1)];
const ms = (x: number) => `${x.toFixed(0).padStart(6)} ms`;

const settings = loadSettings({ ...process.env, DATABASE_NAME: DB, LOG_LEVEL: 'error' });
const admin = new pg.Client({ host: settings.pgHost, port: settings.pgPort, user: 'postgres', database: 'postgres' });
await admin.connect();
const exists = (await admin.query('select 1 from pg_database where datname = $1', [DB])).rowCount;
if (!exists) await admin.query(`CREATE DATABASE ${DB}`);
await admin.end();
const orm = await MikroORM.init(ormConfig({ host: settings.pgHost, port: settings.pgPort, dbName: DB }, { pool: { min: 0, max: 4 } }));
await orm.getMigrator().up();
const knex = orm.em.getConnection().getKnex();

let user = await orm.em.fork().findOne(User, { email: 'bench@bench.test' });
if (!user) {
  const em = orm.em.fork();
  user = em.create(User, { email: 'bench@bench.test', name: 'Bench', role: 'chemist', passwordHash: 'x' });
  await em.persist(user).flush();
}

const count = async () => Number((await knex.raw<{ rows: { n: string }[] }>('select count(*) as n from compound')).rows[0].n);
let have = await count();
if (have < TARGET) {
  if (!existsSync(NCI)) throw new Error(`${NCI} is missing: install Debian's rdkit-data (apt-get install -y rdkit-data)`);
  const nci = readFileSync(NCI, 'utf8').split('\n').filter(Boolean).map((l) => l.split(/\s+/)[0]);
  const source = [...nci, ...enumerated()];
  console.log(`[bench] building ${TARGET} compounds in ${DB} from ${nci.length} NCI molecules and ${source.length - nci.length} invented analogues (once)…`);
  const known = new Set((await knex.raw<{ rows: { id_code: string }[] }>('select id_code from compound')).rows.map((r) => r.id_code));
  const t0 = Date.now();
  for (let i = 0; i < source.length && have < TARGET; i += 1000) {
    const chunk = source.slice(i, i + 1000).map((text, k) => ({ index: i + k, text }));
    const parsed = await analyseInPool(chunk);
    const entries: BulkEntry[] = [];
    for (const r of parsed) {
      if (!r.ok || known.has(r.parsed.idCode) || have + entries.length >= TARGET) continue;
      known.add(r.parsed.idCode);
      entries.push({ parsed: r.parsed, input: { name: `bench ${r.index + 1}` }, submitted: source[r.index] });
    }
    await knex.transaction((trx) => registerMany(trx, user!.id, 'BEN', entries, 'bench'));
    have += entries.length;
    if ((i / 1000) % 10 === 0) console.log(`[bench]   ${have} registered (${((Date.now() - t0) / 1000).toFixed(0)} s)`);
  }
  await knex.raw('vacuum analyze compound');
  console.log(`[bench] built ${have} compounds in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
}

// RDKit's PostgreSQL cartridge, when Debian's postgresql-15-rdkit is installed: a third column.
let rdkit = false;
try {
  await knex.raw('create extension if not exists rdkit');
  const built = (await knex.raw<{ rows: { n: string }[] }>("select count(*) as n from information_schema.tables where table_name = 'bench_rdkit_mol'")).rows[0].n;
  if (built === '0') {
    console.log('[bench] building the RDKit cartridge table (mol_from_smiles + GiST index)…');
    await knex.raw('create table bench_rdkit_mol as select id, mol_from_smiles(smiles::cstring) as m from compound');
    await knex.raw('create index bench_rdkit_mol_m on bench_rdkit_mol using gist (m)');
    await knex.raw('analyze bench_rdkit_mol');
  }
  rdkit = true;
} catch (err) {
  console.log(`[bench] RDKit cartridge not available (${String((err as Error).message).split('\n')[0]}); install postgresql-15-rdkit for the third column`);
}

const all = (await knex.raw<{ rows: { id: number; id_code: string }[] }>('select id, id_code from compound order by number')).rows.map((r) => [Number(r.id), r.id_code] as [number, string]);
// The server decodes every compound into its search threads' stores once after a start (in the
// background); the benchmark does the same before timing, and reports what it cost.
const tLoad = performance.now();
const kept = await loadShards(all);
console.log(`[bench] ${all.length} compounds, ${runningThreads()} search threads holding ${kept} decoded molecules (at most ${STORE_CAPACITY} per thread; loaded in ${((performance.now() - tLoad) / 1000).toFixed(1)} s), ${RUNS} runs per query (first run discarded as warm-up)\n`);

async function fullScan(smiles: string): Promise<Set<number>> {
  const hits = new Set<number>();
  const chunks: [number, string][][] = [];
  for (let i = 0; i < all.length; i += 2000) chunks.push(all.slice(i, i + 2000));
  let next = 0;
  await Promise.all(Array.from({ length: POOL_THREADS }, async () => {
    while (next < chunks.length) {
      const chunk = chunks[next++];
      for (const [id] of await matchInPool({ query: smiles, targets: chunk })) hits.add(id);
    }
  }));
  return hits;
}

const rows: string[] = [];
const medians: number[] = [];
const pageMedians: number[] = [];
let allEqual = true;
for (const q of QUERIES) {
  const times: number[] = [];
  let result: Awaited<ReturnType<typeof searchCompounds>> | undefined;
  let ids: Set<number> = new Set();
  const firstPage: number[] = [];
  for (let run = 0; run <= RUNS; run++) {
    const t = performance.now();
    result = await searchCompounds(orm.em.fork(), { substructure: { structure: q.smiles }, page: 1, pageSize: 25, timeLimitMs: 600_000, reuse: false });
    if (run > 0) times.push(performance.now() - t);
    // The page alone (count "first-page"), as the search screen asks first.
    const t1 = performance.now();
    const page = await searchCompounds(orm.em.fork(), { substructure: { structure: q.smiles }, page: 1, pageSize: 25, timeLimitMs: 600_000, count: 'first-page', reuse: false });
    if (run > 0) firstPage.push(performance.now() - t1);
    const same = page.items.map((c) => c.id).join() === result.items.map((c) => c.id).join();
    if (!same) throw new Error(`${q.label}: the first page alone differs from the first page of the exact search`);
  }
  // The complete hit set (every page) to compare with the full scan.
  const complete = await searchCompounds(orm.em.fork(), { substructure: { structure: q.smiles }, page: 1, pageSize: 1_000_000, timeLimitMs: 600_000, reuse: false });
  ids = new Set(complete.items.map((c) => c.id));
  const t0 = performance.now();
  const scan = await fullScan(q.smiles);
  const scanMs = performance.now() - t0;
  const equal = scan.size === ids.size && [...scan].every((id) => ids.has(id));
  allEqual &&= equal && complete.complete;
  let rdkitText = '';
  if (rdkit) {
    const rt: number[] = [];
    let n = 0;
    for (let run = 0; run < 3; run++) {
      const t = performance.now();
      n = Number((await knex.raw<{ rows: { n: string }[] }>('select count(*) as n from bench_rdkit_mol where m @> ?::qmol', [q.smiles])).rows[0].n);
      rt.push(performance.now() - t);
    }
    rdkitText = ` | ${ms(median(rt))} | ${String(n).padStart(6)}`;
  }
  medians.push(median(times));
  pageMedians.push(median(firstPage));
  console.log(`[bench]   ${q.label}: exact total median ${median(times).toFixed(0)} ms, first page median ${median(firstPage).toFixed(0)} ms`);
  rows.push(`| ${q.label.padEnd(34)} | ${q.smiles.padEnd(20)} | ${ms(median(times))} | ${ms(p95(times))} | ${ms(median(firstPage))} | ${ms(p95(firstPage))} | ${String(result!.stats.screened).padStart(7)} | ${String(ids.size).padStart(6)} | ${ms(scanMs)} | ${equal ? 'same' : 'DIFFERENT'}${rdkitText} |`);
}

console.log(`| query                              | SMILES               | exact total: median | p95 | first page: median | p95 | screen  | hits   | full scan | hits vs scan${rdkit ? ' | RDKit cartridge | RDKit hits' : ''} |`);
console.log(`|---|---|---|---|---|---|---|---|---|---${rdkit ? '|---|---' : ''}|`);
for (const r of rows) console.log(r);
const overall = median(medians);
const overallPage = median(pageMedians);
console.log(`\nmedian over the ${QUERIES.length} queries, exact total: ${overall.toFixed(0)} ms (bar: ≤ 150 ms) — ${overall <= 150 ? 'met' : 'NOT met'}`);
console.log(`median over the ${QUERIES.length} queries, first page (count "first-page"): ${overallPage.toFixed(0)} ms (bar: ≤ 150 ms) — ${overallPage <= 150 ? 'met' : 'NOT met'}`);
console.log(`hits identical to the full scan for every query: ${allEqual ? 'yes' : 'NO'}; every first page equal to the exact search's first page: yes`);
console.log('(screen = rows left by the fingerprint screen and checked atom by atom; RDKit hits may differ where the aromaticity models differ)');
await closeChemPool();
await closeShards();
await orm.close();
