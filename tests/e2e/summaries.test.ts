import { describe, expect, inject, it } from "vitest";
import { DEMO_ORGANISATION, DEMO_PEOPLE, DEMO_SITES } from "#db/demo/scenario.ts";
import { listMessages, waitForMessage } from "#fakes/smtp/client.ts";
import { signInAs, useBrowser, waitForPage } from "../support/browser.ts";

// A utility manager reads the week (the demo seed leaves the summaries computed), sees every site in
// the table with its sparkline and status, the heat-map, and opens the printable report; an
// administrator sends the digest now and the worker delivers it.
const browser = useBrowser();
const manager = DEMO_PEOPLE.find((p) => p.role === "manager")!;
const admin = DEMO_PEOPLE.find((p) => p.role === "admin")!;

describe("weekly summaries in the browser", () => {
  it("a manager sees the week's table for every site and the heat-map", async () => {
    await browser.context().clearCookies(); // one browser profile for the file: start each test signed out
    const page = await browser.page();
    await signInAs(page, manager.email, manager.password);
    await page.locator("nav").getByRole("link", { name: "Weekly summaries", exact: true }).click();
    await waitForPage(page, (u) => u.pathname === "/summaries");
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent()).toMatch(/^Week \d+ of \d{4} · /);
    const table = page.getByTestId("week-table");
    // Browser tests share one database, and another file adds a site of its own: at least the demo's.
    await expect.poll(() => table.locator("tbody tr").count()).toBeGreaterThanOrEqual(DEMO_SITES.length);
    for (const s of DEMO_SITES) {
      const row = table.locator(`tr[data-site="${s.code}"]`);
      expect(await row.count()).toBe(1);
      // The last complete week of the demo month has readings at every site: a median in µS/cm and a sparkline.
      expect(await row.locator('[data-cell="sc25-median"]').textContent()).toMatch(/^\d{1,3}(,\d{3})*$/);
      expect(await row.getByRole("img").first().getAttribute("aria-label")).toContain("Daily median specific conductance");
      // A status always comes as a word beside its shape.
      expect((await row.locator("[data-week-status]").textContent())?.trim()).toMatch(/Look at this week|Keep watching|Steady|No readings/);
    }
    await expect.poll(() => page.getByText("screening estimates").count()).toBeGreaterThan(0);
    // The heat-map draws as SVG in the browser; its text alternative holds the same weeks.
    await expect.poll(() => page.getByTestId("heatmap").locator("svg").count(), { timeout: 15_000 }).toBeGreaterThan(0);
    await page.getByText("The heat-map as a table").click();
    expect(await page.locator("details table tbody tr").count()).toBeGreaterThanOrEqual(DEMO_SITES.length);

    // Another statistic for the heat-map.
    await page.getByLabel("Statistic").selectOption("completeness");
    await page.getByRole("button", { name: "Redraw" }).click();
    await waitForPage(page, (u) => u.searchParams.get("stat") === "completeness");
    await expect.poll(() => page.locator("details caption").textContent()).toContain("Data completeness");
  });

  it("a manager opens the printable report: organisation, week, tables, charts, A4 print", async () => {
    await browser.context().clearCookies(); // one browser profile for the file: start each test signed out
    const page = await browser.page();
    await signInAs(page, manager.email, manager.password);
    await page.goto("/summaries");
    const week = (await page.getByRole("heading", { level: 1 }).textContent())!;
    await page.getByRole("link", { name: "Printable report" }).click();
    await waitForPage(page, (u) => /^\/summaries\/\d{4}-W\d{2}\/print$/.test(u.pathname));
    const headers = page.locator(".report-header");
    await expect.poll(() => headers.count()).toBe(4); // one per section, each on its own page
    expect(await headers.first().textContent()).toContain(DEMO_ORGANISATION);
    expect(await headers.first().textContent()).toContain(week);
    expect(await page.getByTestId("print-sc-table").locator("tbody tr").count()).toBeGreaterThanOrEqual(DEMO_SITES.length);
    expect(await page.locator(".site-chart svg").count()).toBeGreaterThanOrEqual(DEMO_SITES.length);
    // Printed, the page has no navigation and no buttons; it renders to PDF pages of A4.
    await page.emulateMedia({ media: "print" });
    await expect.poll(() => page.getByRole("button", { name: "Print or save as PDF" }).isVisible()).toBe(false);
    expect(await page.locator("nav").count()).toBe(0);
    const pdf = await page.pdf({ preferCSSPageSize: true });
    expect(pdf.subarray(0, 5).toString()).toBe("%PDF-");
    // A4 is 210 × 297 mm = 595.3 × 841.9 points (ISO 216): every page's MediaBox says so, and each of
    // the four sections starts a page of its own.
    const raw = pdf.toString("latin1");
    const boxes = [...raw.matchAll(/\/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]/g)].map((m) => [Number(m[1]), Number(m[2])]);
    expect(boxes.length).toBeGreaterThanOrEqual(4);
    for (const [w, h] of boxes) {
      expect(Math.abs(w - 595.3)).toBeLessThan(1);
      expect(Math.abs(h - 841.9)).toBeLessThan(1);
    }
    await page.emulateMedia({ media: "screen" });
  });

  it("an administrator sends the digest now; the worker delivers it to the manager with the page's figures", async () => {
    await browser.context().clearCookies(); // one browser profile for the file: start each test signed out
    const page = await browser.page();
    await signInAs(page, admin.email, admin.password);
    await page.goto("/summaries");
    const label = (await page.getByRole("heading", { level: 1 }).textContent())!;
    const qh1Median = (await page.getByTestId("week-table").locator('tr[data-site="QH1"] [data-cell="sc25-median"]').textContent())!;
    const subject = `Weekly site digest: ${label} · ${DEMO_ORGANISATION}`;
    const mailbox = inject("mailboxUrl");
    const before = (await listMessages(mailbox, { to: manager.email })).filter((m) => m.subject === subject).length;
    await page.getByRole("button", { name: "Send this week's digest now" }).click();
    await expect.poll(() => page.getByRole("status").textContent()).toContain("on its way");
    const mail = await waitForMessage(mailbox, (m) => m.subject === subject && m.to.includes(manager.email), 30_000);
    expect(mail.text).toMatch(/Sites that need a look first:|No site needs a look this week\./);
    // The digest's QH1 block carries the same median as the page.
    const block = mail.text!.slice(mail.text!.indexOf("\nQH1 "));
    expect(block).toMatch(new RegExp(`Median SC \\(µS/cm\\): ${qh1Median.replace(/[,]/g, ",")}\\n`));
    expect(mail.html).toContain("/summaries?week=");
    // Pressing again sends nobody a second copy.
    await page.getByRole("button", { name: "Send this week's digest now" }).click();
    await new Promise((r) => setTimeout(r, 4000));
    const after = (await listMessages(mailbox, { to: manager.email })).filter((m) => m.subject === subject).length;
    expect(after).toBe(before + 1);
  });
});
