// Serves web + API on HOST:PORT. Migrations and the demo seed run before (npm start does both).
import { MikroORM } from '@mikro-orm/postgresql';
import { ormConfig } from '../../database/mikro-orm.config.js';
import { createApp } from './app.js';
import { warmChemPool } from './services/chem-pool.js';
import { warmSearchStore } from './services/compound-search.service.js';
import { loadSettings } from './config.js';
import { createLogger } from './logger.js';

const settings = loadSettings();
const logger = createLogger(settings.logLevel);
const orm = await MikroORM.init(ormConfig({ host: settings.pgHost, port: settings.pgPort, dbName: settings.databaseName }));
const pending = await orm.getMigrator().getPendingMigrations();
if (pending.length) {
  logger.error({ pending: pending.map((m) => m.name) }, 'the database has pending migrations: run "npm run db:migrate" (npm start does it for you)');
  await orm.close();
  process.exit(1);
}
const app = createApp({ orm, settings, logger });
await app.imports.recoverInterrupted();
// Fingerprints missing from older rows are computed in the background; search stays exact meanwhile.
void warmChemPool().catch(() => undefined);
// The search threads decode every compound once, so the first searches check without decoding.
void (async () => {
  const t = Date.now();
  const kept = await warmSearchStore(orm.em.fork());
  if (kept) logger.info(`structure search: ${kept} compounds decoded into the search threads in ${((Date.now() - t) / 1000).toFixed(1)} s`);
})().catch((err: unknown) => logger.error({ err }, 'could not warm the structure-search threads'));
void app.imports.fillFingerprints().catch((err: unknown) => logger.error({ err }, 'could not compute the missing search fingerprints'));
const server = app.listen(settings.port, settings.host, () => {
  logger.info(`Ligandry is serving on http://${settings.host}:${settings.port}${settings.demo ? ' with the demo scenario (sign in as chemist@demo.test / demo-password-1)' : ''}`);
});
server.on('error', (err: NodeJS.ErrnoException) => {
  if (err.code === 'EADDRINUSE') {
    logger.error(`port ${settings.port} on ${settings.host} is already in use (another Ligandry or another program): stop it or set PORT`);
  } else {
    logger.error({ err }, 'the server could not start');
  }
  process.exit(1);
});
async function shutdown(signal: string) {
  logger.info(`${signal}: shutting down`);
  // Requests in flight finish (and commit) before the database connections close; at most 10 s.
  await new Promise<void>((resolve) => {
    server.close(() => resolve());
    server.closeIdleConnections();
    setTimeout(resolve, 10_000).unref();
  });
  await orm.close();
  process.exit(0);
}
process.on('SIGINT', () => void shutdown('SIGINT'));
process.on('SIGTERM', () => void shutdown('SIGTERM'));
