import { data, redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { z } from "zod";
import { db } from "./db.server.ts";
import { getEnv } from "./env.server.ts";
import { verifyPassword } from "./password.server.ts";
import { getSessionUser } from "./session.server.ts";
import { signInSchema } from "./auth-schemas.ts";
import { roleAllowed, type RoleName } from "./permissions.ts";
import { findPersonByEmail, type SessionUser } from "#app/models/person.server.ts";

export const GENERIC_SIGN_IN_ERROR = "That e-mail and password do not match an active account.";
export const THROTTLE_LIMIT = 5;
export const THROTTLE_WINDOW_MINUTES = 15;

export class SignInError extends Error {
  constructor(
    message: string,
    readonly status: 400 | 401 | 429,
    readonly fieldErrors: Record<string, string[]> = {},
  ) {
    super(message);
  }
}


async function recentFailures(email: string) {
  const since = new Date(Date.now() - THROTTLE_WINDOW_MINUTES * 60_000);
  const row = await db
    .selectFrom("sign_in_failure")
    .select((eb) => eb.fn.countAll<number>().as("n"))
    .where((eb) => eb(eb.fn("lower", ["email"]), "=", email.toLowerCase()))
    .where("at", ">", since)
    .executeTakeFirstOrThrow();
  return Number(row.n);
}

export const authenticator = new Authenticator<SessionUser>();

authenticator.use(
  new FormStrategy(async ({ form }) => {
    const parsed = signInSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) {
      throw new SignInError("Check the highlighted fields.", 400, z.flattenError(parsed.error).fieldErrors);
    }
    const { email, password } = parsed.data;
    if ((await recentFailures(email)) >= THROTTLE_LIMIT) {
      throw new SignInError(
        `Too many failed attempts for this e-mail. Wait ${THROTTLE_WINDOW_MINUTES} minutes or reset your password.`,
        429,
      );
    }
    const person = await findPersonByEmail(email);
    const ok = await verifyPassword(password, person?.password_hash);
    if (!person || !ok || person.disabled_at) {
      await db.insertInto("sign_in_failure").values({ email: email.toLowerCase() }).execute();
      throw new SignInError(GENERIC_SIGN_IN_ERROR, 401);
    }
    await db.deleteFrom("sign_in_failure").where((eb) => eb(eb.fn("lower", ["email"]), "=", email.toLowerCase())).execute();
    return { id: person.id, email: person.email, name: person.name, role: person.role };
  }),
  "form",
);

export { safeRedirect } from "./auth-redirect.ts";

/**
 * Rejects state-changing requests whose Origin (or Referer) is another site. SameSite=Lax cookies
 * already stop most cross-site posts; this is the second lock.
 */
export function assertSameOrigin(request: Request) {
  if (request.method === "GET" || request.method === "HEAD") return;
  const origin = request.headers.get("Origin") ?? request.headers.get("Referer");
  if (!origin) return; // non-browser clients (tests, scripts) send neither; cookies still must be valid
  let from: string;
  try {
    from = new URL(origin).origin;
  } catch {
    throw data("Cross-site request refused.", { status: 403 });
  }
  const allowed = new Set([new URL(request.url).origin, new URL(getEnv().APP_ORIGIN).origin]);
  if (!allowed.has(from)) throw data("Cross-site request refused.", { status: 403 });
}

/**
 * The guard at the top of every loader and action. Signed out → redirect to sign-in (API routes
 * get 401 JSON); signed in without one of `roles` → 403.
 */
export async function requireUser(request: Request, options: { roles: readonly RoleName[] }) {
  assertSameOrigin(request);
  const user = await getSessionUser(request);
  const url = new URL(request.url);
  if (!user) {
    if (url.pathname.startsWith("/api/")) throw data({ error: "Sign in first." }, { status: 401 });
    const back = url.pathname + url.search;
    throw redirect(`/sign-in${back && back !== "/" ? `?redirectTo=${encodeURIComponent(back)}` : ""}`);
  }
  if (!roleAllowed(user.role, options.roles)) {
    throw data(
      url.pathname.startsWith("/api/") ? { error: "Your role may not use this." } : "Your role may not use this page.",
      { status: 403 },
    );
  }
  return user;
}

export async function getOptionalUser(request: Request) {
  return getSessionUser(request);
}
