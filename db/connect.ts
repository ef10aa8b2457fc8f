import { Kysely, PostgresDialect } from "kysely";
import pg from "pg";
import type { DB } from "./schema.ts";

// PostgreSQL returns bigint and numeric as strings by default; counts and sums in this app fit in
// a double, so read int8 (20) and numeric (1700) as numbers.
pg.types.setTypeParser(20, (v) => Number(v));
pg.types.setTypeParser(1700, (v) => Number(v));

/**
 * A dropped connection (PostgreSQL restarting, every backend terminated) must not crash the process.
 * The pool reports errors of idle clients on itself; a client that is checked out but between
 * queries (a query just failed and it is about to be released) has no listener of the pool's, and
 * the socket's late ECONNRESET would be thrown as an unhandled 'error' event. Every client gets a
 * listener of its own when it connects (common practice with pg-pool); the pool then drops the
 * broken client on release.
 */
export function guardPool(pool: pg.Pool, label: string) {
  pool.on("error", (err) => console.error(`${label} idle client error:`, err.message));
  // Not logged again here: an idle client's error is logged by the pool, a busy one's fails its query.
  pool.on("connect", (client) => {
    client.on("error", () => {});
  });
}

export function createPool(connectionString: string, max = 10) {
  const pool = new pg.Pool({ connectionString, max, idleTimeoutMillis: 30_000 });
  guardPool(pool, "[db]");
  return pool;
}

export function createDb(connectionString: string, max?: number) {
  return new Kysely<DB>({ dialect: new PostgresDialect({ pool: createPool(connectionString, max) }) });
}
