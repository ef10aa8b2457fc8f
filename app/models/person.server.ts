import type { Transaction } from "kysely";
import { sql } from "kysely";
import type { DB, RoleName } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

type Executor = typeof db | Transaction<DB>;

export type SessionUser = { id: string; email: string; name: string; role: RoleName };

export async function findPersonByEmail(email: string, trx: Executor = db) {
  return trx
    .selectFrom("person")
    .select(["id", "email", "name", "role", "password_hash", "disabled_at"])
    .where(sql`lower(email)`, "=", email.trim().toLowerCase())
    .executeTakeFirst();
}

export async function findPersonById(id: string, trx: Executor = db) {
  return trx
    .selectFrom("person")
    .select(["id", "email", "name", "role", "disabled_at", "weekly_digest", "created_at"])
    .where("id", "=", id)
    .executeTakeFirst();
}

export async function listPeople(trx: Executor = db) {
  return trx
    .selectFrom("person")
    .select(["id", "email", "name", "role", "disabled_at", "created_at", "password_hash"])
    .orderBy("name")
    .execute()
    .then((rows) =>
      rows.map(({ password_hash, ...r }) => ({ ...r, invitationPending: password_hash === null })),
    );
}

export async function setPassword(personId: string, passwordHash: string, trx: Executor = db) {
  await trx
    .updateTable("person")
    .set({ password_hash: passwordHash, updated_at: new Date() })
    .where("id", "=", personId)
    .execute();
}
