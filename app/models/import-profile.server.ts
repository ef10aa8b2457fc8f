import { sql, type Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { importProfileSchema, type ImportProfile } from "#app/lib/import/profile.ts";
import { db } from "#app/utils/db.server.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import type { SortDir } from "#app/utils/table-params.ts";
import { changedFields, recordAudit, type AuditValues } from "./audit.server.ts";

type Executor = typeof db | Transaction<DB>;

/** A stored profile's settings, checked; null when the stored JSON no longer fits the schema. */
export function parseSettings(settings: unknown): ImportProfile | null {
  const parsed = importProfileSchema.safeParse(settings);
  return parsed.success ? parsed.data : null;
}

export const PROFILE_SORT_KEYS = ["name", "createdBy", "updated"] as const;
export type ProfileSortKey = (typeof PROFILE_SORT_KEYS)[number];

export async function countProfiles(trx: Executor = db) {
  const row = await trx.selectFrom("import_profile").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listProfilesPage(page: { sort: ProfileSortKey; dir: SortDir; limit: number; offset: number }, trx: Executor = db) {
  const q = trx
    .selectFrom("import_profile as p")
    .leftJoin("person", "person.id", "p.created_by")
    .select(["p.id", "p.name", "p.settings", "p.created_at", "p.updated_at", "person.name as createdBy"]);
  const ordered =
    page.sort === "createdBy"
      ? q.orderBy("person.name", (ob) => (page.dir === "asc" ? ob.asc().nullsLast() : ob.desc().nullsLast()))
      : page.sort === "updated"
        ? q.orderBy("p.updated_at", page.dir)
        : q.orderBy(sql`lower(p.name)`, page.dir);
  return ordered.orderBy("p.id").limit(page.limit).offset(page.offset).execute();
}

/** Every profile for pickers, most recently changed first (the first match by header wins). */
export async function listProfileChoices(trx: Executor = db) {
  return trx
    .selectFrom("import_profile")
    .select(["id", "name", "header_signature"])
    .orderBy("updated_at", "desc")
    .orderBy("id")
    .execute();
}

export async function findProfile(id: string, trx: Executor = db) {
  return trx
    .selectFrom("import_profile as p")
    .leftJoin("person", "person.id", "p.created_by")
    .select(["p.id", "p.name", "p.settings", "p.header_signature", "p.created_at", "p.updated_at", "person.name as createdBy"])
    .where("p.id", "=", id)
    .executeTakeFirst();
}

/** Whether another profile already has this name (compared without regard to case). */
export async function profileNameTaken(name: string, exceptId?: string, trx: Executor = db) {
  let q = trx.selectFrom("import_profile").select("id").where(sql<string>`lower(name)`, "=", name.toLowerCase());
  if (exceptId) q = q.where("id", "<>", exceptId);
  return !!(await q.executeTakeFirst());
}

export type ProfileFields = { name: string; profile: ImportProfile; headerSignature: string };

/** Objects with their keys sorted, so settings read back from jsonb (which reorders keys) compare equal. */
function sortedKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortedKeys);
  if (value && typeof value === "object") {
    return Object.fromEntries(Object.keys(value).sort().map((k) => [k, sortedKeys((value as Record<string, unknown>)[k])]));
  }
  return value;
}

function auditValues(v: { name: string; header_signature: string; settings: unknown }): AuditValues {
  return { name: v.name, header_signature: v.header_signature, settings: sortedKeys(v.settings) as AuditValues[string] };
}

/** Creates a profile and its audit row in one transaction. Returns null when the name is taken. */
export async function createProfile(actorId: string, values: ProfileFields) {
  try {
    return await db.transaction().execute(async (trx) => {
      if (await profileNameTaken(values.name, undefined, trx)) return null;
      const row = await trx
        .insertInto("import_profile")
        .values({ name: values.name, header_signature: values.headerSignature, settings: JSON.stringify(values.profile), created_by: actorId })
        .returning(["id", "name", "header_signature"])
        .executeTakeFirstOrThrow();
      await recordAudit(
        {
          actorId,
          entity: "import_profile",
          entityId: row.id,
          action: "create",
          after: auditValues({ name: values.name, header_signature: values.headerSignature, settings: values.profile }),
        },
        trx,
      );
      return row;
    });
  } catch (error) {
    if (isUniqueViolation(error)) return null;
    throw error;
  }
}

/** Saves a profile and audits the fields that changed. */
export async function saveProfile(actorId: string, id: string, values: ProfileFields): Promise<"saved" | "unchanged" | "taken" | "missing"> {
  try {
    return await db.transaction().execute(async (trx) => {
      const current = await trx
        .selectFrom("import_profile")
        .select(["name", "header_signature", "settings"])
        .where("id", "=", id)
        .forUpdate()
        .executeTakeFirst();
      if (!current) return "missing";
      if (await profileNameTaken(values.name, id, trx)) return "taken";
      const diff = changedFields(
        auditValues(current),
        auditValues({ name: values.name, header_signature: values.headerSignature, settings: values.profile }),
      );
      if (!diff) return "unchanged";
      await trx
        .updateTable("import_profile")
        .set({ name: values.name, header_signature: values.headerSignature, settings: JSON.stringify(values.profile), updated_at: new Date() })
        .where("id", "=", id)
        .execute();
      await recordAudit({ actorId, entity: "import_profile", entityId: id, action: "update", ...diff }, trx);
      return "saved";
    });
  } catch (error) {
    if (isUniqueViolation(error)) return "taken";
    throw error;
  }
}
