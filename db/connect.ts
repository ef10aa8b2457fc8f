import { Kysely, PostgresDialect } from "kysely";
import pg from "pg";
import type { DB } from "./schema.ts";

// PostgreSQL returns bigint and numeric as strings by default; counts and sums in this app fit in
// a double, so read int8 (20) and numeric (1700) as numbers.
pg.types.setTypeParser(20, (v) => Number(v));
pg.types.setTypeParser(1700, (v) => Number(v));

export function createPool(connectionString: string, max = 10) {
  const pool = new pg.Pool({ connectionString, max, idleTimeoutMillis: 30_000 });
  // A dropped connection (e.g. PostgreSQL restarting) must not crash the process: the pool replaces it.
  pool.on("error", (err) => console.error("[db] idle client error:", err.message));
  return pool;
}

export function createDb(connectionString: string, max?: number) {
  return new Kysely<DB>({ dialect: new PostgresDialect({ pool: createPool(connectionString, max) }) });
}
