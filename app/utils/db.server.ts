import type { Kysely } from "kysely";
import { createDb } from "#db/connect.ts";
import type { DB } from "#db/schema.ts";
import { getEnv } from "./env.server.ts";

const globalForDb = globalThis as unknown as { __ripplemarkDb?: Kysely<DB> };

/** The one Kysely instance of the process (kept across dev-server reloads). */
export const db: Kysely<DB> = (globalForDb.__ripplemarkDb ??= createDb(getEnv().DATABASE_URL));
