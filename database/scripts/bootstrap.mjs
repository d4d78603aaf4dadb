// Set-up shared by `npm start` and `npm test` (plain Node, runs before node_modules exists):
// npm packages, Debian's Chromium for browser tests and the web build. (JWT_SECRET, when unset,
// is generated and kept under .data/ by api/src/config.ts.)
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from './pg.mjs';

function log(message) {
  console.log(`[setup] ${message}`);
}

export function checkNode() {
  const [major, minor] = process.versions.node.split('.').map(Number);
  if (major < 20 || (major === 20 && minor < 19)) {
    throw new Error(`Node.js ${process.versions.node} is too old: Ligandry needs Node.js 20.19 or newer (Angular 21)`);
  }
}

/** Runs `npm ci` when node_modules is missing or older than package-lock.json. */
export function ensureDependencies() {
  const lock = join(ROOT, 'package-lock.json');
  const installed = join(ROOT, 'node_modules', '.package-lock.json');
  if (existsSync(installed) && statSync(installed).mtimeMs >= statSync(lock).mtimeMs) return;
  log('installing npm packages (npm ci)…');
  const started = Date.now();
  const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: ROOT, stdio: 'inherit' });
  if (r.status !== 0) throw new Error('npm ci failed (see above)');
  log(`npm packages installed in ${((Date.now() - started) / 1000).toFixed(0)} s`);
}

export const CHROMIUM = '/usr/bin/chromium';

/** Installs Debian's Chromium for the browser tests when it is missing. */
export function ensureChromium() {
  if (existsSync(CHROMIUM)) return;
  if (process.getuid?.() !== 0) throw new Error(`${CHROMIUM} is missing; install it as root: apt-get install -y chromium`);
  log('installing Debian chromium for the browser tests (apt-get)…');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  execFileSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  execFileSync('apt-get', ['install', '-y', '-qq', 'chromium'], { stdio: 'inherit', env });
}

function hashTree(hash, path) {
  const st = statSync(path);
  if (st.isDirectory()) {
    for (const name of readdirSync(path).sort()) hashTree(hash, join(path, name));
  } else {
    hash.update(path.slice(ROOT.length));
    hash.update(readFileSync(path));
  }
}

/** Builds the Angular app into dist/web unless the sources are unchanged since the last build. */
export function ensureWebBuild() {
  const hash = createHash('sha256');
  for (const p of ['web', 'fonts', 'angular.json', 'tsconfig.json', 'tsconfig.app.json', 'package-lock.json']) {
    hashTree(hash, join(ROOT, p));
  }
  const digest = hash.digest('hex');
  const stamp = join(ROOT, 'dist', 'web', '.source-hash');
  if (existsSync(stamp) && readFileSync(stamp, 'utf8') === digest && existsSync(join(ROOT, 'dist', 'web', 'browser', 'index.html'))) {
    return;
  }
  log('building the web app (ng build)…');
  const started = Date.now();
  const r = spawnSync(join(ROOT, 'node_modules', '.bin', 'ng'), ['build'], {
    cwd: ROOT,
    stdio: 'inherit',
    env: { ...process.env, NG_CLI_ANALYTICS: 'false' },
  });
  if (r.status !== 0) throw new Error('the web build failed (see above)');
  writeFileSync(stamp, digest);
  log(`web app built in ${((Date.now() - started) / 1000).toFixed(0)} s`);
}
