import pg from "pg";
import { migrateAll } from "#db/migrator.ts";
import { databaseUrl, TEMPLATE_DB } from "./env.ts";

async function admin<T>(fn: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: databaseUrl("postgres") });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

function ident(name: string) {
  if (!/^[a-z0-9_]+$/.test(name)) throw new Error(`unsafe database name ${name}`);
  return `"${name}"`;
}

/** Drops and re-creates the template database and migrates it (once per test run). */
export async function prepareTemplate(name = TEMPLATE_DB) {
  await admin(async (c) => {
    await c.query(`drop database if exists ${ident(name)} with (force)`);
    await c.query(`create database ${ident(name)}`);
  });
  await migrateAll(databaseUrl(name));
}

/** A fresh database copied from the migrated template (about 100 ms). */
export async function createTestDatabase(prefix = "rm_test") {
  const name = `${prefix}_${Date.now().toString(36)}_${Math.random().toString(36).slice(2, 8)}`;
  await admin((c) => c.query(`create database ${ident(name)} template ${ident(TEMPLATE_DB)}`));
  return name;
}

/** Removes test databases left by earlier runs. */
export async function dropTestDatabases(prefix = "rm_test_") {
  await admin(async (c) => {
    const { rows } = await c.query<{ datname: string }>(
      "select datname from pg_database where datname like $1 and datname <> $2",
      [`${prefix}%`, TEMPLATE_DB],
    );
    for (const r of rows) await c.query(`drop database if exists ${ident(r.datname)} with (force)`);
  });
}
