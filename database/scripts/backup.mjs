// Backups of the private cluster (issue 9): `npm run backup` writes a pg_dump custom-format file
// of the database to .data/backups (git-ignored); `npm run restore` loads one back. pg_dump and
// pg_restore run as the `postgres` system user (like pg.mjs); the dump streams through this
// process, so the backup folder need not be writable by that user.
//
//   npm run backup [-- --database NAME] [--out DIR]
//   npm run restore [-- FILE] [--into NAME]
//
// A restore never overwrites in place: the dump goes into a new database first; only when that
// succeeded is the current database renamed to NAME_before_restore_<time> (kept, not dropped) and
// the new one takes its name. Plain Node, no npm dependencies.
import { spawn, spawnSync } from 'node:child_process';
import { createReadStream, createWriteStream, existsSync, mkdirSync, readdirSync, renameSync, statSync, unlinkSync } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { DATA, pgPort, start as startPostgres } from './pg.mjs';

const BIN = '/usr/lib/postgresql/15/bin';
export const BACKUPS = join(DATA, 'backups');

function log(message) {
  console.log(`[backup] ${message}`);
}

/** Runs a PostgreSQL client as the postgres system user when we are root, else as ourselves. */
function pgCommand(tool, args) {
  const cmd = join(BIN, tool);
  return process.getuid?.() === 0 ? ['runuser', ['-u', 'postgres', '--', cmd, ...args]] : [cmd, args];
}

function connection() {
  return ['-h', '127.0.0.1', '-p', String(pgPort()), '-U', 'postgres'];
}

function checkName(name) {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`database name "${name}" must be lower-case letters, digits and _`);
  return name;
}

function psql(sql, database = 'postgres') {
  const [cmd, args] = pgCommand('psql', [...connection(), '-d', database, '-v', 'ON_ERROR_STOP=1', '-tAc', sql]);
  const r = spawnSync(cmd, args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`psql failed: ${r.stderr || r.stdout}`);
  return r.stdout.trim();
}

function exists(name) {
  return psql(`SELECT 1 FROM pg_database WHERE datname = '${checkName(name)}'`) === '1';
}

/** Runs a tool, piping `input` (a file) to its stdin and/or its stdout to `output` (a file). */
function runPiped(tool, args, { input, output } = {}) {
  return new Promise((resolvePromise, reject) => {
    const [cmd, full] = pgCommand(tool, args);
    const child = spawn(cmd, full, { stdio: [input ? 'pipe' : 'ignore', output ? 'pipe' : 'inherit', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    if (input) createReadStream(input).on('error', reject).pipe(child.stdin);
    let written = Promise.resolve();
    if (output) {
      const file = createWriteStream(output, { mode: 0o600 });
      child.stdout.pipe(file);
      written = new Promise((ok, fail) => file.on('finish', ok).on('error', fail));
    }
    child.on('error', reject);
    child.on('close', (code) => {
      written.then(() => (code === 0 ? resolvePromise(stderr) : reject(new Error(`${tool} exited with ${code}: ${stderr.trim()}`))), reject);
    });
  });
}

function stamp() {
  return new Date().toISOString().replace(/[-:]/g, '').replace(/\..*/, '').replace('T', '-');
}

export async function backup({ database = process.env.DATABASE_NAME || 'ligandry', out = BACKUPS } = {}) {
  checkName(database);
  startPostgres();
  if (!exists(database)) throw new Error(`there is no database "${database}" on 127.0.0.1:${pgPort()}`);
  mkdirSync(out, { recursive: true });
  const file = join(out, `${database}-${stamp()}.dump`);
  const partial = `${file}.partial`;
  try {
    await runPiped('pg_dump', [...connection(), '-d', database, '--format=custom', '--no-owner', '--no-privileges'], { output: partial });
  } catch (err) {
    if (existsSync(partial)) unlinkSync(partial);
    throw err;
  }
  // Only a complete dump gets the final name, so a crash mid-backup never looks like a backup.
  renameSync(partial, file);
  log(`backed up ${database} to ${file} (${(statSync(file).size / 1024).toFixed(0)} kB)`);
  return file;
}

export function latestBackup(dir = BACKUPS, database) {
  if (!existsSync(dir)) return undefined;
  const files = readdirSync(dir)
    .filter((f) => f.endsWith('.dump') && (!database || f.startsWith(`${database}-`)))
    .sort();
  return files.length ? join(dir, files[files.length - 1]) : undefined;
}

export async function restore({ file, into = process.env.DATABASE_NAME || 'ligandry' } = {}) {
  checkName(into);
  startPostgres();
  const source = file ? resolve(file) : latestBackup(BACKUPS, into) ?? latestBackup(BACKUPS);
  if (!source || !existsSync(source)) throw new Error(file ? `no backup file ${file}` : `no backups in ${BACKUPS}: run "npm run backup" first`);
  const staging = checkName(`${into}_restoring`.slice(0, 63));
  psql(`DROP DATABASE IF EXISTS ${staging} WITH (FORCE)`);
  psql(`CREATE DATABASE ${staging} ENCODING 'UTF8' TEMPLATE template0`);
  try {
    await runPiped('pg_restore', [...connection(), '-d', staging, '--no-owner', '--no-privileges', '--exit-on-error', '--single-transaction'], { input: source });
  } catch (err) {
    psql(`DROP DATABASE IF EXISTS ${staging} WITH (FORCE)`);
    throw err;
  }
  let kept;
  if (exists(into)) {
    kept = checkName(`${into}_before_restore_${stamp().replace('-', '_')}`.slice(0, 63));
    psql(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = '${into}' AND pid <> pg_backend_pid()`);
    psql(`ALTER DATABASE ${into} RENAME TO ${kept}`);
  }
  psql(`ALTER DATABASE ${staging} RENAME TO ${into}`);
  log(`restored ${basename(source)} into ${into}${kept ? ` (the previous database is kept as ${kept}; drop it when you no longer need it)` : ''}`);
  return { source, into, kept };
}

function option(args, name) {
  const i = args.indexOf(name);
  if (i < 0) return undefined;
  const value = args[i + 1];
  args.splice(i, 2);
  return value;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const [command, ...rest] = process.argv.slice(2);
  try {
    if (command === 'backup') {
      await backup({ database: option(rest, '--database'), out: option(rest, '--out') });
    } else if (command === 'restore') {
      const into = option(rest, '--into');
      await restore({ file: rest[0], into });
    } else {
      console.error('usage: node database/scripts/backup.mjs backup [--database NAME] [--out DIR] | restore [FILE] [--into NAME]');
      process.exit(2);
    }
  } catch (err) {
    console.error(`[backup] ${err.message}`);
    process.exit(1);
  }
}
