import { Router } from 'express';
import { em } from '../middleware/auth.js';

export function healthRouter(options: { demo: boolean; version: string }) {
  const router = Router();
  /** Liveness and database reachability; public. */
  router.get('/', async (_req, res) => {
    let database: 'up' | 'down' = 'up';
    try {
      await em().getConnection().execute('select 1');
    } catch {
      database = 'down';
    }
    res.status(database === 'up' ? 200 : 503).json({
      service: 'ligandry',
      status: database === 'up' ? 'ok' : 'degraded',
      database,
      demo: options.demo,
      version: options.version,
    });
  });
  return router;
}
