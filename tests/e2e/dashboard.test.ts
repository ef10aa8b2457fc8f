import { randomUUID } from "node:crypto";
import axe from "axe-core";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { signInAs, useBrowser, waitForPage } from "../support/browser.ts";

// Overview → a site → change the range: the charts fetch new points from the series API in place,
// with no document load (a marker put on `window` before the change is still there after it).
// The site and its readings are this file's own (inserted directly, one synthetic upload row), so
// the test does not depend on the demo generator: 14 days of 15-minute readings ending now.

const browser = useBrowser();
const officer = DEMO_PEOPLE.find((p) => p.role === "officer")!;
const CODE = "QX9";
const NAME = "Dashboard Test Reach";
const SLOT = 15 * 60_000;

let client: pg.Client;

beforeAll(async () => {
  client = new pg.Client({ connectionString: inject("databaseUrl") });
  await client.connect();
  const end = Math.floor(Date.now() / SLOT) * SLOT;
  const start = end - 14 * 86_400_000;
  const site = await client.query<{ id: string }>(
    `insert into site (code, name, kind, latitude, longitude, time_zone) values ($1, $2, 'river', 54.31, -2.85, 'Europe/London')
     on conflict (code) do update set name = excluded.name returning id`,
    [CODE, NAME],
  );
  const siteId = site.rows[0].id;
  const logger = await client.query<{ id: string }>(
    `insert into logger (serial, logging_interval_s) values ('QX9-E2E', 900) on conflict (serial) do update set logging_interval_s = 900 returning id`,
  );
  const loggerId = logger.rows[0].id;
  await client.query("insert into logger_deployment (logger_id, site_id, deployed_from) values ($1, $2, $3)", [loggerId, siteId, new Date(start - 86_400_000)]);
  await client.query("insert into site_threshold (site_id, parameter, bound, value) values ($1, 'sc25', 'upper', 900) on conflict do nothing", [siteId]);
  const uploadId = randomUUID();
  await client.query(
    `insert into upload (id, object_key, file_name, size_bytes, content_type, sha256, site_id, logger_id, status)
     values ($1, $2, 'e2e-synthetic.csv', 0, 'text/csv', $3, $4, $5, 'done')`,
    [uploadId, `uploads/${uploadId}/e2e-synthetic.csv`, "e".repeat(64), siteId, loggerId],
  );
  await client.query("select ensure_reading_partitions($1, $2)", [new Date(start), new Date(end)]);
  const n = (end - start) / SLOT;
  const times = Array.from({ length: n }, (_, i) => new Date(start + (i + 1) * SLOT));
  const sc = times.map((_, i) => (i === n - 40 ? 1500 : 600 + 40 * Math.sin(i / 30)));
  await client.query(
    `insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l)
     select $1, $2, t.time, $3, t.n, t.sc * 0.8, 12.5, t.sc, t.sc, t.sc * 0.65
     from unnest($4::timestamptz[], $5::float8[]) with ordinality as t(time, sc, n)
     on conflict do nothing`,
    [siteId, loggerId, uploadId, times, sc],
  );
});

afterAll(async () => {
  await client?.end();
});

describe("site dashboards", () => {
  it("opens the overview, goes to a site, changes the range from the keyboard and the chart updates in place", async () => {
    const page = await browser.page();
    const problems: string[] = [];
    page.on("pageerror", (e) => problems.push(String(e)));
    page.on("console", (m) => {
      if (m.type() === "error") problems.push(m.text());
    });
    await signInAs(page, officer.email, officer.password);

    // The overview lists the site with its status in words and links to it.
    await page.goto("/?q=QX9");
    const card = page.getByTestId("site-card").filter({ hasText: NAME });
    await expect.poll(() => card.count()).toBe(1);
    await expect.poll(() => card.textContent()).toMatch(/In range|Above threshold/);
    await card.getByRole("link", { name: NAME }).click();
    await waitForPage(page, (u) => u.pathname === `/sites/${CODE}`);

    // First draw: the last week (the default), every reading (7 × 96 = 672 at most).
    const resolution = page.getByTestId("chart-resolution");
    await expect.poll(() => resolution.textContent(), { timeout: 20_000 }).toMatch(/Specific conductance at 25 °C: every reading \(67\d\)/);
    await expect.poll(() => page.getByTestId("site-charts").getAttribute("data-state")).toBe("ready");

    // A marker on window survives only if the document is not loaded again.
    await page.evaluate(() => ((window as unknown as { __rmMarker: string }).__rmMarker = "still here"));
    const seriesCall = page.waitForResponse((r) => /\/api\/sites\/[^/]+\/series\?/.test(r.url()) && r.status() === 200);
    const lastDay = page.getByRole("link", { name: "Last day" });
    await lastDay.focus();
    await page.keyboard.press("Enter");
    const response = await seriesCall;
    const asked = new URL(response.url());
    const spanMs = Date.parse(asked.searchParams.get("to")!) - Date.parse(asked.searchParams.get("from")!);
    expect(spanMs).toBe(86_400_000);
    // One day at 15 minutes: 96 readings, every one shown.
    await expect.poll(() => resolution.textContent(), { timeout: 20_000 }).toMatch(/Specific conductance at 25 °C: every reading \(96\)/);
    expect(await page.evaluate(() => (window as unknown as { __rmMarker?: string }).__rmMarker)).toBe("still here");
    expect(new URL(page.url()).pathname).toBe(`/sites/${CODE}`);
    expect(new URL(page.url()).searchParams.get("range")).toBe("day");
    await expect.poll(() => lastDay.getAttribute("aria-current")).toBe("true");
    // The statistics table (the charts' text alternative) follows the new range too.
    await expect.poll(() => page.getByTestId("completeness").textContent()).toMatch(/^96 readings/);

    // Zooming in on the chart (mouse wheel) fetches finer points for the zoomed window only.
    await page.getByRole("link", { name: "Last 30 days" }).click();
    await expect.poll(() => resolution.textContent(), { timeout: 20_000 }).toMatch(/every reading \(1,3\d\d\)/);
    const zoomCall = page.waitForResponse((r) => /\/api\/sites\/[^/]+\/series\?/.test(r.url()) && r.status() === 200);
    await page.getByTestId("site-charts").scrollIntoViewIfNeeded();
    const box = (await page.getByTestId("site-charts").boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + 160);
    for (let i = 0; i < 6; i++) await page.mouse.wheel(0, -240);
    const zoomed = new URL((await zoomCall).url());
    const zoomSpan = Date.parse(zoomed.searchParams.get("to")!) - Date.parse(zoomed.searchParams.get("from")!);
    expect(zoomSpan).toBeLessThan(30 * 86_400_000 * 0.9);
    await expect.poll(() => resolution.textContent(), { timeout: 20_000 }).toMatch(/^Zoomed to/);
    expect(await page.evaluate(() => (window as unknown as { __rmMarker?: string }).__rmMarker)).toBe("still here");

    // The same from the keyboard: back to the whole range, then "Zoom in" halves the window around
    // its middle: 15 of the 30 days.
    await page.getByRole("button", { name: "Whole range" }).click();
    await expect.poll(() => resolution.textContent(), { timeout: 20_000 }).not.toMatch(/^Zoomed to/);
    const keyZoomCall = page.waitForResponse((r) => /\/api\/sites\/[^/]+\/series\?/.test(r.url()) && r.status() === 200);
    await page.getByRole("button", { name: "Zoom in" }).focus();
    await page.keyboard.press("Enter");
    const keyZoomed = new URL((await keyZoomCall).url());
    const keySpan = Date.parse(keyZoomed.searchParams.get("to")!) - Date.parse(keyZoomed.searchParams.get("from")!);
    expect(keySpan / 86_400_000).toBeCloseTo(15, 1);

    expect(problems).toEqual([]);
  });

  it("fits a tablet screen without sideways scrolling", async () => {
    const page = await browser.page();
    await page.setViewportSize({ width: 800, height: 1100 });
    // The browser context keeps the session of the test before; sign in only when sent to sign-in.
    await page.goto(`/sites/${CODE}`);
    if (new URL(page.url()).pathname === "/sign-in") {
      await signInAs(page, officer.email, officer.password);
      await page.goto(`/sites/${CODE}`);
    }
    await expect.poll(() => page.getByTestId("site-charts").getAttribute("data-state"), { timeout: 20_000 }).toBe("ready");
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
  });

  it("has no serious or critical axe-core findings on the overview, a site, its settings and the compare page", async () => {
    const page = await browser.page();
    await page.goto("/");
    if (new URL(page.url()).pathname === "/sign-in") await signInAs(page, officer.email, officer.password);
    const problems: string[] = [];
    for (const path of ["/", `/sites/${CODE}?range=month`, `/sites/${CODE}/settings`, `/compare?sites=${CODE}`]) {
      const res = await page.goto(path);
      expect(res?.status(), `${path} answers`).toBe(200);
      await page.waitForLoadState("networkidle");
      // Evaluated over the DevTools protocol, so the page's Content-Security-Policy does not block it.
      await page.evaluate(axe.source);
      const found = await page.evaluate(async () => {
        const result = await (window as unknown as { axe: typeof axe }).axe.run(document, {
          resultTypes: ["violations"],
          runOnly: { type: "tag", values: ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"] },
        });
        return result.violations
          .filter((v) => v.impact === "serious" || v.impact === "critical")
          .map((v) => `${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(" ")).join(" | ")}`);
      });
      problems.push(...found.map((f) => `${path}: ${f}`));
    }
    expect(problems).toEqual([]);
  });
});
