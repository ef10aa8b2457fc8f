import { createHash, randomBytes } from "node:crypto";
import { LRUCache } from "lru-cache";
import { createCookie, redirect } from "react-router";
import { db } from "./db.server.ts";
import { getEnv } from "./env.server.ts";
import type { SessionUser } from "#app/models/person.server.ts";
import { databaseUnavailable, isDatabaseUnavailable } from "./db-errors.server.ts";

// Sessions live in the `session` table; the cookie carries only a random token, signed with
// SESSION_SECRET (comma-separated list: the first signs, all verify, so secrets can rotate).
// The table stores the token's SHA-256, so a database leak does not hand out live sessions.
export const SESSION_DAYS = 14;

let cookie: ReturnType<typeof createCookie> | undefined;

export function sessionCookie() {
  const env = getEnv();
  cookie ??= createCookie("rm_session", {
    httpOnly: true,
    sameSite: "lax",
    secure: env.NODE_ENV === "production" && env.APP_ORIGIN.startsWith("https:"),
    path: "/",
    secrets: env.SESSION_SECRET,
    maxAge: SESSION_DAYS * 24 * 3600,
  });
  return cookie;
}

export function hashToken(token: string) {
  return createHash("sha256").update(token).digest("hex");
}

// Cookie headers whose signature has been checked, with the token they carry. Checking an HMAC
// signature (Web Crypto, a key import each time) was a measurable share of every request; a header
// that verified once verifies again with the same secrets. Only verified headers are kept, and
// whether the session is still live is asked of the database on every request all the same.
const verifiedCookies = new LRUCache<string, string>({ max: 5_000 });

async function readToken(request: Request): Promise<string | null> {
  const header = request.headers.get("Cookie");
  if (!header) return null;
  const known = verifiedCookies.get(header);
  if (known) return known;
  const value = await sessionCookie().parse(header);
  if (typeof value !== "string" || value.length <= 20) return null;
  verifiedCookies.set(header, value);
  return value;
}

/** Creates a new session (always a new id: no fixation) and returns its Set-Cookie header. */
export async function createSession(personId: string, request: Request): Promise<string> {
  const token = randomBytes(32).toString("base64url");
  await db
    .insertInto("session")
    .values({
      id: hashToken(token),
      person_id: personId,
      expires_at: new Date(Date.now() + SESSION_DAYS * 24 * 3600 * 1000),
      user_agent: request.headers.get("User-Agent")?.slice(0, 300) ?? null,
    })
    .execute();
  return sessionCookie().serialize(token);
}

type LiveUser = SessionUser & { sessionId: string };
// One look-up per request, however many loaders of the page ask (the layout's and the page's).
const perRequest = new WeakMap<Request, Promise<LiveUser | null>>();

export function getSessionUser(request: Request): Promise<LiveUser | null> {
  let user = perRequest.get(request);
  if (!user) {
    user = lookUpSessionUser(request);
    perRequest.set(request, user);
  }
  return user;
}

async function lookUpSessionUser(request: Request): Promise<LiveUser | null> {
  const token = await readToken(request);
  if (!token) return null;
  const row = await db
    .selectFrom("session")
    .innerJoin("person", "person.id", "session.person_id")
    .select(["session.id as sessionId", "person.id", "person.email", "person.name", "person.role"])
    .where("session.id", "=", hashToken(token))
    .where("session.revoked_at", "is", null)
    .where("session.expires_at", ">", new Date())
    .where("person.disabled_at", "is", null)
    .executeTakeFirst()
    .catch((error: unknown) => {
      // Every page asks for the person first: with PostgreSQL away, say so (503, try again).
      if (isDatabaseUnavailable(error)) throw databaseUnavailable();
      throw error;
    });
  return row ?? null;
}

export async function revokeSession(request: Request) {
  const token = await readToken(request);
  if (token) {
    await db.updateTable("session").set({ revoked_at: new Date() }).where("id", "=", hashToken(token)).execute();
  }
}

export async function revokeAllSessions(personId: string) {
  await db
    .updateTable("session")
    .set({ revoked_at: new Date() })
    .where("person_id", "=", personId)
    .where("revoked_at", "is", null)
    .execute();
}

export async function signOutResponse(request: Request, to = "/sign-in") {
  await revokeSession(request);
  return redirect(to, { headers: { "Set-Cookie": await sessionCookie().serialize("", { maxAge: 0 }) } });
}
