import { Migrator, type Kysely, type MigrationProvider } from "kysely";
import { migrations } from "./migrations/index.ts";

// Migrations are imported statically (db/migrations/index.ts) rather than discovered on disk, so
// they load the same way under tsx, vitest and the production build.
const provider: MigrationProvider = { getMigrations: async () => migrations };

export function createMigrator(db: Kysely<any>) {
  // Unordered: a database that already ran a later migration (from a branch that landed first)
  // still takes an earlier one that arrives afterwards, instead of refusing to start.
  return new Migrator({ db, provider, allowUnorderedMigrations: true });
}

/** Runs every pending migration; throws with the failing migration's name on error. */
export async function migrateToLatest(db: Kysely<any>, log: (line: string) => void = () => {}) {
  const { error, results } = await createMigrator(db).migrateToLatest();
  for (const r of results ?? []) log(`migration ${r.migrationName}: ${r.status}`);
  if (error) {
    const failed = results?.find((r) => r.status === "Error")?.migrationName ?? "(unknown)";
    throw new Error(`migration ${failed} failed: ${error instanceof Error ? error.message : String(error)}`);
  }
}

/** The app's migrations and the job queue's schema, for a database URL (scripts and tests). */
export async function migrateAll(connectionString: string, log: (line: string) => void = () => {}) {
  const { createDb } = await import("./connect.ts");
  const { runMigrations } = await import("graphile-worker");
  const db = createDb(connectionString, 2);
  try {
    await migrateToLatest(db, log);
  } finally {
    await db.destroy();
  }
  await runMigrations({ connectionString });
}
