// A real Ligandry server as a child process (node --import tsx api/src/main.ts) on a free loopback
// port against a throwaway database of the test cluster: for tests that kill it or restart it.
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import { join } from 'node:path';
import { MikroORM } from '@mikro-orm/postgresql';
import pg from 'pg';
import { ROOT } from '../../api/src/config.js';
import { ormConfig } from '../../database/mikro-orm.config.js';
import { testSettings } from './db.js';

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as { port: number };
      s.close(() => resolve(port));
    });
  });
}

async function admin<T>(work: (c: pg.Client) => Promise<T>, database = 'postgres'): Promise<T> {
  const s = testSettings();
  const client = new pg.Client({ host: s.pgHost, port: s.pgPort, user: 'postgres', database });
  await client.connect();
  try {
    return await work(client);
  } finally {
    await client.end();
  }
}

/** Drops and creates `name` (it must contain "test"); migrated unless `migrate` is false. */
export async function throwawayDatabase(name: string, migrate = true): Promise<void> {
  if (!/test/.test(name) || !/^[a-z0-9_]+$/.test(name)) throw new Error(`refusing database name "${name}"`);
  await admin(async (c) => {
    await c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
    await c.query(`CREATE DATABASE "${name}" ENCODING 'UTF8' TEMPLATE template0`);
  });
  if (!migrate) return;
  const s = testSettings();
  const orm = await MikroORM.init(ormConfig({ host: s.pgHost, port: s.pgPort, dbName: name }, { debug: false }));
  try {
    await orm.getMigrator().up();
  } finally {
    await orm.close(true);
  }
}

export async function dropDatabase(name: string): Promise<void> {
  if (!/test/.test(name)) throw new Error(`refusing to drop "${name}"`);
  await admin((c) => c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`));
}

/** Runs SQL against a database of the test cluster. */
export function query<R extends pg.QueryResultRow = Record<string, unknown>>(database: string, sql: string, params: unknown[] = []): Promise<R[]> {
  return admin(async (c) => (await c.query<R>(sql, params)).rows, database);
}

export interface ServerProcess {
  baseUrl: string;
  child: ChildProcess;
  output(): string;
  /** SIGKILL: no shutdown handler runs, like a power cut. */
  kill9(): Promise<void>;
  stop(): Promise<void>;
}

export async function startServer(database: string, port: number, env: Record<string, string> = {}): Promise<ServerProcess> {
  const s = testSettings();
  let out = '';
  const child = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'api', 'src', 'main.ts')], {
    cwd: ROOT,
    env: { ...process.env, NODE_ENV: 'test', HOST: '127.0.0.1', PORT: String(port), PGPORT: String(s.pgPort), DATABASE_NAME: database, DEMO: '0', LOG_LEVEL: 'warn', JWT_SECRET: s.jwtSecret, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (out += d.toString()));
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const baseUrl = `http://127.0.0.1:${port}`;
  for (let i = 0; ; i++) {
    if (child.exitCode !== null) throw new Error(`the server exited (${child.exitCode}):\n${out}`);
    try {
      const res = await fetch(`${baseUrl}/api/health`);
      if (res.ok) break;
    } catch {
      // not listening yet
    }
    if (i > 600) throw new Error(`the server did not answer within 60 s:\n${out}`);
    await new Promise((r) => setTimeout(r, 100));
  }
  return {
    baseUrl,
    child,
    output: () => out,
    async kill9() {
      child.kill('SIGKILL');
      await exited;
    },
    async stop() {
      if (child.exitCode === null) child.kill('SIGTERM');
      await exited;
    },
  };
}
