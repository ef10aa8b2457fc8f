import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { GENERIC_SIGN_IN_ERROR, THROTTLE_LIMIT } from "#app/utils/auth.server.ts";
import { listMessages, waitForMessage } from "#fakes/smtp/client.ts";
import { request, signIn } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

let people: Awaited<ReturnType<typeof createPeople>>;
const mailbox = () => process.env.MAILBOX_URL!;

beforeAll(async () => {
  people = await createPeople(db);
});

async function signInStatus(email: string, password: string) {
  const res = await request("/sign-in", { form: { email, password } });
  return { status: res.status, body: res.status === 302 ? "" : await res.text(), res };
}

describe("sign-in", () => {
  it("succeeds with the right password and sets a signed, httpOnly, SameSite=Lax cookie", async () => {
    const { status, res } = await signInStatus("officer@test.example", TEST_PASSWORD);
    expect(status).toBe(302);
    const cookie = res.headers.get("Set-Cookie")!;
    expect(cookie).toMatch(/^rm_session=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    // Only the (signed) random token is in the cookie: no e-mail, no role.
    expect(cookie).not.toMatch(/officer/);
  });

  it("gives the same generic message for a wrong password and an unknown e-mail", async () => {
    const wrong = await signInStatus("manager@test.example", "not-the-password");
    const unknown = await signInStatus("nobody@test.example", "not-the-password");
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body).toContain(GENERIC_SIGN_IN_ERROR.replace(/'/g, "&#x27;"));
    expect(unknown.body).toContain(GENERIC_SIGN_IN_ERROR.replace(/'/g, "&#x27;"));
  });

  it("answers a malformed form with 400 and inline field errors", async () => {
    const res = await request("/sign-in", { form: { email: "not-an-email", password: "" } });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Enter a valid e-mail address");
    expect(html).toContain("Enter your password");
    expect(html).toContain('aria-invalid="true"');
  });

  it("throttles after repeated failures, even with the right password", async () => {
    const email = "technician@test.example";
    for (let i = 0; i < THROTTLE_LIMIT; i++) expect((await signInStatus(email, `wrong-${i}`)).status).toBe(401);
    const blocked = await signInStatus(email, TEST_PASSWORD);
    expect(blocked.status).toBe(429);
    expect(blocked.body).toMatch(/Too many failed attempts/);
  });

  it("gives every sign-in a new session id (no fixation)", async () => {
    const a = await signIn("admin@test.example", TEST_PASSWORD);
    const b = await signIn("admin@test.example", TEST_PASSWORD);
    expect(a.cookie).not.toEqual(b.cookie);
  });
});

describe("sessions", () => {
  it("sign-out revokes the session server-side: the old cookie no longer works", async () => {
    const jar = await signIn("manager@test.example", TEST_PASSWORD);
    const stolen = { ...jar };
    expect((await request("/", { jar })).status).toBe(200);
    expect((await request("/sign-out", { jar, form: {} })).status).toBe(302);
    const after = await request("/", { jar: stolen });
    expect(after.status).toBe(302);
    expect(after.headers.get("Location")).toMatch(/^\/sign-in/);
  });

  it("disabling a person ends their live sessions and stops sign-in", async () => {
    const person = await db
      .insertInto("person")
      .values({ email: "leaver@test.example", name: "Leaver", role: "officer", password_hash: (await db.selectFrom("person").select("password_hash").where("id", "=", people.officer.id).executeTakeFirstOrThrow()).password_hash })
      .returning("id")
      .executeTakeFirstOrThrow();
    const jar = await signIn("leaver@test.example", TEST_PASSWORD);
    expect((await request("/", { jar })).status).toBe(200);
    await db.updateTable("person").set({ disabled_at: new Date() }).where("id", "=", person.id).execute();
    expect((await request("/", { jar })).status).toBe(302);
    expect((await signInStatus("leaver@test.example", TEST_PASSWORD)).status).toBe(401);
  });

  it("refuses a cross-site POST even with a valid cookie, and changes nothing", async () => {
    const jar = await signIn("officer@test.example", TEST_PASSWORD);
    const before = await db.selectFrom("person").select("weekly_digest").where("id", "=", people.officer.id).executeTakeFirstOrThrow();
    const res = await request("/account", { jar, form: { intent: "digest", weeklyDigest: String(!before.weekly_digest) }, headers: { Origin: "https://evil.example" } });
    // React Router refuses a mismatched Origin on actions (400) before our own check (403) runs.
    expect([400, 403]).toContain(res.status);
    const after = await db.selectFrom("person").select("weekly_digest").where("id", "=", people.officer.id).executeTakeFirstOrThrow();
    expect(after.weekly_digest).toBe(before.weekly_digest);
    // The same change from our own origin goes through, so the refusal above is about the origin.
    const ok = await request("/account", { jar, form: { intent: "digest", weeklyDigest: String(!before.weekly_digest) } });
    expect(ok.status).toBe(200);
    const changed = await db.selectFrom("person").select("weekly_digest").where("id", "=", people.officer.id).executeTakeFirstOrThrow();
    expect(changed.weekly_digest).toBe(!before.weekly_digest);
  });
});

describe("password reset by e-mail", () => {
  it("sends a one-time link that works once and then says it was used", async () => {
    const email = "manager@test.example";
    const before = Date.now();
    const res = await request("/forgot-password", { form: { email } });
    expect(res.status).toBe(200);
    const msg = await waitForMessage(mailbox(), (m) => m.to.includes(email) && Date.parse(m.receivedAt) >= before - 1000, 10_000);
    const link = /http:\/\/[^\s]+\/reset-password\/[A-Za-z0-9_-]+/.exec(msg.text ?? "")?.[0];
    expect(link).toBeTruthy();
    const path = new URL(link!).pathname;
    const page = await request(path);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain("Choose a new password");

    const mismatch = await request(path, { form: { password: "new-password-123", confirm: "different-123" } });
    expect(mismatch.status).toBe(400);
    expect(await mismatch.text()).toContain("The two passwords differ");

    const ok = await request(path, { form: { password: "new-password-123", confirm: "new-password-123" } });
    expect(ok.status).toBe(302);
    expect((await signInStatus(email, "new-password-123")).status).toBe(302);

    const again = await request(path);
    expect(await again.text()).toContain("already been used");
    const reuse = await request(path, { form: { password: "another-password-1", confirm: "another-password-1" } });
    expect(reuse.status).toBe(410);
  });

  it("refuses an expired link with a clear message", async () => {
    const { createPasswordToken } = await import("#app/models/password-token.server.ts");
    const token = await createPasswordToken(people.admin.id, "reset");
    await db.updateTable("password_token").set({ expires_at: new Date(Date.now() - 1000) }).where("person_id", "=", people.admin.id).execute();
    const page = await request(`/reset-password/${token}`);
    expect(await page.text()).toContain("This link has expired");
  });

  it("answers the same for an unknown e-mail and sends nothing", async () => {
    const before = (await listMessages(mailbox(), { to: "nobody-here@test.example" })).length;
    const res = await request("/forgot-password", { form: { email: "nobody-here@test.example" } });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("If that e-mail belongs to an active account");
    await new Promise((r) => setTimeout(r, 300));
    expect((await listMessages(mailbox(), { to: "nobody-here@test.example" })).length).toBe(before);
  });
});

describe("migrations", () => {
  it("ran up from empty and created the four roles", async () => {
    const roles = await db.selectFrom("role").select("name").orderBy("rank").execute();
    expect(roles.map((r) => r.name)).toEqual(["technician", "officer", "manager", "admin"]);
  });
});
