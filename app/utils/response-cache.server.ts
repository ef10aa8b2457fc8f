import { LRUCache } from "lru-cache";
import { changeStamp, type NotifiedTable } from "./change-feed.server.ts";

// Server-side caches of computed answers (a chart series, the overview's figures), kept per process.
// An entry is used only while none of the tables it was built from has changed since (change
// notices from PostgreSQL, app/utils/change-feed.server.ts) and it is younger than its time limit.
// When many requests want the same missing entry at once, one computes and the others wait for it.
// Everything that decides who may see an entry (role, assignments) must be part of its key; the
// caller checks the person's role before asking.

type Entry = { stamp: string; value: unknown };

const MAX_BYTES = 64 * 1024 * 1024;
const cache = new LRUCache<string, Entry>({
  maxSize: MAX_BYTES,
  // Strings are what is large here (serialised JSON); other values are counted by a rough size.
  sizeCalculation: (e) => (typeof e.value === "string" ? e.value.length * 2 : 64 * 1024),
  ttlAutopurge: false,
});
const inflight = new Map<string, Promise<unknown>>();

export const cacheStats = { hits: 0, misses: 0, bypassed: 0 };

/** RESPONSE_CACHE=off computes every answer (benchmarks of the computation itself, debugging). */
const cacheOff = () => process.env.RESPONSE_CACHE === "off";

/**
 * `compute()`'s answer for `key`, reused while `tables` are unchanged and for at most `ttlMs`.
 * The stamp is taken before computing, so a change that commits during the computation leaves the
 * entry already stale.
 */
export async function cached<T>(key: string, tables: readonly NotifiedTable[], ttlMs: number, compute: () => Promise<T>): Promise<T> {
  const stamp = cacheOff() ? null : changeStamp(tables);
  if (stamp === null) {
    cacheStats.bypassed++;
    return compute();
  }
  const hit = cache.get(key);
  if (hit && hit.stamp === stamp) {
    cacheStats.hits++;
    return hit.value as T;
  }
  const flightKey = `${stamp}|${key}`;
  const pending = inflight.get(flightKey);
  if (pending) {
    cacheStats.hits++;
    return pending as Promise<T>;
  }
  cacheStats.misses++;
  const p = compute().then(
    (value) => {
      inflight.delete(flightKey);
      cache.set(key, { stamp, value }, { ttl: ttlMs });
      return value;
    },
    (error: unknown) => {
      inflight.delete(flightKey);
      throw error;
    },
  );
  inflight.set(flightKey, p);
  return p;
}

/** Drops every entry (tests). */
export function clearResponseCache() {
  cache.clear();
}

// RIPPLEMARK_CACHE_STATS=1: one line of hit/miss counts every 10 s in the app log (benchmarks).
if (process.env.RIPPLEMARK_CACHE_STATS === "1") {
  setInterval(() => console.log(`[response-cache] pid ${process.pid} hits ${cacheStats.hits} misses ${cacheStats.misses} bypassed ${cacheStats.bypassed}`), 10_000).unref();
}
