import { describe, expect, inject, it } from "vitest";
import type { Locator, Page } from "playwright-core";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { waitForMessage } from "#fakes/smtp/client.ts";
import { signInAs, signOut, useBrowser, waitForPage } from "../support/browser.ts";

// Every role's job from sign-in to the end, on the demo data (160 days seeded by the global setup).
const browser = useBrowser();
const person = (role: string) => DEMO_PEOPLE.find((p) => p.role === role)!;

async function selectedText(select: Locator) {
  return select.evaluate((el) => (el as HTMLSelectElement).selectedOptions[0]?.textContent ?? "");
}

async function freshPage(): Promise<Page> {
  await browser.context().clearCookies();
  return browser.page();
}

describe("every role's journey", () => {
  it("technician: uploads two files (one of a new layout, mapped), then records a field visit", async () => {
    const page = await freshPage();
    const tech = person("technician");
    await signInAs(page, tech.email, tech.password);

    // A file in the demo four-electrode layout (its saved profile is recognised by the header line),
    // and one in a layout no profile knows yet.
    const known = ["Timestamp (UTC),Temp (C),Cond (uS/cm),Batt (V)"];
    for (let i = 0; i < 48; i++) known.push(`2018-05-01T${String(Math.floor(i / 2)).padStart(2, "0")}:${i % 2 ? "30" : "00"}:00Z,9.5,${410 + i},12.4`);
    const fresh = ["Serial: RQ-4101", "Stamp|EC mS/cm|Water temp C"];
    for (let i = 0; i < 24; i++) fresh.push(`2018-05-02T${String(i).padStart(2, "0")}:00:00Z|0.0${90 + (i % 9)}|8.${i % 10}`);
    await page.getByRole("link", { name: "Uploads", exact: true }).click();
    await waitForPage(page, (u) => u.pathname === "/uploads");
    await page.getByTestId("upload-input").setInputFiles([
      { name: "RQ-4102_2018-05.csv", mimeType: "text/csv", buffer: Buffer.from(known.join("\n") + "\n") },
      { name: "headspring-pipe-export.txt", mimeType: "text/plain", buffer: Buffer.from(fresh.join("\n") + "\n") },
    ]);
    const entries = page.getByTestId("upload-entry");
    await expect.poll(() => entries.count()).toBe(2);
    const knownEntry = entries.filter({ hasText: "RQ-4102_2018-05.csv" });
    const freshEntry = entries.filter({ hasText: "headspring-pipe-export.txt" });
    await expect.poll(() => selectedText(knownEntry.getByLabel("Import profile"))).toContain("Four-electrode logger");
    await expect.poll(() => selectedText(freshEntry.getByLabel("Logger"))).toContain("RQ-4101");

    // Map the new layout's columns once: the sniffer's guesses, a name, save.
    await freshEntry.getByRole("button", { name: "Map the columns" }).click();
    const dialog = page.getByRole("dialog", { name: /Map the columns of headspring-pipe-export\.txt/ });
    await expect.poll(() => dialog.isVisible()).toBe(true);
    await expect.poll(() => dialog.getByTestId("preview-table").locator("tbody tr").count()).toBeGreaterThan(0);
    await dialog.getByLabel("Profile name").fill("Headspring pipe-delimited export");
    await dialog.getByRole("button", { name: "Save the profile and use it" }).click();
    await expect.poll(() => page.getByRole("dialog").count()).toBe(0);
    await expect.poll(() => selectedText(freshEntry.getByLabel("Import profile"))).toContain("Headspring pipe-delimited export");

    await page.getByRole("button", { name: "Upload 2 files" }).click();
    for (const [entry, rows] of [[knownEntry, 48], [freshEntry, 24]] as const) {
      await expect.poll(() => entry.getAttribute("data-phase"), { timeout: 90_000, interval: 250 }).toBe("done");
      expect(await entry.getByTestId("upload-counts").textContent()).toContain(`${rows} readings stored`);
    }

    // The round's field visit at QH1, with a calibration check, pass/fail shown before saving.
    await page.getByRole("link", { name: "Field visits" }).click();
    await page.getByRole("link", { name: "Record a visit" }).click();
    await waitForPage(page, (u) => u.pathname === "/visits/new");
    await page.getByLabel("Site", { exact: true }).selectOption({ label: "QH1 · Quell Head springs" });
    await expect.poll(() => selectedText(page.getByLabel("Logger"))).toContain("RQ-4101");
    const yesterday = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10);
    await page.getByLabel("Time of the visit").fill(`${yesterday}T11:15`);
    const group = (name: string) => page.getByRole("group", { name });
    await group("Sensor before cleaning").getByLabel("Specific conductance").fill("96");
    await group("Sensor before cleaning").getByLabel("Temperature").fill("8.4");
    await group("Sensor after cleaning").getByLabel("Specific conductance").fill("97");
    await group("Sensor after cleaning").getByLabel("Temperature").fill("8.4");
    const check = page.getByTestId("check-entry").first();
    await check.getByLabel("Standard's temperature").fill("20");
    await check.getByLabel("Sensor reading in the standard").fill("1270");
    await expect.poll(() => page.getByTestId("check-result-0").textContent()).toMatch(/Pass|Fail/);
    await page.getByRole("button", { name: "Save the visit" }).click();
    await waitForPage(page, (u) => /^\/visits\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect.poll(() => page.getByRole("status").first().textContent()).toContain("Visit saved");
    await signOut(page);
  });

  it("officer: classifies an exceedance, approves a correction, runs a lab check", async () => {
    const page = await freshPage();
    const officer = person("officer");
    await signInAs(page, officer.email, officer.password);

    // 1. The AB8 borehole's TDS event (the demo's slowly rising conductivity).
    await page.getByRole("link", { name: "Exceedances" }).click();
    await waitForPage(page, (u) => u.pathname === "/exceedances");
    const row = page.locator("tbody tr").filter({ hasText: "AB8" }).first();
    await expect.poll(() => row.count()).toBe(1);
    await row.getByRole("link").first().click();
    await waitForPage(page, (u) => /^\/exceedances\/[0-9a-f-]{36}$/.test(u.pathname));
    await page.getByRole("radio", { name: /Real change in the water/ }).check();
    await page.getByLabel("Comment").fill("Abstraction has raised the borehole's conductivity; confirmed by the quarterly grab sample.");
    await page.getByRole("button", { name: "Save and close" }).click();
    await expect.poll(() => page.locator("main").textContent()).toContain("Closed");
    await expect.poll(() => page.locator("main").textContent()).toContain("Abstraction has raised");

    // 2. The HR5 calibration drift proposed from the September visit.
    await page.getByRole("link", { name: "Corrections" }).click();
    await waitForPage(page, (u) => u.pathname.startsWith("/corrections"));
    await page.getByRole("link", { name: "HR5" }).first().click();
    await waitForPage(page, (u) => u.pathname === "/sites/HR5/corrections");
    const approve = page.getByRole("button", { name: "Approve and apply" }).first();
    await expect.poll(() => approve.count()).toBe(1);
    const before = await page.getByRole("button", { name: "Approve and apply" }).count();
    await approve.click();
    await expect.poll(() => page.getByRole("button", { name: "Approve and apply" }).count(), { timeout: 30_000 }).toBe(before - 1);

    // 3. A lab check of a grab sample, previewed while typing and saved.
    await page.getByRole("link", { name: "Lab checks" }).click();
    await page.goto("/lab/new");
    await page.getByLabel("Site", { exact: true }).selectOption({ label: "QF2 · Quell at Fernmoor Bridge" });
    const day = new Date(Date.now() - 2 * 86_400_000).toISOString().slice(0, 10);
    await page.getByLabel("Sampled at").fill(`${day}T10:30`);
    const ions: [RegExp, string][] = [[/^Calcium/, "55"], [/^Magnesium/, "8"], [/^Sodium/, "18"], [/^Potassium/, "3"], [/^Chloride/, "30"], [/^Sulfate/, "40"], [/^Bicarbonate/, "150"], [/^Nitrate/, "8"]];
    for (const [label, value] of ions) await page.getByLabel(label).fill(value);
    await page.getByLabel("EC (µS/cm at 25 °C)", { exact: true }).fill("420");
    await page.getByLabel("TDS (mg/L)", { exact: true }).fill("265");
    await page.getByLabel("pH", { exact: true }).fill("7.6");
    await page.getByRole("button", { name: "Save the lab check" }).click();
    await waitForPage(page, (u) => /^\/lab\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect.poll(() => page.getByRole("status").first().textContent()).toContain("Lab check saved");
    await expect.poll(() => page.locator("main").textContent()).toMatch(/screening estimate/i);
    await signOut(page);
  });

  it("manager: reads the weekly summary and opens the print view", async () => {
    const page = await freshPage();
    const manager = person("manager");
    await signInAs(page, manager.email, manager.password);
    await page.getByRole("link", { name: "Weekly summaries" }).click();
    await waitForPage(page, (u) => u.pathname === "/summaries");
    // At least the eight demo sites (another browser test file adds a site of its own).
    await expect.poll(() => page.getByTestId("week-table").locator("tbody tr").count()).toBeGreaterThanOrEqual(8);
    for (const code of ["QH1", "QF2", "QT3", "QS4", "HR5", "BW6", "AB7", "AB8"]) expect(await page.getByTestId("week-table").locator(`tr[data-site="${code}"]`).count()).toBe(1);
    await page.getByRole("link", { name: "Printable report" }).click();
    await waitForPage(page, (u) => /\/print$/.test(u.pathname));
    await expect.poll(() => page.locator(".report-header").count()).toBeGreaterThan(0);
    expect(await page.locator(".report-header").first().textContent()).toContain("Marrowby Water Cooperative");
  });

  it("admin: invites a person, who gets the e-mail", async () => {
    const page = await freshPage();
    const admin = person("admin");
    await signInAs(page, admin.email, admin.password);
    await page.getByRole("link", { name: "People" }).click();
    await waitForPage(page, (u) => u.pathname === "/admin/people");
    const email = `new.technician.${Date.now()}@marrowby.example`;
    const invite = page.locator("form").filter({ has: page.getByRole("button", { name: "Send the invitation" }) });
    await invite.getByLabel("Name", { exact: true }).fill("Perrin Ashdown");
    await invite.getByLabel("E-mail", { exact: true }).fill(email);
    await invite.getByLabel("Role", { exact: true }).selectOption("technician");
    await invite.getByRole("button", { name: "Send the invitation" }).click();
    await waitForPage(page, (u) => /^\/admin\/people\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect.poll(() => page.locator("main").textContent()).toContain("Invitation sent");
    const mail = await waitForMessage(inject("mailboxUrl"), (m) => m.to.includes(email), 15_000);
    expect(mail.subject).toBe("You have been invited to Ripplemark");
    expect(mail.text).toContain("/reset-password/");
  });
});
