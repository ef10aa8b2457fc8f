import pg from "pg";
import { migrateAll } from "#db/migrator.ts";
import { databaseUrl } from "./env.ts";

// Test databases. Each test run migrates a template of its own (rm_tpl_<run>) and every test file
// copies it (rm_test_<run>_<file>), so several runs (a developer's and CI's, or parallel sessions)
// never drop each other's databases. Leftovers older than an hour are removed.
const STALE_MS = 60 * 60_000;

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

export function newRunId() {
  return Date.now().toString(36) + Math.random().toString(36).slice(2, 6);
}

/** Creates and migrates the run's template database; returns its name. */
export async function prepareTemplate(runId: string) {
  const name = `rm_tpl_${runId}`;
  await admin(async (c) => {
    await c.query(`drop database if exists ${ident(name)} with (force)`);
    await c.query(`create database ${ident(name)}`);
  });
  await migrateAll(databaseUrl(name));
  return name;
}

/** A fresh database copied from the migrated template (about 100 ms). */
export async function createTestDatabase(template: string, prefix = "rm_test") {
  const runId = template.replace(/^rm_tpl_/, "");
  const name = `${prefix}_${runId}_${Math.random().toString(36).slice(2, 8)}`;
  await admin((c) => c.query(`create database ${ident(name)} template ${ident(template)}`));
  return name;
}

/** Drops this run's databases (template and copies). */
export async function dropRunDatabases(runId: string) {
  await admin(async (c) => {
    const { rows } = await c.query<{ datname: string }>(
      "select datname from pg_database where datname like $1 or datname like $2 or datname = $3",
      [`rm_test_${runId}_%`, `rm_e2e_${runId}_%`, `rm_tpl_${runId}`],
    );
    for (const r of rows) await c.query(`drop database if exists ${ident(r.datname)} with (force)`).catch(() => {});
  });
}

/** Drops test databases left by runs that ended more than an hour ago (run ids start with a base-36 time). */
export async function dropStaleDatabases() {
  await admin(async (c) => {
    const { rows } = await c.query<{ datname: string }>(
      "select datname from pg_database where datname ~ '^rm_(test|e2e|tpl)_'",
    );
    for (const r of rows) {
      const runId = r.datname.replace(/^rm_(test|e2e|tpl)_/, "").slice(0, 8);
      const started = parseInt(runId, 36);
      if (!Number.isFinite(started) || Date.now() - started > STALE_MS) {
        await c.query(`drop database if exists ${ident(r.datname)} with (force)`).catch(() => {});
      }
    }
  });
}
