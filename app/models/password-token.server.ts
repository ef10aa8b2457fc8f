import { randomBytes } from "node:crypto";
import { db } from "#app/utils/db.server.ts";
import { hashToken } from "#app/utils/session.server.ts";

export const RESET_TTL_MINUTES = 60;
export const INVITE_TTL_DAYS = 7;

export type TokenPurpose = "reset" | "invite";

/** Creates a one-time token; only its hash is stored. Earlier unused tokens of the same purpose end. */
export async function createPasswordToken(personId: string, purpose: TokenPurpose): Promise<string> {
  const token = randomBytes(32).toString("base64url");
  const ttlMs = purpose === "reset" ? RESET_TTL_MINUTES * 60_000 : INVITE_TTL_DAYS * 24 * 3600_000;
  await db.transaction().execute(async (trx) => {
    await trx
      .updateTable("password_token")
      .set({ used_at: new Date() })
      .where("person_id", "=", personId)
      .where("purpose", "=", purpose)
      .where("used_at", "is", null)
      .execute();
    await trx
      .insertInto("password_token")
      .values({ token_hash: hashToken(token), person_id: personId, purpose, expires_at: new Date(Date.now() + ttlMs) })
      .execute();
  });
  return token;
}

export type TokenCheck =
  | { ok: true; personId: string; purpose: TokenPurpose; name: string; email: string }
  | { ok: false; reason: "unknown" | "expired" | "used" | "disabled" };

export async function checkPasswordToken(token: string): Promise<TokenCheck> {
  const row = await db
    .selectFrom("password_token")
    .innerJoin("person", "person.id", "password_token.person_id")
    .select([
      "password_token.person_id",
      "password_token.purpose",
      "password_token.expires_at",
      "password_token.used_at",
      "person.name",
      "person.email",
      "person.disabled_at",
    ])
    .where("token_hash", "=", hashToken(token))
    .executeTakeFirst();
  if (!row) return { ok: false, reason: "unknown" };
  if (row.used_at) return { ok: false, reason: "used" };
  if (row.expires_at.getTime() < Date.now()) return { ok: false, reason: "expired" };
  if (row.disabled_at) return { ok: false, reason: "disabled" };
  return { ok: true, personId: row.person_id, purpose: row.purpose, name: row.name, email: row.email };
}

/** Marks the token used; returns false when another request used it first (no double use). */
export async function consumePasswordToken(token: string): Promise<boolean> {
  const result = await db
    .updateTable("password_token")
    .set({ used_at: new Date() })
    .where("token_hash", "=", hashToken(token))
    .where("used_at", "is", null)
    .where("expires_at", ">", new Date())
    .executeTakeFirst();
  return Number(result.numUpdatedRows) === 1;
}

export const TOKEN_PROBLEMS: Record<Exclude<TokenCheck, { ok: true }>["reason"], string> = {
  unknown: "This link is not valid. Check that you copied the whole address, or ask for a new one.",
  expired: "This link has expired. Ask for a new one below.",
  used: "This link has already been used. Each link works once; ask for a new one if you need it.",
  disabled: "This account has been disabled. Ask an administrator.",
};
