import { readdirSync } from "node:fs";
import path from "node:path";
import pg from "pg";
import { NO_MIGRATIONS } from "kysely";
import { describe, expect, it } from "vitest";
import { createDb } from "#db/connect.ts";
import { createMigrator, migrateToLatest } from "#db/migrator.ts";
import { migrations } from "#db/migrations/index.ts";
import { databaseUrl } from "../support/env.ts";

describe("migrations", () => {
  it("lists every file of db/migrations in order", () => {
    const dir = path.resolve(import.meta.dirname, "../../db/migrations");
    const files = readdirSync(dir).filter((f) => /^\d{4}_.+\.ts$/.test(f)).map((f) => f.replace(/\.ts$/, "")).sort();
    expect(Object.keys(migrations)).toEqual(files);
  });

  it("run up from an empty database, all the way down, and up again", async () => {
    const name = `rm_test_${Date.now().toString(36)}_mig`; // time first: other runs see it is not stale
    const admin = new pg.Client({ connectionString: databaseUrl("postgres") });
    await admin.connect();
    await admin.query(`create database ${name}`);
    const db = createDb(databaseUrl(name), 2);
    try {
      await migrateToLatest(db);
      const tables = async () =>
        (await db.introspection.getTables()).map((t) => t.name).filter((n) => !n.startsWith("kysely_")).sort();
      const up = await tables();
      expect(up).toEqual(expect.arrayContaining(["person", "session", "site", "logger", "upload", "readings", "import_profile"]));
      const roles = await db.selectFrom("role").select("name").orderBy("rank").execute();
      expect(roles.map((r) => r.name)).toEqual(["technician", "officer", "manager", "admin"]);

      const down = await createMigrator(db).migrateTo(NO_MIGRATIONS);
      expect(down.error).toBeUndefined();
      expect((await tables()).filter((t) => !t.startsWith("readings_y"))).toEqual([]);

      await migrateToLatest(db);
      expect(await tables()).toEqual(up);
    } finally {
      await db.destroy();
      await admin.query(`drop database if exists ${name} with (force)`);
      await admin.end();
    }
  });
});
