// `npm start`: installs what is missing, starts the private PostgreSQL, migrates, seeds the
// demo scenario (unless DEMO=0), builds the web app and serves web + API on HOST:PORT.
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { checkNode, ensureDependencies, ensureWebBuild } from './bootstrap.mjs';
import { createDatabase, pgPort, ROOT, start as startPostgres } from './pg.mjs';
import { probe } from './probe.mjs';

const host = process.env.HOST ?? '127.0.0.1';
const port = Number(process.env.PORT ?? 3000);
const database = process.env.DATABASE_NAME ?? 'ligandry';
const demo = process.env.DEMO ?? '1';

try {
  checkNode();
  const existing = await probe(host, port);
  if (existing === 'ligandry') {
    console.error(`Ligandry is already running at http://${host}:${port} — open that address, or stop the other "npm start" first (or set PORT to run a second instance).`);
    process.exit(1);
  }
  if (existing === 'other') {
    console.error(`Port ${port} on ${host} is already used by another program; set PORT to a free port (for example PORT=3001 npm start).`);
    process.exit(1);
  }
  ensureDependencies();
  startPostgres();
  createDatabase(database);
  const env = { ...process.env, HOST: host, PORT: String(port), PGPORT: String(pgPort()), DATABASE_NAME: database, DEMO: demo, NODE_ENV: process.env.NODE_ENV ?? 'production' };
  await runNode(['--import', 'tsx', join(ROOT, 'database', 'scripts', 'migrate.ts')], env);
  ensureWebBuild();
  const server = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'api', 'src', 'main.ts')], { cwd: ROOT, env, stdio: 'inherit' });
  for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => server.kill(signal));
  server.on('exit', (code) => process.exit(code ?? 0));
} catch (err) {
  console.error(`[start] ${err.message}`);
  process.exit(1);
}

function runNode(args, env) {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, args, { cwd: ROOT, env, stdio: 'inherit' });
    child.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`${args.at(-1)} exited with ${code}`))));
  });
}
