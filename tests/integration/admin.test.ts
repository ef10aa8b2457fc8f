import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { waitForMessage } from "#fakes/smtp/client.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// The administration section driven through the production build: forms posted as a browser
// without JavaScript would post them, mail read back from the SMTP fake, effects checked in the
// database. Every person, site and logger here is invented.

let people: Awaited<ReturnType<typeof createPeople>>;
let admin: Jar;
const mailbox = () => process.env.MAILBOX_URL!;
const run = Date.now().toString(36); // keeps addresses unique in the shared mail catcher

beforeAll(async () => {
  people = await createPeople(db);
  admin = await signIn("admin@test.example", TEST_PASSWORD);
});

function post(path: string, form: Record<string, string>, jar: Jar = admin) {
  return request(path, { jar, form });
}

/** Posts a form with repeated fields (checkbox groups). */
function postMulti(path: string, entries: [string, string][], jar: Jar = admin) {
  const body = new URLSearchParams(entries);
  return request(path, { jar, body, method: "POST", headers: { "Content-Type": "application/x-www-form-urlencoded" } });
}

async function auditFor(entityId: string) {
  return db
    .selectFrom("audit_event")
    .select(["person_id", "entity", "action", "before", "after"])
    .where("entity_id", "=", entityId)
    .orderBy("id")
    .execute();
}

/** The order in which people's names appear as row links in the rendered table. */
function linkedNames(html: string, base = "/admin/people/") {
  const re = new RegExp(`href="${base}[0-9a-f-]{36}"[^>]*>([^<]+)<`, "g");
  return [...html.matchAll(re)].map((m) => m[1]);
}

describe("inviting people", () => {
  it("creates the person without a password, mails a link that sets one, and sign-in then works", async () => {
    const email = `wren.talbot.${run}@marrowby.test`;
    const before = Date.now();
    const res = await post("/admin/people", { intent: "invite", name: "Wren Talbot", email, role: "officer" });
    expect(res.status).toBe(302);
    const location = res.headers.get("Location")!;
    expect(location).toMatch(/^\/admin\/people\/[0-9a-f-]{36}\?saved=invited$/);

    const row = await db.selectFrom("person").select(["id", "role", "password_hash", "disabled_at"]).where("email", "=", email).executeTakeFirstOrThrow();
    expect(row).toMatchObject({ role: "officer", password_hash: null, disabled_at: null });

    const page = await request(location, { jar: admin });
    const html = await page.text();
    expect(html).toContain("Invitation sent.");
    expect(/<header>[\s\S]*?<\/header>/.exec(html)?.[0]).toContain("Invitation pending");

    const msg = await waitForMessage(mailbox(), (m) => m.to.includes(email) && Date.parse(m.receivedAt) >= before - 1000, 10_000);
    expect(msg.subject).toBe("You have been invited to Ripplemark");
    expect(msg.text).toContain("Test admin has invited you");
    const link = /http:\/\/[^\s]+\/reset-password\/[A-Za-z0-9_-]+/.exec(msg.text ?? "")?.[0];
    expect(link).toBeTruthy();
    const path = new URL(link!).pathname;
    expect(await (await request(path)).text()).toContain("Welcome, Wren Talbot");

    const set = await request(path, { form: { password: "quell-river-2025", confirm: "quell-river-2025" } });
    expect(set.status).toBe(302);
    const jar = await signIn(email, "quell-river-2025");
    expect((await request("/", { jar })).status).toBe(200);

    const listed = await (await request(`/admin/people?q=${encodeURIComponent(email)}`, { jar: admin })).text();
    const row1 = /Wren Talbot[\s\S]*?<\/tr>/.exec(listed)?.[0] ?? "";
    expect(row1).toContain("Active");
    expect(row1).not.toContain("Invitation pending");

    const audit = await auditFor(row.id);
    expect(audit).toEqual([
      { person_id: people.admin.id, entity: "person", action: "invite", before: null, after: { name: "Wren Talbot", email, role: "officer" } },
    ]);
  });

  it("refuses an e-mail that is already used (in any letter case) with an inline error", async () => {
    const count = async () => Number((await db.selectFrom("person").select((eb) => eb.fn.countAll().as("n")).executeTakeFirstOrThrow()).n);
    const n = await count();
    const res = await post("/admin/people", { intent: "invite", name: "Second Officer", email: "Officer@Test.Example", role: "officer" });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Someone already has an account with this e-mail address");
    expect(html).toMatch(/<input[^>]*aria-invalid="true"[^>]*name="email"|<input[^>]*name="email"[^>]*aria-invalid="true"/);
    expect(await count()).toBe(n);
  });

  it("answers a malformed invitation with 400 and field errors", async () => {
    const res = await post("/admin/people", { intent: "invite", name: "", email: "not-an-address", role: "overlord" });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Enter a name");
    expect(html).toContain("Enter a valid e-mail address");
    expect(html).toContain("Choose a role");
  });

  it("sends the invitation again with a new link; the old one stops working", async () => {
    const email = `jory.pell.${run}@marrowby.test`;
    const first = await post("/admin/people", { intent: "invite", name: "Jory Pell", email, role: "technician" });
    const personPath = first.headers.get("Location")!.split("?")[0];
    const m1 = await waitForMessage(mailbox(), (m) => m.to.includes(email), 10_000);
    const t0 = Date.now();
    const again = await post(personPath, { intent: "resend" });
    expect(again.headers.get("Location")).toBe(`${personPath}?saved=resent`);
    const m2 = await waitForMessage(mailbox(), (m) => m.to.includes(email) && m.id !== m1.id && Date.parse(m.receivedAt) >= t0 - 1000, 10_000);
    const oldPath = new URL(/http:\/\/\S+\/reset-password\/\S+/.exec(m1.text!)![0]).pathname;
    const newPath = new URL(/http:\/\/\S+\/reset-password\/\S+/.exec(m2.text!)![0]).pathname;
    expect(newPath).not.toBe(oldPath);
    expect(await (await request(oldPath)).text()).toContain("already been used");
    expect(await (await request(newPath)).text()).toContain("Welcome, Jory Pell");
  });
});

describe("changing a person", () => {
  it("changes a role and audits only the role", async () => {
    const res = await post(`/admin/people/${people.manager.id}`, { intent: "role", role: "officer" });
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe(`/admin/people/${people.manager.id}?saved=role`);
    const row = await db.selectFrom("person").select("role").where("id", "=", people.manager.id).executeTakeFirstOrThrow();
    expect(row.role).toBe("officer");
    const audit = await auditFor(people.manager.id);
    expect(audit.at(-1)).toEqual({ person_id: people.admin.id, entity: "person", action: "change-role", before: { role: "manager" }, after: { role: "officer" } });
    expect((await request(res.headers.get("Location")!, { jar: admin }).then((r) => r.text()))).toContain("Role changed.");
    // back, so other tests see the four roles as created
    await post(`/admin/people/${people.manager.id}`, { intent: "role", role: "manager" });
  });

  it("will not let an admin remove their own admin role or disable themself", async () => {
    const demote = await post(`/admin/people/${people.admin.id}`, { intent: "role", role: "officer" });
    expect(demote.status).toBe(400);
    expect(await demote.text()).toContain("You cannot remove your own administrator role");
    const disable = await post(`/admin/people/${people.admin.id}`, { intent: "disable" });
    expect(disable.status).toBe(400);
    expect(await disable.text()).toContain("You cannot disable your own account");
    const me = await db.selectFrom("person").select(["role", "disabled_at"]).where("id", "=", people.admin.id).executeTakeFirstOrThrow();
    expect(me).toEqual({ role: "admin", disabled_at: null });
  });

  it("disabling ends the person's live sessions at once; enabling lets them back in", async () => {
    const victim = await db
      .insertInto("person")
      .values({ email: `ash.morrow.${run}@marrowby.test`, name: "Ash Morrow", role: "officer", password_hash: (await db.selectFrom("person").select("password_hash").where("id", "=", people.officer.id).executeTakeFirstOrThrow()).password_hash })
      .returning(["id", "email"])
      .executeTakeFirstOrThrow();
    const jar = await signIn(victim.email, TEST_PASSWORD);
    expect((await request("/", { jar })).status).toBe(200);

    const res = await post(`/admin/people/${victim.id}`, { intent: "disable" });
    expect(res.headers.get("Location")).toBe(`/admin/people/${victim.id}?saved=disabled`);
    const after = await request("/", { jar });
    expect(after.status).toBe(302);
    expect(after.headers.get("Location")).toMatch(/^\/sign-in/);
    const open = await db.selectFrom("session").select("id").where("person_id", "=", victim.id).where("revoked_at", "is", null).execute();
    expect(open).toEqual([]);
    expect((await request("/sign-in", { form: { email: victim.email, password: TEST_PASSWORD } })).status).toBe(401);
    expect(await (await request(`/admin/people?status=disabled`, { jar: admin })).text()).toContain("Ash Morrow");

    await post(`/admin/people/${victim.id}`, { intent: "enable" });
    expect((await request("/", { jar: await signIn(victim.email, TEST_PASSWORD) })).status).toBe(200);
    expect((await auditFor(victim.id)).map((a) => a.action)).toEqual(["disable", "enable"]);
  });

  it("assigns sites to a technician and refuses unknown site ids", async () => {
    const sites = await db
      .insertInto("site")
      .values([
        { code: `AS-${run.slice(-4).toUpperCase()}1`, name: "Assignment Spring", kind: "spring", latitude: 51.1, longitude: -2.1 },
        { code: `AS-${run.slice(-4).toUpperCase()}2`, name: "Assignment Borehole", kind: "borehole", latitude: 51.2, longitude: -2.2 },
      ])
      .returning(["id", "code"])
      .execute();
    const path = `/admin/people/${people.technician.id}`;
    const ok = await postMulti(path, [["intent", "sites"], ["siteIds", sites[0].id], ["siteIds", sites[1].id]]);
    expect(ok.headers.get("Location")).toBe(`${path}?saved=sites`);
    const rows = await db.selectFrom("site_assignment").select("site_id").where("person_id", "=", people.technician.id).execute();
    expect(rows.map((r) => r.site_id).sort()).toEqual(sites.map((s) => s.id).sort());
    expect((await auditFor(people.technician.id)).at(-1)).toMatchObject({ action: "assign-sites", before: { sites: [] }, after: { sites: sites.map((s) => s.code).sort() } });

    const bad = await postMulti(path, [["intent", "sites"], ["siteIds", "00000000-0000-4000-8000-000000000000"]]);
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain("no longer exists");

    const officer = await postMulti(`/admin/people/${people.officer.id}`, [["intent", "sites"], ["siteIds", sites[0].id]]);
    expect(officer.status).toBe(400);
  });

  it("answers 404 for a malformed or unknown person id, and 400 for an unknown intent", async () => {
    expect((await request("/admin/people/not-a-uuid", { jar: admin })).status).toBe(404);
    expect((await request("/admin/people/00000000-0000-4000-8000-000000000000", { jar: admin })).status).toBe(404);
    expect((await post(`/admin/people/${people.officer.id}`, { intent: "promote-to-king" })).status).toBe(400);
  });
});

describe("the people table", () => {
  beforeAll(async () => {
    // 30 invented names, so paging at 10 gives several pages.
    await db
      .insertInto("person")
      .values(Array.from({ length: 30 }, (_, i) => ({ email: `paging${String(i).padStart(2, "0")}@marrowby.test`, name: `Paging Person ${String(i).padStart(2, "0")}`, role: "manager" as const })))
      .execute();
  });

  it("sorts by an allow-listed column in both directions", async () => {
    const asc = linkedNames(await (await request("/admin/people?q=Paging&sort=name&dir=asc&size=10", { jar: admin })).text());
    const desc = linkedNames(await (await request("/admin/people?q=Paging&sort=name&dir=desc&size=10", { jar: admin })).text());
    expect(asc.slice(0, 3)).toEqual(["Paging Person 00", "Paging Person 01", "Paging Person 02"]);
    expect(desc.slice(0, 3)).toEqual(["Paging Person 29", "Paging Person 28", "Paging Person 27"]);
  });

  it("pages with page X of Y and clamps a page past the end", async () => {
    const html = await (await request("/admin/people?q=Paging&size=10&page=2", { jar: admin })).text();
    expect(html).toMatch(/Page (<!-- -->)?2(<!-- -->)? of (<!-- -->)?3/);
    expect(linkedNames(html)[0]).toBe("Paging Person 10");
    expect(html).toMatch(/aria-sort="ascending"/);
    const past = await (await request("/admin/people?q=Paging&size=10&page=99", { jar: admin })).text();
    expect(linkedNames(past)[0]).toBe("Paging Person 20");
  });

  it("falls back to the default sort for an unknown column and ignores a bad page size", async () => {
    const res = await request("/admin/people?q=Paging&sort=password_hash&dir=desc&size=7", { jar: admin });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(linkedNames(html).slice(0, 2)).toEqual(["Paging Person 00", "Paging Person 01"]);
    expect(linkedNames(html)).toHaveLength(25);
    expect(html).not.toContain("scrypt$");
  });

  it("treats SQL-looking and wildcard search text as plain text", async () => {
    for (const q of ["' or 1=1 --", "x'); drop table person; --", "%", "_"]) {
      const res = await request(`/admin/people?q=${encodeURIComponent(q)}`, { jar: admin });
      expect(res.status).toBe(200);
      expect(linkedNames(await res.text())).toEqual([]);
    }
    expect(Number((await db.selectFrom("person").select((eb) => eb.fn.countAll().as("n")).executeTakeFirstOrThrow()).n)).toBeGreaterThan(30);
  });

  it("filters by role", async () => {
    const html = await (await request("/admin/people?role=technician", { jar: admin })).text();
    const names = linkedNames(html);
    expect(names).toContain("Test technician");
    expect(names).not.toContain("Test officer");
  });
});

describe("sites", () => {
  const good = { intent: "save", code: "ql-07", name: "Quell at Dunmere Ford", kind: "river", latitude: "51.48213", longitude: "-2.59171", timeZone: "europe/london", notes: "Gate key at the mill." };

  it("refuses a latitude out of range with an inline error and creates nothing", async () => {
    const res = await post("/admin/sites/new", { ...good, latitude: "95.2" });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("The latitude must be between −90 and 90");
    expect(html).toMatch(/<input[^>]*aria-invalid="true"[^>]*name="latitude"|<input[^>]*name="latitude"[^>]*aria-invalid="true"/);
    expect(await db.selectFrom("site").select("id").where("code", "=", "QL-07").executeTakeFirst()).toBeUndefined();
  });

  it("refuses a bad code, a non-decimal longitude and an unknown time zone", async () => {
    const res = await post("/admin/sites/new", { ...good, code: "QL 07!", longitude: "2°35'W", timeZone: "Europe/Marrowby" });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Use letters, digits and single dashes");
    expect(html).toContain("Enter the longitude in decimal degrees");
    expect(html).toContain("Enter a time zone name from the list");
    expect((await post("/admin/sites/new", { ...good, code: "ABCDEFGHIJKLM" })).status).toBe(400);
  });

  it("creates a site (upper-case code, canonical zone), audits it, and refuses the code twice", async () => {
    const res = await post("/admin/sites/new", good);
    expect(res.status).toBe(302);
    const site = await db.selectFrom("site").select(["id", "code", "time_zone", "latitude"]).where("code", "=", "QL-07").executeTakeFirstOrThrow();
    expect(site).toMatchObject({ code: "QL-07", time_zone: "Europe/London", latitude: 51.48213 });
    expect(res.headers.get("Location")).toBe(`/admin/sites/${site.id}?saved=created`);
    expect((await auditFor(site.id))[0]).toMatchObject({ action: "create", after: { code: "QL-07", name: good.name } });

    const again = await post("/admin/sites/new", { ...good, name: "Another" });
    expect(again.status).toBe(400);
    expect(await again.text()).toContain("Another site already uses this code");

    const edit = await post(`/admin/sites/${site.id}`, { ...good, name: "Quell at Dunmere Ford (east bank)" });
    expect(edit.headers.get("Location")).toBe(`/admin/sites/${site.id}?saved=saved`);
    expect((await auditFor(site.id)).at(-1)).toMatchObject({
      action: "update",
      before: { name: "Quell at Dunmere Ford" },
      after: { name: "Quell at Dunmere Ford (east bank)" },
    });
    const page = await (await request(`/admin/sites/${site.id}?saved=saved`, { jar: admin })).text();
    expect(page).toContain("Changes saved.");
    expect(page).toContain("Linear coefficient");
  });
});

describe("loggers and deployments", () => {
  let siteA: { id: string }, siteB: { id: string }, loggerPath: string, loggerId: string;

  beforeAll(async () => {
    [siteA, siteB] = await db
      .insertInto("site")
      .values([
        { code: "DP-01", name: "Quell Springs", kind: "spring", latitude: 51.6, longitude: -2.7, time_zone: "Europe/London" },
        { code: "DP-02", name: "Hollin Borehole", kind: "borehole", latitude: 51.7, longitude: -2.8, time_zone: "Europe/London" },
      ])
      .returning("id")
      .execute();
  });

  it("adds a logger with its interval in minutes stored as seconds", async () => {
    const bad = await post("/admin/loggers/new", { serial: "", intervalMinutes: "0" });
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain("Enter the serial number");
    const res = await post("/admin/loggers/new", { serial: "MW-C-0042", model: "Four-electrode conductivity logger", intervalMinutes: "15", notes: "" });
    expect(res.status).toBe(302);
    loggerPath = res.headers.get("Location")!.split("?")[0];
    loggerId = loggerPath.split("/").at(-1)!;
    const row = await db.selectFrom("logger").select(["serial", "logging_interval_s"]).where("id", "=", loggerId).executeTakeFirstOrThrow();
    expect(row).toEqual({ serial: "MW-C-0042", logging_interval_s: 900 });
    const dup = await post("/admin/loggers/new", { serial: "mw-c-0042", intervalMinutes: "10" });
    expect(dup.status).toBe(400);
    expect(await dup.text()).toContain("Another logger already has this serial number");
  });

  it("a new deployment closes the open one at its start; an earlier start is refused", async () => {
    // Europe/London is on GMT in January and February 2025, so wall time = UTC here.
    const first = await post(loggerPath, { intent: "deploy", siteId: siteA.id, deployedFrom: "2025-01-10T09:00" });
    expect(first.headers.get("Location")).toBe(`${loggerPath}?saved=deployed`);
    const second = await post(loggerPath, { intent: "deploy", siteId: siteB.id, deployedFrom: "2025-02-01T12:30" });
    expect(second.status).toBe(302);

    const rows = await db
      .selectFrom("logger_deployment")
      .select(["site_id", "deployed_from", "deployed_until"])
      .where("logger_id", "=", loggerId)
      .orderBy("deployed_from")
      .execute();
    expect(rows).toEqual([
      { site_id: siteA.id, deployed_from: new Date("2025-01-10T09:00:00Z"), deployed_until: new Date("2025-02-01T12:30:00Z") },
      { site_id: siteB.id, deployed_from: new Date("2025-02-01T12:30:00Z"), deployed_until: null },
    ]);

    const early = await post(loggerPath, { intent: "deploy", siteId: siteA.id, deployedFrom: "2025-01-20T08:00" });
    expect(early.status).toBe(400);
    expect(await early.text()).toContain("Must be after the start of the previous deployment");
    const future = await post(loggerPath, { intent: "deploy", siteId: siteA.id, deployedFrom: "2999-01-01T00:00" });
    expect(future.status).toBe(400);

    const list = await (await request("/admin/loggers?q=MW-C-0042", { jar: admin })).text();
    expect(list).toContain("DP-02");
    expect(list).toContain("1 Feb 2025");

    const deploys = (await auditFor(loggerId)).filter((a) => a.action === "deploy");
    expect(deploys).toHaveLength(2);
    expect(deploys[1]).toMatchObject({
      before: { site: "DP-01", deployed_from: "2025-01-10T09:00:00.000Z", deployed_until: null },
      after: { site: "DP-02", deployed_from: "2025-02-01T12:30:00.000Z", previous_deployment_closed_at: "2025-02-01T12:30:00.000Z" },
    });
  });

  it("ends a deployment only after it started", async () => {
    const before = await post(loggerPath, { intent: "end-deployment", deployedUntil: "2025-02-01T12:00" });
    expect(before.status).toBe(400);
    expect(await before.text()).toContain("Must be after the deployment started");
    const ok = await post(loggerPath, { intent: "end-deployment", deployedUntil: "2025-03-01T10:00" });
    expect(ok.headers.get("Location")).toBe(`${loggerPath}?saved=ended`);
    const open = await db.selectFrom("logger_deployment").select("id").where("logger_id", "=", loggerId).where("deployed_until", "is", null).execute();
    expect(open).toEqual([]);
  });
});

describe("mail outbox", () => {
  it("lists captured mail and shows a message's HTML only inside a sandboxed frame", async () => {
    const email = `outbox.${run}@marrowby.test`;
    await post("/admin/people", { intent: "invite", name: "Outbox <b>Reader</b>", email, role: "manager" });
    const msg = await waitForMessage(mailbox(), (m) => m.to.includes(email), 10_000);
    const list = await (await request(`/admin/outbox?to=${encodeURIComponent(email)}`, { jar: admin })).text();
    expect(list).toContain("You have been invited to Ripplemark");
    const page = await (await request(`/admin/outbox?to=${encodeURIComponent(email)}&message=${encodeURIComponent(msg.id)}`, { jar: admin })).text();
    expect(page).toMatch(/<iframe[^>]*sandbox=""/);
    // The mail's HTML reaches the page only escaped inside srcdoc, never as live markup.
    expect(page).not.toContain("<p>Hello Outbox");
    expect(page).toContain("&lt;p&gt;Hello Outbox");
  });
});

describe("the audit trail", () => {
  it("names the acting admin and never holds password hashes", async () => {
    const rows = await db.selectFrom("audit_event").select(["person_id", "before", "after"]).execute();
    expect(rows.length).toBeGreaterThan(5);
    for (const r of rows) {
      expect(r.person_id).toBe(people.admin.id);
      expect(JSON.stringify([r.before, r.after])).not.toMatch(/scrypt\$|password_hash/);
    }
  });
});
