// Read cache for the heavy read routes (SAR table, compound page, search, selectivity, overview):
// answers are kept serialised, per user and request, under the data version they were computed
// at. The data version is one counter in PostgreSQL that deferred triggers raise on every commit
// that changes page data (migration Migration20261202132257), so a cached answer is served only
// while nothing it could depend on has changed — also when the change came from another process
// (an import script, a second server). A request costs one indexed single-row read on a hit.
import { createHash } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/postgresql';

export interface CacheEntry {
  version: string;
  body: Buffer;
  etag: string;
}

/** Bytes kept at most, over every entry (the SAR table of a large project is a few MB). */
export const READ_CACHE_MAX_BYTES = 192 * 1024 * 1024;
/** Answers larger than this are not kept. */
const MAX_ENTRY_BYTES = 32 * 1024 * 1024;

/** A least-recently-used map of serialised answers, bounded by bytes. */
export class ReadCache {
  private readonly entries = new Map<string, CacheEntry>();
  private bytes = 0;
  hits = 0;
  misses = 0;

  constructor(private readonly maxBytes = READ_CACHE_MAX_BYTES) {}

  get(key: string, version: string): CacheEntry | undefined {
    const entry = this.entries.get(key);
    if (!entry) return undefined;
    if (entry.version !== version) {
      this.delete(key);
      return undefined;
    }
    // Most recently used last: re-insert.
    this.entries.delete(key);
    this.entries.set(key, entry);
    return entry;
  }

  set(key: string, version: string, body: Buffer): CacheEntry {
    const entry = { version, body, etag: `"${createHash('sha1').update(body).digest('base64url')}"` };
    if (body.length > MAX_ENTRY_BYTES) return entry;
    this.delete(key);
    this.entries.set(key, entry);
    this.bytes += body.length;
    for (const [oldest, old] of this.entries) {
      if (this.bytes <= this.maxBytes) break;
      this.entries.delete(oldest);
      this.bytes -= old.body.length;
    }
    return entry;
  }

  get size(): number {
    return this.entries.size;
  }

  get storedBytes(): number {
    return this.bytes;
  }

  clear(): void {
    this.entries.clear();
    this.bytes = 0;
  }

  private delete(key: string): void {
    const old = this.entries.get(key);
    if (!old) return;
    this.entries.delete(key);
    this.bytes -= old.body.length;
  }
}

/** The committed data version (raised by every commit that changes page data). */
export async function dataVersion(manager: EntityManager): Promise<string> {
  const rows = await manager.getConnection().execute<{ value: string }[]>('select value::text as value from data_version where id = 1');
  // A database without the row (never migrated this far) gets no caching: a fresh key every time.
  return rows[0]?.value ?? `none-${Date.now()}-${Math.random()}`;
}
