import axe from "axe-core";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import type { Page } from "playwright-core";
import { createDb } from "#db/connect.ts";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { getMessage, listMessages, type StoredMessage } from "#fakes/smtp/client.ts";
import { signInAs, useBrowser, waitForPage } from "../support/browser.ts";

// An officer writes an alert rule in the browser, readings break it, the worker finds the event and
// e-mails it through the SMTP fake, and the officer opens the event from the e-mail's link and
// classifies it. The demo's 30 days hold no event for this rule, so the test brings its own
// readings: a logger stretch at QF2 in March 2018 (clear of the seeded days), written as the ingest
// job writes them and followed by the readings-changed job it queues.
const browser = useBrowser();
const idris = DEMO_PEOPLE.find((p) => p.role === "officer")!;
const RUN = Math.random().toString(36).slice(2, 6).toUpperCase();
const RULE = `Salt watch at Fernmoor ${RUN}`;

let db: ReturnType<typeof createDb>;

beforeAll(() => {
  db = createDb(inject("databaseUrl"), 2);
});
afterAll(async () => {
  await db?.destroy();
});

async function axeProblems(page: Page) {
  await page.evaluate(axe.source);
  return page.evaluate(async () => {
    const result = await (window as unknown as { axe: typeof axe }).axe.run(document, {
      resultTypes: ["violations"],
      runOnly: { type: "tag", values: ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"] },
    });
    return result.violations.filter((v) => v.impact === "serious" || v.impact === "critical").map((v) => `${v.id}: ${v.help}`);
  });
}

/** Readings every 15 minutes at 25 °C (specific conductance = conductivity there; Standard Methods 2510 B). */
async function writeReadings(siteCode: string, serial: string, startIso: string, values: number[]) {
  const site = await db.selectFrom("site").select("id").where("code", "=", siteCode).executeTakeFirstOrThrow();
  const logger = await db.selectFrom("logger").select("id").where("serial", "=", serial).executeTakeFirstOrThrow();
  const start = Date.parse(startIso);
  const times = values.map((_, i) => new Date(start + i * 15 * 60_000));
  await sql`select ensure_reading_partitions(${times[0]}, ${times[times.length - 1]})`.execute(db);
  await sql`
    insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l)
    select ${site.id}::uuid, ${logger.id}::uuid, t.time, gen_random_uuid(), t.n::int + 1, t.v, 25, t.v, t.v, 0.65 * t.v
    from unnest(${times}::timestamptz[], ${values}::float8[]) with ordinality as t(time, v, n)`.execute(db);
  const payload = { siteId: site.id, fromMs: start, toMs: times[times.length - 1].getTime(), reason: "ingest" };
  await sql`select graphile_worker.add_job('readings-changed', ${JSON.stringify(payload)}::json, max_attempts => 10)`.execute(db);
}

async function alertMail(ruleName: string, timeoutMs: number): Promise<StoredMessage> {
  const deadline = Date.now() + timeoutMs;
  const seen = new Set<string>();
  for (;;) {
    for (const m of await listMessages(inject("mailboxUrl"), { to: idris.email })) {
      if (seen.has(m.id) || !m.subject.startsWith("Ripplemark alert: QF2")) continue;
      seen.add(m.id);
      const full = await getMessage(inject("mailboxUrl"), m.id);
      if (full?.text?.includes(ruleName)) return full;
    }
    if (Date.now() > deadline) throw new Error(`no alert e-mail for "${ruleName}" within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

describe("alert rules, exceedances and e-mail", () => {
  it("shows each role the alert pages it may use in the navigation", async () => {
    const expected: Record<string, { shows: string[]; hides: string[] }> = {
      technician: { shows: ["Alert rules"], hides: ["Exceedances"] },
      manager: { shows: ["Alert rules"], hides: ["Exceedances"] },
      officer: { shows: ["Alert rules", "Exceedances"], hides: [] },
    };
    for (const [role, { shows, hides }] of Object.entries(expected)) {
      const person = DEMO_PEOPLE.find((p) => p.role === role)!;
      const page = await browser.page();
      await signInAs(page, person.email, person.password);
      try {
        await expect.poll(() => page.getByTestId("current-user").textContent()).toContain(person.name);
        const nav = page.getByRole("navigation", { name: "Main" });
        for (const label of shows) await expect.poll(() => nav.getByRole("link", { name: label, exact: true }).count(), { message: `${role}: ${label}` }).toBe(1);
        for (const label of hides) expect(await nav.getByRole("link", { name: label, exact: true }).count(), `${role}: ${label}`).toBe(0);
        expect(await page.getByTestId("notifications-link").count()).toBe(1);
      } finally {
        // The browser context is shared by the file's tests: never leave a session behind.
        await page.getByRole("button", { name: "Sign out" }).click();
        await waitForPage(page, (u) => u.pathname.startsWith("/sign-in"));
      }
    }
  });

  it("an officer sets a rule, the e-mail about the event arrives, and the officer classifies the event", async () => {
    const page = await browser.page();
    const consoleErrors: string[] = [];
    page.on("console", (m) => {
      if (m.type() === "error") consoleErrors.push(m.text());
    });
    await signInAs(page, idris.email, idris.password);

    // 1. The rule, in mS/cm, with the form checking the clear level as it is typed.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Alert rules" }).click();
    await waitForPage(page, "**/alert-rules");
    expect(await page.getByTestId("screening-caution").first().textContent()).toContain("screening values");
    await page.getByRole("link", { name: "New rule" }).click();
    await waitForPage(page, "**/alert-rules/new");
    await page.getByLabel("Name").fill(RULE);
    await page.getByLabel("Unit of the values").selectOption("mS/cm");
    await page.getByLabel("Threshold").fill("3");
    await page.getByLabel("Clear level").fill("3.2");
    await page.getByLabel("Minimum duration").fill("30");
    await page.getByLabel("Minimum duration").press("Tab");
    await expect.poll(() => page.locator("#alert-rule-clearLevel-error, [id$='clearLevel-error']").first().textContent()).toContain("the clear level must be at or below the threshold");
    await page.getByLabel("Clear level").fill("2.8");
    await page.getByLabel("Clear level").press("Tab");
    await page.getByLabel("QF2 · Quell at Fernmoor Bridge").check();
    expect(await page.getByLabel("Environmental officer").isChecked()).toBe(true);
    expect(await page.getByLabel("Also send an e-mail for each new event").isChecked()).toBe(true);
    expect(await axeProblems(page)).toEqual([]);
    await page.getByRole("button", { name: "Save the rule" }).click();
    await waitForPage(page, (u) => /^\/alert-rules\/[0-9a-f-]{36}$/.test(u.pathname) && u.searchParams.get("saved") === "created");
    expect(await page.getByRole("status").textContent()).toContain("The rule is saved");
    // The summary of the rule (the history below it says the same of the first version).
    expect(await page.locator('section[aria-labelledby="rule-summary"] dd').filter({ hasText: "above 3 mS/cm" }).textContent()).toContain("for at least 30 min; clears at 2.8 mS/cm");
    expect(await page.getByTestId("rule-history").textContent()).toMatch(/Created .* by /);
    const ruleId = new URL(page.url()).pathname.split("/").pop()!;

    // The rule first checks QF2's history in the background; let that finish so the event below
    // is found from the new readings (and e-mailed), not from the history check (which does not e-mail).
    await expect
      .poll(async () => (await sql`select 1 from graphile_worker._private_jobs where key = ${`evaluate-rule:${ruleId}`}`.execute(db)).rows.length, { timeout: 60_000, interval: 500 })
      .toBe(0);

    // 2. Readings that break it: 2,000 µS/cm, then 3,400 µS/cm for two hours, then back.
    const values = [...Array(8).fill(2000), ...Array(9).fill(3400), ...Array(8).fill(2000)];
    values[12] = 3650; // the peak, at 03:00
    await writeReadings("QF2", "RQ-4102", "2018-03-05T00:00:00Z", values);

    // 3. The worker finds the event and the e-mail arrives in the SMTP fake.
    const mail = await alertMail(RULE, 90_000);
    expect(mail.subject).toBe("Ripplemark alert: QF2 specific conductance, highest value 3.65 mS/cm");
    expect(mail.text).toContain("Site: QF2 · Quell at Fernmoor Bridge");
    expect(mail.text).toContain("Started: 5 Mar 2018, 02:00 GMT");
    // 02:00 to 04:15, the first reading back at or below 2.8 mS/cm.
    expect(mail.text).toContain("Duration: 2 h 15 min");
    expect(mail.text).toContain("screening values");
    const link = mail.text!.match(/Review it: (\S+)/)![1];
    expect(link).toMatch(new RegExp(`^${inject("baseURL")}/exceedances/[0-9a-f-]{36}$`));

    // 4. The officer opens the event from the e-mail, sees it on the chart and classifies it.
    await page.goto(new URL(link).pathname);
    expect(await page.getByRole("heading", { level: 1 }).textContent()).toContain("3.65 mS/cm");
    await expect.poll(() => page.getByTestId("event-chart").getAttribute("data-state"), { timeout: 30_000 }).toBe("ready");
    expect(await page.getByTestId("event-chart").locator("figcaption").textContent()).toContain("Dashed line: threshold 3 mS/cm");
    expect(await axeProblems(page)).toEqual([]);
    await page.getByLabel(/Sensor fault or fouling/).check();
    await page.getByLabel(/Flag this event's readings as a sensor fault/).check();
    await page.getByLabel("Comment").fill("Weed round the probe; cleaned on the next round.");
    await page.getByRole("button", { name: "Save and close" }).click();
    await waitForPage(page, (u) => u.searchParams.get("saved") === "closed");
    await expect.poll(() => page.getByTestId("event-status").textContent()).toContain("Closed");
    expect(await page.getByTestId("event-status").textContent()).toContain("Sensor fault or fouling");
    // 02:00–04:00: nine readings (04:15, back at 2 mS/cm, ended the event and is not flagged).
    expect(await page.getByTestId("event-status").textContent()).toContain("9 readings flagged");
    const trail = page.getByTestId("audit-trail");
    expect(await trail.locator("li").first().textContent()).toContain("Closed");
    expect(await trail.locator("li").first().textContent()).toContain("Idris Penhallow");
    expect(await trail.textContent()).toContain("Outcome: not classified → Sensor fault or fouling");
    expect(await trail.textContent()).toContain("Found by the alert rule");

    // 5. The exceedance list shows it closed; the notification sits in the officer's list.
    await page.goto(`/exceedances?site=QF2&status=closed`);
    const row = page.getByRole("row").filter({ hasText: RULE });
    expect(await row.count()).toBe(1);
    expect(await row.textContent()).toContain("Sensor fault or fouling");
    expect(await axeProblems(page)).toEqual([]);
    await page.getByTestId("notifications-link").click();
    await waitForPage(page, "**/notifications");
    expect(await page.getByTestId("notification-list").textContent()).toContain(RULE);

    expect(consoleErrors).toEqual([]);
  });
});
