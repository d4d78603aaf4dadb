// `npm test`: the same set-up as `npm start` for a separate test database (re-created by the
// mocha root hook on every run), Debian's Chromium for the browser tests, then every test.
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { checkNode, ensureChromium, ensureDependencies, ensureWebBuild } from './bootstrap.mjs';
import { pgPort, ROOT, start as startPostgres } from './pg.mjs';

try {
  checkNode();
  ensureDependencies();
  ensureChromium();
  startPostgres();
  ensureWebBuild();
} catch (err) {
  console.error(`[test] ${err.message}`);
  process.exit(1);
}

const env = {
  ...process.env,
  NODE_ENV: 'test',
  PGPORT: String(pgPort()),
  DATABASE_NAME: process.env.TEST_DATABASE_NAME ?? 'ligandry_test',
  JWT_SECRET: process.env.JWT_SECRET ?? 'ligandry-test-secret-not-for-production',
  LOG_LEVEL: process.env.LOG_LEVEL ?? 'silent',
  DEMO: '0',
};
// tsx runs TypeScript without checking types: check the server, database and test code first
// (the web app's types are checked by its build).
const tsc = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', 'tsconfig.api.json', '--noEmit'], { cwd: ROOT, stdio: 'inherit' });
if (tsc.status !== 0) {
  console.error('[test] type errors (above): fix them first');
  process.exit(1);
}
const mocha = join(ROOT, 'node_modules', 'mocha', 'bin', 'mocha.js');
const r = spawnSync(process.execPath, [mocha, ...process.argv.slice(2)], { cwd: ROOT, env, stdio: 'inherit' });
process.exit(r.status ?? 1);
