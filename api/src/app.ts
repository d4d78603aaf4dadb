import express, { type Express, type Router } from 'express';
import { RequestContext, type MikroORM } from '@mikro-orm/postgresql';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import type { Logger } from 'pino';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Settings } from './config.js';
import { ROOT } from './config.js';
import { createLogger } from './logger.js';
import { errorHandler, notFoundHandler } from './middleware/error-handler.js';
import { authRouter } from './routes/auth.router.js';
import { healthRouter } from './routes/health.router.js';
import { usersRouter } from './routes/users.router.js';
import { compoundsRouter } from './routes/compounds.router.js';
import { projectsRouter, seriesRouter } from './routes/projects.router.js';
import { sarRouter } from './routes/sar.router.js';
import { decisionsRouter, overviewRouter, selectivityRouter } from './routes/selectivity.router.js';
import { assaysRouter, mailRouter, resultsRouter, runsRouter, targetsRouter } from './routes/assays.router.js';
import { biasRouter, callsRouter, whatIfRouter } from './routes/mechanism.router.js';
import { Mailer } from './services/mail.service.js';
import { ImportRunner } from './services/import.service.js';
import { AuthService } from './services/auth.service.js';
import { AccountService } from './services/account.service.js';
import { ReadCache } from './services/read-cache.js';

export interface AppDeps {
  orm: MikroORM;
  settings: Settings;
  logger?: Logger;
}

export interface RouteEntry {
  method: string;
  path: string;
}

const version = (JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { version: string }).version;

/** Every API route as METHOD + full path, read from the mounted routers themselves. */
function listRoutes(mounts: [string, Router][]): RouteEntry[] {
  const routes: RouteEntry[] = [];
  for (const [base, router] of mounts) {
    for (const layer of (router as unknown as { stack: { route?: { path: string; methods: Record<string, boolean> } }[] }).stack) {
      if (!layer.route) continue;
      for (const method of Object.keys(layer.route.methods)) {
        routes.push({ method: method.toUpperCase(), path: (base + (layer.route.path === '/' ? '' : layer.route.path)) || base });
      }
    }
  }
  return routes;
}

export function createApp({ orm, settings, logger = createLogger(settings.logLevel) }: AppDeps): Express & { apiRoutes: RouteEntry[]; imports: ImportRunner; mailer: Mailer; readCache: ReadCache } {
  const app = express();
  const auth = new AuthService(settings.jwtSecret, settings.jwtTtlSeconds);
  const imports = new ImportRunner(orm, settings.registryPrefix, logger);
  const mailer = new Mailer(logger, settings.smtpUrl);
  const accounts = new AccountService(mailer, settings.publicUrl);
  const readCache = new ReadCache();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'"],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
        },
      },
      strictTransportSecurity: false,
    }),
  );
  app.use(
    pinoHttp({
      logger,
      autoLogging: { ignore: (req) => req.url === '/api/health' },
      serializers: {
        // Links from e-mails carry secrets in ?token=: never write them to the log.
        req: (req: { id: unknown; method: string; url: string }) => ({ id: req.id, method: req.method, url: req.url.replace(/([?&]token=)[^&]*/gi, '$1[hidden]') }),
        res: (res: { statusCode: number }) => ({ status: res.statusCode }),
      },
    }),
  );
  // Registry data must not linger in browser or proxy caches (shared machines): API answers are never stored.
  app.use('/api', (_req, res, next) => {
    res.set('Cache-Control', 'no-store');
    next();
  });
  app.use('/api', express.json({ limit: '2mb' }));
  app.use('/api', (_req, _res, next) => RequestContext.create(orm.em, next));

  const mounts: [string, Router][] = [
    ['/api/health', healthRouter({ demo: settings.demo, version })],
    ['/api/auth', authRouter(auth, accounts)],
    ['/api/users', usersRouter(auth, accounts)],
    ['/api/projects', projectsRouter(auth)],
    ['/api/series', seriesRouter(auth)],
    ['/api/compounds', compoundsRouter(auth, { prefix: settings.registryPrefix, importMaxBytes: settings.importMaxBytes, imports, readCache })],
    ['/api/targets', targetsRouter(auth)],
    ['/api/assays', assaysRouter(auth)],
    ['/api/runs', runsRouter(auth, mailer)],
    ['/api/results', resultsRouter(auth, mailer)],
    ['/api/sar', sarRouter(auth, readCache)],
    ['/api/selectivity', selectivityRouter(auth, readCache)],
    ['/api/decisions', decisionsRouter(auth, mailer)],
    ['/api/overview', overviewRouter(auth)],
    ['/api/calls', callsRouter(auth)],
    ['/api/bias', biasRouter(auth)],
    ['/api/what-if', whatIfRouter(auth)],
    ['/api/dev/mail', mailRouter(auth, mailer, settings.nodeEnv === 'production')],
  ];
  for (const [path, router] of mounts) app.use(path, router);
  app.use('/api', notFoundHandler);

  const index = join(settings.webDist, 'index.html');
  app.use(express.static(settings.webDist, { index: false, maxAge: '1h', setHeaders: (res, path) => {
    if (/-[A-Z0-9]{8}\.(js|css)$/.test(path)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
  } }));
  app.get('/{*splat}', (_req, res) => {
    if (!existsSync(index)) {
      res.status(503).type('text/plain').send('The web app is not built yet: run "npm run build:web" (npm start does it for you).');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(index);
  });
  app.use(errorHandler(logger));
  return Object.assign(app, { apiRoutes: listRoutes(mounts), imports, mailer, readCache });
}
