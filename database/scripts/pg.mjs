// Private PostgreSQL 15 cluster on 127.0.0.1 for Ligandry (plain Node, no npm dependencies,
// so it runs before `npm ci`). PostgreSQL refuses to run as root, so the cluster belongs to
// Debian's `postgres` system user. CLI: node database/scripts/pg.mjs init|start|stop|status|createdb NAME
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync, chownSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
export const DATA = join(ROOT, '.data');
const PG_VERSION = '15';
const BIN = `/usr/lib/postgresql/${PG_VERSION}/bin`;

export function pgPort() {
  return Number(process.env.PGPORT ?? 54329);
}

function log(message) {
  console.log(`[db] ${message}`);
}

function run(cmd, args, options = {}) {
  return execFileSync(cmd, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'], ...options });
}

function asPostgres(cmd, args) {
  return spawnSync('runuser', ['-u', 'postgres', '--', cmd, ...args], { encoding: 'utf8' });
}

/** Installs Debian's PostgreSQL 15 server when its binaries are missing. */
export function ensurePostgresInstalled() {
  if (existsSync(join(BIN, 'postgres'))) return;
  if (process.getuid?.() !== 0) {
    throw new Error(`PostgreSQL ${PG_VERSION} is not installed (${BIN} missing) and installing it needs root: run "apt-get install -y postgresql-${PG_VERSION}" as root.`);
  }
  log(`PostgreSQL ${PG_VERSION} not found: installing Debian's postgresql package (apt-get)…`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  execFileSync('apt-get', ['install', '-y', '-qq', `postgresql-${PG_VERSION}`], { stdio: 'inherit', env });
  if (!existsSync(join(BIN, 'postgres'))) throw new Error(`apt-get finished but ${BIN}/postgres is still missing`);
}

/**
 * The cluster lives under .data/pg unless the postgres user cannot reach that folder (a clone
 * inside a folder only root may enter): then under the system temporary folder, named after
 * the checkout, and the log says so.
 */
export function dataDir() {
  mkdirSync(DATA, { recursive: true });
  const preferred = join(DATA, 'pg-cluster');
  const marker = join(DATA, 'pg-location');
  if (existsSync(marker)) return readFileSync(marker, 'utf8').trim();
  mkdirSync(preferred, { recursive: true });
  chownSync(preferred, uid('postgres'), gid('postgres'));
  let chosen = preferred;
  if (asPostgres('test', ['-w', preferred]).status !== 0) {
    const tag = createHash('sha1').update(ROOT).digest('hex').slice(0, 10);
    chosen = join(tmpdir(), `ligandry-pg-${tag}`);
    mkdirSync(chosen, { recursive: true });
    chownSync(chosen, uid('postgres'), gid('postgres'));
    log(`the postgres user cannot write to ${preferred} (a parent folder is closed to it); using ${chosen} instead`);
  }
  writeFileSync(marker, chosen + '\n');
  return chosen;
}

function uid(name) {
  return Number(run('id', ['-u', name]).trim());
}
function gid(name) {
  return Number(run('id', ['-g', name]).trim());
}

function clusterPaths() {
  const base = dataDir();
  return { base, pgdata: join(base, 'pg'), logFile: join(base, 'pg.log') };
}

export function init() {
  ensurePostgresInstalled();
  const { pgdata } = clusterPaths();
  if (existsSync(join(pgdata, 'PG_VERSION'))) return false;
  log(`initialising a new cluster in ${pgdata}`);
  const r = asPostgres(join(BIN, 'initdb'), ['-D', pgdata, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8']);
  if (r.status !== 0) throw new Error(`initdb failed:\n${r.stderr || r.stdout}`);
  return true;
}

export function isRunning() {
  const { pgdata } = clusterPaths();
  if (!existsSync(join(pgdata, 'PG_VERSION'))) return false;
  return asPostgres(join(BIN, 'pg_ctl'), ['-D', pgdata, 'status']).status === 0;
}

function runningPort() {
  const { pgdata } = clusterPaths();
  const pidFile = join(pgdata, 'postmaster.pid');
  if (!existsSync(pidFile)) return undefined;
  return Number(readFileSync(pidFile, 'utf8').split('\n')[3]);
}

export function start() {
  init();
  const port = pgPort();
  const { base, pgdata, logFile } = clusterPaths();
  if (isRunning()) {
    const current = runningPort();
    if (current !== port && !process.env.PGPORT) {
      process.env.PGPORT = String(current);
      recordPort(current);
      return false;
    }
    recordPort(current);
    if (current !== port) {
      throw new Error(`this checkout's PostgreSQL already runs on port ${current}, not PGPORT=${port}; stop it first (npm run db:stop) or use PGPORT=${current}`);
    }
    return false;
  }
  if (portAnswers(port) || portTaken(port)) {
    if (process.env.PGPORT) {
      throw new Error(`port ${port} on 127.0.0.1 is already used by another program (not this checkout's cluster); set PGPORT to a free port`);
    }
    // The default port is taken (another checkout's cluster, say): use the next free one.
    let free = port + 1;
    while (free < port + 50 && (portAnswers(free) || portTaken(free))) free++;
    if (free >= port + 50) throw new Error(`ports ${port}–${port + 49} on 127.0.0.1 are all in use; set PGPORT to a free port`);
    log(`port ${port} is used by another server; this checkout's PostgreSQL takes port ${free} (set PGPORT to choose)`);
    process.env.PGPORT = String(free);
    return start();
  }
  const r = asPostgres(join(BIN, 'pg_ctl'), [
    '-D', pgdata, '-l', logFile, '-w', '-t', '60',
    '-o', `-c listen_addresses=127.0.0.1 -p ${port} -k ${base}`,
    'start',
  ]);
  if (r.status !== 0) {
    const tail = existsSync(logFile) ? readFileSync(logFile, 'utf8').split('\n').slice(-15).join('\n') : '';
    throw new Error(`PostgreSQL did not start on 127.0.0.1:${port}:\n${r.stdout}${r.stderr}\n${tail}`);
  }
  log(`PostgreSQL ${PG_VERSION} running on 127.0.0.1:${port} (data in ${pgdata})`);
  recordPort(port);
  return true;
}

/** The port the cluster runs on, for commands started later without PGPORT (api/src/config.ts). */
function recordPort(port) {
  writeFileSync(join(DATA, 'pg-port'), `${port}\n`);
}

export function stop() {
  const { pgdata } = clusterPaths();
  if (!isRunning()) {
    log('PostgreSQL is not running');
    return;
  }
  const r = asPostgres(join(BIN, 'pg_ctl'), ['-D', pgdata, '-w', '-m', 'fast', 'stop']);
  if (r.status !== 0) throw new Error(`pg_ctl stop failed: ${r.stderr}`);
  log('PostgreSQL stopped');
}

/** True when something listens on 127.0.0.1:port (a TCP connect succeeds). */
function portTaken(port) {
  const probe = `require('net').connect(${port}, '127.0.0.1').on('connect', () => process.exit(0)).on('error', () => process.exit(1))`;
  return spawnSync(process.execPath, ['-e', probe], { timeout: 3000 }).status === 0;
}

function portAnswers(port) {
  return spawnSync(join(BIN, 'pg_isready'), ['-h', '127.0.0.1', '-p', String(port), '-t', '1']).status === 0;
}

function psql(sql, database = 'postgres') {
  return run(join(BIN, 'psql'), ['-h', '127.0.0.1', '-p', String(pgPort()), '-U', 'postgres', '-d', database, '-v', 'ON_ERROR_STOP=1', '-tAc', sql]).trim();
}

export function databaseExists(name) {
  return psql(`SELECT 1 FROM pg_database WHERE datname = '${name.replace(/'/g, "''")}'`) === '1';
}

export function createDatabase(name) {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`database name "${name}" must be lower-case letters, digits and _`);
  if (databaseExists(name)) return false;
  psql(`CREATE DATABASE ${name} ENCODING 'UTF8' TEMPLATE template0`);
  log(`created database ${name}`);
  return true;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const [command, arg] = process.argv.slice(2);
  try {
    switch (command) {
      case 'init': init(); break;
      case 'start': start(); break;
      case 'stop': stop(); break;
      case 'status': log(isRunning() ? `running on port ${runningPort()} (data in ${clusterPaths().pgdata})` : 'not running'); break;
      case 'createdb': start(); createDatabase(arg ?? 'ligandry'); break;
      default:
        console.error('usage: node database/scripts/pg.mjs init|start|stop|status|createdb NAME');
        process.exit(2);
    }
  } catch (err) {
    console.error(`[db] ${err.message}`);
    process.exit(1);
  }
}
