// npm run bench:load — the API under load (DESIGN §7, bar: mixed reads at 200 requests/s with
// p95 ≤ 100 ms on a 2-core machine). Starts its own server (node api/src/main.ts, production
// settings, request logging at "warn") on a free loopback port against a separate database,
// re-created with the demo scenario on every run (ligandry_bench_load), unless BASE_URL points at a running one (which must
// hold the demo accounts; the soak writes to it). Then, with autocannon:
//   1. saturation: mixed reads (SAR table, compound pages, text and substructure search) from
//      8 connections, as fast as the server answers — first with the read cache bypassed on every
//      request (Cache-Control: no-cache: what the handlers alone sustain), then as clients send them;
//   2. the bar: the same mix at a fixed 200 requests/s;
//   3. a bounded soak of reads and writes (new compounds, new batches), after which every write
//      that was answered 201 is looked up in the database.
import autocannon from 'autocannon';
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { cpus } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { loadSettings, ROOT } from '../../api/src/config.js';
import { mulberry32 as random } from '../seeded-random.js';

const settings = loadSettings();
const DB = process.env.BENCH_LOAD_DATABASE_NAME ?? 'ligandry_bench_load';
const SECONDS = Number(process.env.BENCH_SECONDS ?? 20);
const SOAK_SECONDS = Number(process.env.BENCH_SOAK_SECONDS ?? 30);
const BAR_RATE = 200;
const BAR_P95_MS = 100;
const PASSWORD = 'demo-password-1';
const RUN = Date.now().toString(36);

function log(message: string) {
  console.log(`[bench:load] ${message}`);
}

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = createServer().listen(0, '127.0.0.1', () => {
      const { port } = s.address() as { port: number };
      s.close(() => resolve(port));
    });
  });
}

async function waitForHealth(baseUrl: string, child?: ChildProcess): Promise<void> {
  for (let i = 0; i < 1200; i++) {
    if (child && child.exitCode !== null) throw new Error(`the server exited with ${child.exitCode}`);
    try {
      if ((await fetch(`${baseUrl}/api/health`)).ok) return;
    } catch {
      // not yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`${baseUrl} did not answer within 2 minutes`);
}

async function startOwnServer(): Promise<{ baseUrl: string; child: ChildProcess }> {
  const env = { ...process.env, DATABASE_NAME: DB, PGPORT: String(settings.pgPort), DEMO: '1' };
  // A fresh database every run: the soak's writes of an earlier run would slow the reads of this one.
  if (!/^[a-z_][a-z0-9_]*$/.test(DB) || DB === 'ligandry') throw new Error(`refusing to recreate the database "${DB}"`);
  const admin = new pg.Client({ host: settings.pgHost, port: settings.pgPort, user: 'postgres', database: 'postgres' });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS "${DB}" WITH (FORCE)`);
  await admin.end();
  spawnSync(process.execPath, [join(ROOT, 'database', 'scripts', 'pg.mjs'), 'createdb', DB], { cwd: ROOT, env, stdio: 'inherit' });
  log(`migrating and seeding the demo scenario into a fresh ${DB}…`);
  const m = spawnSync(process.execPath, ['--import', 'tsx', join(ROOT, 'database', 'scripts', 'migrate.ts')], { cwd: ROOT, env, stdio: 'inherit' });
  if (m.status !== 0) throw new Error('migrate/seed failed');
  const port = await freePort();
  const child = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'api', 'src', 'main.ts')], {
    cwd: ROOT,
    env: { ...env, HOST: '127.0.0.1', PORT: String(port), NODE_ENV: 'production', LOG_LEVEL: 'warn' },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const baseUrl = `http://127.0.0.1:${port}`;
  await waitForHealth(baseUrl, child);
  return { baseUrl, child };
}

async function json<T>(baseUrl: string, path: string, init: RequestInit = {}): Promise<T> {
  const res = await fetch(`${baseUrl}${path}`, init);
  if (!res.ok) throw new Error(`${init.method ?? 'GET'} ${path}: ${res.status} ${await res.text()}`);
  return (await res.json()) as T;
}

async function signIn(baseUrl: string, email: string): Promise<string> {
  const a = await json<{ token: string }>(baseUrl, '/api/auth/login', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email, password: PASSWORD }) });
  return a.token;
}


function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((sorted.length * p) / 100) - 1)];
}

interface Phase {
  name: string;
  requests: number;
  seconds: number;
  rps: number;
  p50: number;
  p95: number;
  p99: number;
  max: number;
  non2xx: number;
  errors: number;
  cacheHits: number;
  cacheMisses: number;
}

interface Context {
  baseUrl: string;
  readToken: string;
  writeToken: string;
  projectIds: number[];
  compoundIds: number[];
}

const FRAGMENTS = ['c1ccccc1', 'C(=O)N', 'c1ccncc1', 'N1CCNCC1', 'c1ccc(F)cc1', 'S(=O)(=O)N'];

type Kind = 'sar' | 'compound' | 'search-text' | 'search-sub' | 'write-compound' | 'write-batch';

function readRequest(ctx: Context, rnd: () => number): { kind: Kind; method: string; path: string; body?: string } {
  const r = rnd();
  if (r < 0.3) return { kind: 'sar', method: 'GET', path: `/api/sar?project=${ctx.projectIds[Math.floor(rnd() * ctx.projectIds.length)]}` };
  if (r < 0.7) return { kind: 'compound', method: 'GET', path: `/api/compounds/${ctx.compoundIds[Math.floor(rnd() * ctx.compoundIds.length)]}` };
  if (r < 0.85) return { kind: 'search-text', method: 'POST', path: '/api/compounds/search', body: JSON.stringify({ text: `CPD-0000${Math.floor(rnd() * 90) + 10}` }) };
  return { kind: 'search-sub', method: 'POST', path: '/api/compounds/search', body: JSON.stringify({ substructure: FRAGMENTS[Math.floor(rnd() * FRAGMENTS.length)] }) };
}

/** A new invented structure per n (an N-alkyl N-hydroxyalkyl benzamide): unique within a run. */
function soakSmiles(n: number, salt: number): string {
  const a = 1 + (n % 9);
  const b = 1 + (Math.floor(n / 9) % 9);
  const c = 1 + (Math.floor(n / 81) % 9);
  const d = 1 + ((Math.floor(n / 729) + salt) % 9);
  return `C${'C'.repeat(a)}N(C${'C'.repeat(b)}O)C(=O)c1ccc(O${'C'.repeat(c)})c(S${'C'.repeat(d)})c1`;
}

async function run(name: string, ctx: Context, options: { connections: number; seconds: number; rate?: number; writeShare?: number; noCache?: boolean }, writes?: { compounds: string[]; batches: string[]; refused: number }): Promise<Phase> {
  const rnd = random(name.length * 7919 + 17);
  const times: number[] = [];
  const cache = { hit: 0, miss: 0 };
  let n = 0;
  const salt = Math.floor(Date.now() / 1000) % 9;
  const instance = autocannon({
    url: ctx.baseUrl,
    connections: options.connections,
    duration: options.seconds,
    ...(options.rate ? { overallRate: options.rate } : {}),
    headers: { 'content-type': 'application/json' },
    requests: [
      {
        setupRequest: (req: Record<string, unknown>, context: Record<string, unknown>) => {
          const write = options.writeShare && rnd() < options.writeShare;
          let r: { kind: Kind; method: string; path: string; body?: string };
          if (write && rnd() < 0.5) {
            const k = n++;
            r = { kind: 'write-compound', method: 'POST', path: '/api/compounds', body: JSON.stringify({ structure: soakSmiles(k, salt), name: `SOAK-${RUN}-${k}`, confirm: true, batch: { purity: 99, notebookRef: `SOAK-${RUN}-C${k}` } }) };
          } else if (write) {
            const k = n++;
            r = { kind: 'write-batch', method: 'POST', path: `/api/compounds/${ctx.compoundIds[Math.floor(rnd() * ctx.compoundIds.length)]}/batches`, body: JSON.stringify({ purity: 98, notebookRef: `SOAK-${RUN}-B${k}` }) };
          } else {
            r = readRequest(ctx, rnd);
          }
          context.kind = r.kind;
          return { ...req, method: r.method, path: r.path, body: r.body, headers: { ...(req.headers as object), 'content-type': 'application/json', authorization: `Bearer ${write ? ctx.writeToken : ctx.readToken}`, ...(options.noCache ? { 'cache-control': 'no-cache' } : {}) } };
        },
        onResponse: (status: number, body: string, context: Record<string, unknown>, headers?: Record<string, string>) => {
          const state = Object.entries(headers ?? {}).find(([k]) => k.toLowerCase() === 'x-read-cache')?.[1];
          if (state === 'hit') cache.hit++;
          else if (state === 'miss') cache.miss++;
          if (!writes) return;
          if (context.kind === 'write-compound') {
            if (status === 201) writes.compounds.push((JSON.parse(body) as { registryNumber: string }).registryNumber);
            else writes.refused++;
          } else if (context.kind === 'write-batch') {
            if (status === 201) writes.batches.push((JSON.parse(body) as { batchNumber: string }).batchNumber);
            else writes.refused++;
          }
        },
      },
    ],
  });
  instance.on('response', (_client, _status, _bytes, responseTime) => times.push(responseTime));
  const result = await instance;
  times.sort((a, b) => a - b);
  const phase: Phase = {
    name,
    requests: result.requests.total,
    seconds: result.duration,
    rps: result.requests.total / result.duration,
    p50: percentile(times, 50),
    p95: percentile(times, 95),
    p99: percentile(times, 99),
    max: times[times.length - 1] ?? NaN,
    non2xx: result.non2xx,
    errors: result.errors + result.timeouts,
    cacheHits: cache.hit,
    cacheMisses: cache.miss,
  };
  log(`${name}: ${phase.requests} requests in ${phase.seconds.toFixed(1)} s = ${phase.rps.toFixed(1)} req/s; latency p50 ${phase.p50.toFixed(1)} ms, p95 ${phase.p95.toFixed(1)} ms, p99 ${phase.p99.toFixed(1)} ms, max ${phase.max.toFixed(0)} ms; non-2xx ${phase.non2xx}, errors ${phase.errors}; read cache ${cache.hit} hits, ${cache.miss} misses`);
  return phase;
}

async function verifyWrites(writes: { compounds: string[]; batches: string[] }, database: string): Promise<{ compoundsMissing: string[]; batchesMissing: string[] }> {
  const client = new pg.Client({ host: settings.pgHost, port: settings.pgPort, user: 'postgres', database });
  await client.connect();
  try {
    const c = await client.query<{ registry_number: string }>(
      `select c.registry_number from compound c
        where c.registry_number = any($1)
          and exists (select 1 from batch b where b.compound_id = c.id and b.sequence = 1)
          and exists (select 1 from audit_event a where a.entity_type = 'Compound' and a.entity_id = c.id::text)`,
      [writes.compounds],
    );
    const b = await client.query<{ batch_number: string }>(`select batch_number from batch where batch_number = any($1) and notebook_ref like $2`, [writes.batches, `SOAK-${RUN}-%`]);
    const haveC = new Set(c.rows.map((r) => r.registry_number));
    const haveB = new Set(b.rows.map((r) => r.batch_number));
    return { compoundsMissing: writes.compounds.filter((x) => !haveC.has(x)), batchesMissing: writes.batches.filter((x) => !haveB.has(x)) };
  } finally {
    await client.end();
  }
}

let own: { baseUrl: string; child: ChildProcess } | undefined;
try {
  const external = process.env.BASE_URL?.replace(/\/+$/, '');
  if (!external) own = await startOwnServer();
  const baseUrl = external ?? own!.baseUrl;
  const database = external ? (process.env.DATABASE_NAME ?? 'ligandry') : DB;
  log(`target ${baseUrl} (database ${database}); ${cpus().length} CPU cores; ${SECONDS} s per read phase, ${SOAK_SECONDS} s soak`);
  const readToken = await signIn(baseUrl, 'lead@demo.test');
  const writeToken = await signIn(baseUrl, 'chemist@demo.test');
  const projects = await json<{ items: { id: number; code: string }[] }>(baseUrl, '/api/projects', { headers: { Authorization: `Bearer ${readToken}` } });
  const compounds = await json<{ items: { id: number }[]; total: number }>(baseUrl, '/api/compounds?pageSize=200', { headers: { Authorization: `Bearer ${readToken}` } });
  const ctx: Context = { baseUrl, readToken, writeToken, projectIds: projects.items.map((p) => p.id), compoundIds: compounds.items.map((c) => c.id) };
  if (!ctx.projectIds.length || !ctx.compoundIds.length) throw new Error('the database holds no projects or compounds: seed the demo scenario first');
  log(`mix: 30 % GET /api/sar?project=… (${ctx.projectIds.length} projects), 40 % GET /api/compounds/:id (${ctx.compoundIds.length} of ${compounds.total} compounds), 15 % text search, 15 % substructure search`);

  await run('warm-up', ctx, { connections: 4, seconds: 3 });
  // Unloaded cost of each kind of request: 15 in a row, one at a time.
  const kindRnd = random(99);
  const perKind: string[] = [];
  for (const kind of ['sar', 'compound', 'search-text', 'search-sub'] as Kind[]) {
    const cold: number[] = [];
    const warm: number[] = [];
    while (cold.length < 15) {
      const r = readRequest(ctx, kindRnd);
      if (r.kind !== kind) continue;
      // Cold: the read cache bypassed (Cache-Control: no-cache), then the same request again, served from it.
      for (const [list, extra] of [[cold, { 'cache-control': 'no-cache' }], [warm, {}]] as const) {
        const t = performance.now();
        const res = await fetch(`${baseUrl}${r.path}`, { method: r.method, body: r.body, headers: { 'content-type': 'application/json', authorization: `Bearer ${readToken}`, ...extra } });
        await res.arrayBuffer();
        list.push(performance.now() - t);
      }
    }
    cold.sort((a, b) => a - b);
    warm.sort((a, b) => a - b);
    perKind.push(`${kind} median ${percentile(cold, 50).toFixed(1)} ms computed, ${percentile(warm, 50).toFixed(1)} ms from the read cache`);
  }
  log(`one request at a time: ${perKind.join('; ')}`);
  // The same mix with the read cache bypassed on every request: what the handlers alone sustain.
  const uncached = await run('saturation, read cache bypassed (8 connections)', ctx, { connections: 8, seconds: SECONDS, noCache: true });
  const saturation = await run('saturation (8 connections)', ctx, { connections: 8, seconds: SECONDS });
  const bar = await run(`fixed rate ${BAR_RATE} req/s`, ctx, { connections: 16, seconds: SECONDS, rate: BAR_RATE });
  const writes = { compounds: [] as string[], batches: [] as string[], refused: 0 };
  const soak = await run('soak (reads + 25 % writes, 4 connections)', ctx, { connections: 4, seconds: SOAK_SECONDS, writeShare: 0.25 }, writes);
  // Requests autocannon dropped at the end may still be committing: let them settle first.
  await new Promise((r) => setTimeout(r, 1000));
  const missing = await verifyWrites(writes, database);

  const meetsBar = bar.rps >= BAR_RATE * 0.97 && bar.p95 <= BAR_P95_MS && bar.non2xx === 0 && bar.errors === 0;
  const writesKept = missing.compoundsMissing.length === 0 && missing.batchesMissing.length === 0;
  console.log('');
  console.log('| phase | requests | req/s | p50 ms | p95 ms | p99 ms | non-2xx | errors | read cache hits / misses |');
  console.log('|---|---|---|---|---|---|---|---|---|');
  for (const p of [uncached, saturation, bar, soak]) console.log(`| ${p.name} | ${p.requests} | ${p.rps.toFixed(1)} | ${p.p50.toFixed(1)} | ${p.p95.toFixed(1)} | ${p.p99.toFixed(1)} | ${p.non2xx} | ${p.errors} | ${p.cacheHits} / ${p.cacheMisses} |`);
  console.log('');
  console.log(`Bar (${BAR_RATE} req/s of mixed reads with p95 ≤ ${BAR_P95_MS} ms): ${meetsBar ? 'MET' : 'NOT MET'} — achieved ${bar.rps.toFixed(1)} req/s at p95 ${bar.p95.toFixed(1)} ms; the most the server answered was ${saturation.rps.toFixed(1)} req/s (p95 ${saturation.p95.toFixed(1)} ms).`);
  console.log(`Soak writes: ${writes.compounds.length} compounds and ${writes.batches.length} batches answered 201, ${writes.refused} refused (409 duplicates or 4xx); in the database afterwards: ${writes.compounds.length - missing.compoundsMissing.length} compounds with their first batch and audit event, ${writes.batches.length - missing.batchesMissing.length} batches. ${writesKept ? 'Every write is there.' : `MISSING: ${[...missing.compoundsMissing, ...missing.batchesMissing].join(', ')}`}`);
  mkdirSync(join(ROOT, 'test-output'), { recursive: true });
  writeFileSync(join(ROOT, 'test-output', 'bench-load.json'), JSON.stringify({ at: new Date().toISOString(), cores: cpus().length, uncached, saturation, bar, soak, writes: { compounds: writes.compounds.length, batches: writes.batches.length, refused: writes.refused, missing }, meetsBar }, null, 2));
  process.exitCode = writesKept ? 0 : 1;
} catch (err) {
  console.error(`[bench:load] ${(err as Error).message}`);
  process.exitCode = 1;
} finally {
  if (own) {
    own.child.kill('SIGTERM');
    await new Promise((r) => own!.child.once('exit', r));
  }
}
