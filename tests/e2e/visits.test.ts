import { describe, expect, it } from "vitest";
import type { Locator, Page } from "playwright-core";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { signInAs, useBrowser, waitForPage } from "../support/browser.ts";

// The visit form on a tablet in portrait (820 × 1180 CSS pixels), as the demo technician: the
// results and a pass/fail verdict appear while typing, before anything is saved.
const browser = useBrowser({ width: 820, height: 1180 });
const tamsin = DEMO_PEOPLE.find((p) => p.email === "tamsin.oakes@marrowby.example")!;

async function selectedText(select: Locator) {
  return select.evaluate((el) => (el as HTMLSelectElement).selectedOptions[0]?.textContent ?? "");
}

function group(page: Page, name: string) {
  return page.getByRole("group", { name });
}

describe("recording a field visit on a tablet", () => {
  it("shows fouling and calibration results with pass or fail before saving, then keeps them", async () => {
    const page = await browser.page();
    const consoleErrors: string[] = [];
    page.on("console", (m) => {
      if (m.type() === "error") consoleErrors.push(m.text());
    });
    page.on("pageerror", (e) => consoleErrors.push(e.message));
    await signInAs(page, tamsin.email, tamsin.password);

    await page.getByRole("link", { name: "Field visits" }).click();
    await waitForPage(page, (u) => u.pathname === "/visits");
    await page.getByRole("link", { name: "Record a visit" }).click();
    await waitForPage(page, (u) => u.pathname === "/visits/new");
    await page.getByRole("heading", { name: "New field visit" }).waitFor();

    // Choosing the site puts in the logger deployed there now (db/demo/scenario.ts: RQ-4103 at QT3).
    await page.getByLabel("Site", { exact: true }).selectOption({ label: "QT3 · Quell at Tollcross Weir" });
    await expect.poll(() => selectedText(page.getByLabel("Logger"))).toBe("RQ-4103 (deployed now)");
    await page.getByLabel("Time of the visit").fill("2025-06-10T10:30");

    // Nothing entered yet: no verdict.
    expect(await page.getByTestId("visit-verdict").textContent()).toContain("Not computed yet");

    await group(page, "Sensor before cleaning").getByLabel("Specific conductance").fill("540");
    await group(page, "Sensor before cleaning").getByLabel("Temperature").fill("14.2");
    await group(page, "Sensor after cleaning").getByLabel("Specific conductance").fill("612");
    await group(page, "Sensor after cleaning").getByLabel("Temperature").fill("14.2");
    await group(page, "Field meter").getByLabel("Specific conductance").fill("610");
    await group(page, "Field meter").getByLabel("Temperature").fill("14.3");

    // Fouling 612 − 540 = +72 µS/cm, 11.8 % of the field meter's 610: outside ±18.3 µS/cm (3 %).
    const fouling = page.getByTestId("fouling-result");
    await expect.poll(() => fouling.textContent()).toContain("Fail");
    expect(await fouling.textContent()).toContain("+72.0 µS/cm");
    expect(await fouling.textContent()).toContain("+11.8 %");
    // Temperature 14.3 − 14.2 = 0.1 °C: within ±0.2 °C.
    expect(await page.getByTestId("temperature-result").textContent()).toContain("Pass");

    // Check 1 (1413 µS/cm KCl is the default): at 18.5 °C the table gives 1413 × 1233.205 / 1408.23
    // = 1237.4 µS/cm (CRC/NIST 0.01 mol/kg curve, interpolated between 18 and 20 °C); 1230 is within 3 %.
    const checks = page.getByTestId("check-entry");
    await expect.poll(() => checks.count()).toBe(1);
    await checks.nth(0).getByLabel("Standard's temperature").fill("18.5");
    await checks.nth(0).getByLabel("Sensor reading in the standard").fill("1230");
    const check1 = page.getByTestId("check-result-0");
    await expect.poll(() => check1.textContent()).toContain("Pass");
    expect(await check1.textContent()).toContain("expected 1,237.4 µS/cm");

    // A second check, added on the spot: 12.88 mS/cm at 18.5 °C expects 11,308 µS/cm; 12,000 is 6 % high.
    await page.getByRole("button", { name: "Add a calibration check" }).click();
    await expect.poll(() => checks.count()).toBe(2);
    await checks.nth(1).getByLabel("Standard", { exact: true }).selectOption({ label: "KCl 12.88 mS/cm (0.1 mol/L)" });
    await checks.nth(1).getByLabel("Standard's temperature").fill("18.5");
    await checks.nth(1).getByLabel("Sensor reading in the standard").fill("12000");
    await expect.poll(() => page.getByTestId("check-result-1").textContent()).toContain("Fail");

    // The verdict before leaving the site names what failed (mark and word, not colour alone).
    const verdict = page.getByTestId("visit-verdict");
    await expect.poll(() => verdict.textContent()).toContain("Fail");
    expect(await verdict.textContent()).toContain("fouling, calibration check 2");
    expect(await verdict.locator("[data-verdict]").first().getAttribute("data-verdict")).toBe("fail");

    // Removing the wrong check leaves the fouling as the only failure.
    await page.getByRole("button", { name: "Remove check 2" }).click();
    await expect.poll(() => checks.count()).toBe(1);
    await expect.poll(() => verdict.textContent()).toContain("Outside the criteria: fouling.");

    // Tablet layout: nothing wider than the screen, touch targets at least 44 px high.
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(820);
    const save = page.getByRole("button", { name: "Save the visit" });
    for (const target of [save, page.getByRole("button", { name: "Add a calibration check" }), page.getByLabel("Site", { exact: true }), group(page, "Field meter").getByLabel("Specific conductance")]) {
      expect((await target.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    }

    await page.getByRole("textbox", { name: "Notes" }).fill("Guard furred with algae; cleaned with the soft brush.");
    await save.click();
    await waitForPage(page, (u) => /^\/visits\/[0-9a-f-]{36}$/.test(u.pathname) && u.searchParams.get("saved") === "created");
    await expect.poll(() => page.getByRole("status").first().textContent()).toContain("Visit saved");
    // As computed again on the server and stored.
    expect(await page.getByTestId("fouling-result").textContent()).toContain("Fail");
    expect(await page.getByTestId("check-result-0").textContent()).toContain("Pass");
    expect(await page.getByTestId("visit-verdict").textContent()).toContain("fouling");
    expect(consoleErrors).toEqual([]);
  });

  it("stacks the form in one column on a phone-sized screen", async () => {
    const page = await browser.page();
    await page.setViewportSize({ width: 390, height: 844 });
    await page.goto("/visits/new"); // the browser context keeps the session of the test above
    if (new URL(page.url()).pathname === "/sign-in") {
      await signInAs(page, tamsin.email, tamsin.password);
      await page.goto("/visits/new");
    }
    const site = await page.getByLabel("Site", { exact: true }).boundingBox();
    const logger = await page.getByLabel("Logger").boundingBox();
    expect(logger!.y).toBeGreaterThan(site!.y + site!.height - 1); // below, not beside
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
  });
});
