import type { Kysely } from "kysely";
import type { DB, RoleName } from "#db/schema.ts";
import { hashPassword } from "#app/utils/password.server.ts";

export const TEST_PASSWORD = "correct-horse-battery";

/** One person per role (emails role@test.example), created directly in the database. */
export async function createPeople(db: Kysely<DB>) {
  const hash = await hashPassword(TEST_PASSWORD);
  const roles: RoleName[] = ["technician", "officer", "manager", "admin"];
  const rows = await db
    .insertInto("person")
    .values(roles.map((role) => ({ email: `${role}@test.example`, name: `Test ${role}`, role, password_hash: hash })))
    .returning(["id", "email", "role"])
    .execute();
  return Object.fromEntries(rows.map((r) => [r.role, r])) as Record<RoleName, (typeof rows)[number]>;
}
