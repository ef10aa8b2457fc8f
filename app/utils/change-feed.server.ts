import pg from "pg";
import type { NOTIFIED_TABLES } from "#db/migrations/0009_change_notices.ts";
import { getEnv } from "./env.server.ts";

// The process's view of which tables changed: one connection LISTENs on `ripplemark_changes`
// (db/migrations/0009_change_notices.ts) and counts the notices per table. A cache entry records the
// counts of the tables it was built from; when any has moved on, the entry is stale.
//
// While the listening connection is down (PostgreSQL restarting, a dropped socket) changes could be
// missed, so `changeStamp` answers null and callers must not use a cache; every reconnection starts
// a new epoch, which makes everything cached before it stale.

export type NotifiedTable = (typeof NOTIFIED_TABLES)[number];

const CHANNEL = "ripplemark_changes";
const counts = new Map<string, number>();
let epoch = 0;
let listening = false;
let client: pg.Client | null = null;
let retryMs = 500;
let failures = 0;

function connect() {
  if (client) return;
  const c = new pg.Client({ connectionString: getEnv().DATABASE_URL, application_name: "ripplemark change feed" });
  client = c;
  const lost = (why: string) => {
    if (client !== c) return;
    client = null;
    listening = false;
    epoch++;
    if (failures++ === 0) console.warn(`[change-feed] not listening (${why}); response caches are off until it reconnects`);
    setTimeout(connect, retryMs).unref();
    retryMs = Math.min(retryMs * 2, 30_000);
    c.end().catch(() => {});
  };
  c.on("notification", (n) => {
    if (n.payload) counts.set(n.payload, (counts.get(n.payload) ?? 0) + 1);
  });
  c.on("error", (e) => lost(e.message));
  c.on("end", () => lost("connection ended"));
  c.connect()
    .then(() => c.query(`listen ${CHANNEL}`))
    .then(() => {
      if (client !== c) return;
      // The socket must not keep a process alive that has nothing else to do.
      (c as unknown as { connection?: { stream?: { unref?: () => void } } }).connection?.stream?.unref?.();
      epoch++;
      listening = true;
      retryMs = 500;
      if (failures > 0) console.warn("[change-feed] listening again");
      failures = 0;
    })
    .catch((e: Error) => lost(e.message));
}

/**
 * A string that changes whenever any of `tables` is written (after the writer commits), or null
 * when changes cannot be followed right now. Starts listening on first use.
 */
export function changeStamp(tables: readonly NotifiedTable[]): string | null {
  connect();
  if (!listening) return null;
  return `${epoch}:${tables.map((t) => counts.get(t) ?? 0).join(",")}`;
}

/** Resolves once the feed listens (or after `timeoutMs`); for tests and warm-up. */
export async function changeFeedReady(timeoutMs = 5_000): Promise<boolean> {
  connect();
  const end = Date.now() + timeoutMs;
  while (!listening && Date.now() < end) await new Promise((r) => setTimeout(r, 20));
  return listening;
}
