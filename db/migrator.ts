import { promises as fs } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { FileMigrationProvider, Migrator, type Kysely } from "kysely";

const migrationFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), "migrations");

export function createMigrator(db: Kysely<any>) {
  return new Migrator({ db, provider: new FileMigrationProvider({ fs, path, migrationFolder }) });
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
