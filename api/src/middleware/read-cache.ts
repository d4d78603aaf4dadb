// Express side of the read cache (services/read-cache.ts): serves an unchanged answer, keeps a new one.
import type { RequestHandler, Response } from 'express';
import { dataVersion, type CacheEntry, type ReadCache } from '../services/read-cache.js';
import { em } from './auth.js';

function send(res: Response, entry: CacheEntry, state: 'hit' | 'miss'): void {
  res.set('ETag', entry.etag);
  res.set('X-Read-Cache', state);
  if (res.req.fresh) {
    res.status(304).end();
    return;
  }
  res.type('application/json').send(entry.body);
}

/**
 * Serves a GET (or a read-only POST such as search) from the cache when the data has not changed
 * since it was computed; otherwise lets the handler run and keeps its 200 JSON answer. Answers
 * marked incomplete (`complete: false`, a search that ran out of time) are never kept. Goes after
 * authentication and the capability check, so the cache never answers anyone the route would not.
 * A request with `Cache-Control: no-cache` is recomputed (and its answer kept).
 */
export function cachedRead(cache: ReadCache): RequestHandler {
  return async (req, res, next) => {
    const version = await dataVersion(em());
    const key = `${req.auth?.id ?? '-'}\u0000${req.auth?.role ?? '-'}\u0000${req.method}\u0000${req.originalUrl}\u0000${req.method === 'GET' ? '' : JSON.stringify(req.body ?? null)}`;
    // A client asking for "no-cache" (the load benchmark's cold phase, a script) gets a recomputed answer.
    const bypass = /\bno-cache\b/i.test(req.get('cache-control') ?? '');
    const hit = bypass ? undefined : cache.get(key, version);
    if (hit) {
      cache.hits++;
      send(res, hit, 'hit');
      return;
    }
    cache.misses++;
    const plain = res.json.bind(res);
    res.json = (body: unknown) => {
      const complete = !(body && typeof body === 'object' && ((body as { complete?: unknown }).complete === false || (body as { substructure?: { complete?: unknown } }).substructure?.complete === false));
      if (res.statusCode !== 200 || !complete) return plain(body);
      send(res, cache.set(key, version, Buffer.from(JSON.stringify(body))), 'miss');
      return res;
    };
    next();
  };
}
