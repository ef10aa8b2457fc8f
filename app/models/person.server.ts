import { sql, type ExpressionBuilder, type Transaction } from "kysely";
import type { DB, RoleName } from "#db/schema.ts";
import { likeContains, type SortDir } from "#app/utils/table-params.ts";
import type { PersonStatus } from "#app/utils/person-status.ts";
import { db } from "#app/utils/db.server.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import { revokeAllSessions } from "#app/utils/session.server.ts";
import { changedFields, recordAudit } from "./audit.server.ts";

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

/** Everyone, by name, with a computed status; the password hash never leaves the database. */
export async function listPeople(trx: Executor = db) {
  return trx
    .selectFrom("person")
    .select((eb) => ["id", "email", "name", "role", "disabled_at", "created_at", eb("password_hash", "is", null).as("invitationPending")])
    .orderBy("name")
    .execute();
}

export async function setPassword(personId: string, passwordHash: string, trx: Executor = db) {
  await trx
    .updateTable("person")
    .set({ password_hash: passwordHash, updated_at: new Date() })
    .where("id", "=", personId)
    .execute();
}

// ---- Administration -------------------------------------------------------------------------

export { PERSON_STATUSES, type PersonStatus } from "#app/utils/person-status.ts";

/** active / invitation pending (no password chosen yet) / disabled, computed in SQL. */
function statusExpr(eb: ExpressionBuilder<DB, "person">) {
  return eb
    .case()
    .when("person.disabled_at", "is not", null)
    .then(sql.lit("disabled"))
    .when("person.password_hash", "is", null)
    .then(sql.lit("invited"))
    .else(sql.lit("active"))
    .end()
    .$castTo<PersonStatus>();
}

export const PEOPLE_SORT_KEYS = ["name", "email", "role", "status"] as const;
export type PeopleSortKey = (typeof PEOPLE_SORT_KEYS)[number];

export type PeopleFilter = { role?: RoleName; status?: PersonStatus; search?: string };

function filteredPeople(filter: PeopleFilter, trx: Executor) {
  let q = trx.selectFrom("person").innerJoin("role", "role.name", "person.role");
  if (filter.role) q = q.where("person.role", "=", filter.role);
  if (filter.status) q = q.where((eb) => eb(statusExpr(eb), "=", filter.status!));
  if (filter.search) {
    const pattern = likeContains(filter.search);
    q = q.where((eb) => eb.or([eb("person.name", "ilike", pattern), eb("person.email", "ilike", pattern)]));
  }
  return q;
}

export async function countPeople(filter: PeopleFilter, trx: Executor = db) {
  const row = await filteredPeople(filter, trx)
    .select((eb) => eb.fn.countAll<number>().as("n"))
    .executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listPeoplePage(
  filter: PeopleFilter,
  page: { sort: PeopleSortKey; dir: SortDir; limit: number; offset: number },
  trx: Executor = db,
) {
  // Sort keys map to expressions here; nothing from the URL is written into the SQL text.
  const q = filteredPeople(filter, trx).select((eb) => [
    "person.id",
    "person.name",
    "person.email",
    "person.role",
    statusExpr(eb).as("status"),
  ]);
  const ordered =
    page.sort === "email"
      ? q.orderBy(sql`lower(person.email)`, page.dir)
      : page.sort === "role"
        ? q.orderBy("role.rank", page.dir)
        : page.sort === "status"
          ? q.orderBy((eb) => statusExpr(eb), page.dir)
          : q.orderBy(sql`lower(person.name)`, page.dir);
  return ordered.orderBy("person.id").limit(page.limit).offset(page.offset).execute();
}

/** One person as the administration pages show them: no password hash, only whether one is set. */
export async function findPersonForAdmin(id: string, trx: Executor = db) {
  return trx
    .selectFrom("person")
    .select((eb) => [
      "person.id",
      "person.name",
      "person.email",
      "person.role",
      "person.disabled_at",
      "person.created_at",
      statusExpr(eb).as("status"),
    ])
    .where("person.id", "=", id)
    .executeTakeFirst();
}

export type AdminPerson = NonNullable<Awaited<ReturnType<typeof findPersonForAdmin>>>;

export async function emailTaken(email: string, trx: Executor = db) {
  const row = await trx
    .selectFrom("person")
    .select("id")
    .where(sql`lower(email)`, "=", email.trim().toLowerCase())
    .executeTakeFirst();
  return !!row;
}

/**
 * Creates a person without a password (they choose one through the invitation link) and audits it.
 * Returns null when the e-mail is already used (checked by the unique index, so no race).
 */
export async function invitePerson(actorId: string, values: { name: string; email: string; role: RoleName }) {
  try {
    return await db.transaction().execute(async (trx) => {
      const person = await trx
        .insertInto("person")
        .values({ name: values.name, email: values.email, role: values.role, password_hash: null })
        .returning(["id", "name", "email", "role"])
        .executeTakeFirstOrThrow();
      await recordAudit(
        { actorId, entity: "person", entityId: person.id, action: "invite", after: { name: person.name, email: person.email, role: person.role } },
        trx,
      );
      return person;
    });
  } catch (error) {
    if (isUniqueViolation(error)) return null;
    throw error;
  }
}

export async function changePersonRole(actorId: string, id: string, role: RoleName) {
  return db.transaction().execute(async (trx) => {
    const current = await trx.selectFrom("person").select("role").where("id", "=", id).forUpdate().executeTakeFirstOrThrow();
    if (current.role === role) return false;
    await trx.updateTable("person").set({ role, updated_at: new Date() }).where("id", "=", id).execute();
    await recordAudit({ actorId, entity: "person", entityId: id, action: "change-role", before: { role: current.role }, after: { role } }, trx);
    return true;
  });
}

/** Disables a person and ends every session they have, so a signed-in browser is out at once. */
export async function disablePerson(actorId: string, id: string) {
  const changed = await db.transaction().execute(async (trx) => {
    const current = await trx.selectFrom("person").select("disabled_at").where("id", "=", id).forUpdate().executeTakeFirstOrThrow();
    if (current.disabled_at) return false;
    const at = new Date();
    await trx.updateTable("person").set({ disabled_at: at, updated_at: at }).where("id", "=", id).execute();
    await recordAudit(
      { actorId, entity: "person", entityId: id, action: "disable", before: { disabled_at: null }, after: { disabled_at: at.toISOString() } },
      trx,
    );
    return true;
  });
  // After the commit: even if this failed, getSessionUser refuses disabled people.
  await revokeAllSessions(id);
  return changed;
}

export async function enablePerson(actorId: string, id: string) {
  return db.transaction().execute(async (trx) => {
    const current = await trx.selectFrom("person").select("disabled_at").where("id", "=", id).forUpdate().executeTakeFirstOrThrow();
    if (!current.disabled_at) return false;
    await trx.updateTable("person").set({ disabled_at: null, updated_at: new Date() }).where("id", "=", id).execute();
    await recordAudit(
      { actorId, entity: "person", entityId: id, action: "enable", before: { disabled_at: current.disabled_at.toISOString() }, after: { disabled_at: null } },
      trx,
    );
    return true;
  });
}

export async function listAssignedSiteIds(personId: string, trx: Executor = db) {
  const rows = await trx
    .selectFrom("site_assignment")
    .select("site_id")
    .where("person_id", "=", personId)
    .execute();
  return rows.map((r) => r.site_id);
}

/** Replaces a person's site assignments; audits the old and new lists by site code (readable). */
export async function assignSites(actorId: string, personId: string, siteIds: string[]) {
  return db.transaction().execute(async (trx) => {
    await trx.selectFrom("person").select("id").where("id", "=", personId).forUpdate().executeTakeFirstOrThrow();
    const wanted = [...new Set(siteIds)];
    const known = wanted.length
      ? await trx.selectFrom("site").select(["id", "code"]).where("id", "in", wanted).execute()
      : [];
    if (known.length !== wanted.length) return { ok: false as const };
    const before = await trx
      .selectFrom("site_assignment as sa")
      .innerJoin("site", "site.id", "sa.site_id")
      .select(["site.id", "site.code"])
      .where("sa.person_id", "=", personId)
      .orderBy("site.code")
      .execute();
    const codes = (rows: { code: string }[]) => rows.map((r) => r.code).sort();
    const diff = changedFields({ sites: codes(before) }, { sites: codes(known) });
    if (!diff) return { ok: true as const, changed: false };
    await trx.deleteFrom("site_assignment").where("person_id", "=", personId).execute();
    if (wanted.length) {
      await trx
        .insertInto("site_assignment")
        .values(wanted.map((site_id) => ({ person_id: personId, site_id })))
        .execute();
    }
    await recordAudit({ actorId, entity: "person", entityId: personId, action: "assign-sites", ...diff }, trx);
    return { ok: true as const, changed: true };
  });
}

/** Notes in the audit trail that an invitation was sent again (the token itself is never stored). */
export async function recordInviteResent(actorId: string, personId: string) {
  await recordAudit({ actorId, entity: "person", entityId: personId, action: "resend-invite" });
}
