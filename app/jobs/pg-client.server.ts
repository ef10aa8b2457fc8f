import pg from "pg";
import { guardPool } from "#db/connect.ts";
import { getEnv } from "#app/utils/env.server.ts";

// A raw pg pool for work Kysely does not do (COPY streams). Same database, separate small pool.
const globalForPool = globalThis as unknown as { __ripplemarkRawPool?: pg.Pool };

export function rawPool() {
  if (!globalForPool.__ripplemarkRawPool) {
    // Jobs stage whole files in temporary tables: give them room in memory before spilling to disk.
    const pool = new pg.Pool({ connectionString: getEnv().DATABASE_URL, max: 4, options: "-c temp_buffers=256MB" });
    guardPool(pool, "[db raw]");
    globalForPool.__ripplemarkRawPool = pool;
  }
  return globalForPool.__ripplemarkRawPool;
}

export async function withClient<T>(fn: (client: pg.PoolClient) => Promise<T>): Promise<T> {
  const client = await rawPool().connect();
  try {
    return await fn(client);
  } finally {
    client.release();
  }
}
