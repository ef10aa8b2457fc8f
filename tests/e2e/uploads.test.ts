import { describe, expect, it } from "vitest";
import type { Locator, Page } from "playwright-core";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { signInAs, useBrowser, waitForPage } from "../support/browser.ts";

const browser = useBrowser();

// The demo technician (db/demo/scenario.ts): assigned to QF2 and QT3, where RQ-4102 and RQ-4103 are deployed.
const tamsin = DEMO_PEOPLE.find((p) => p.email === "tamsin.oakes@marrowby.example")!;

/** A comma/ISO logger dump: `count` readings `stepMin` apart from `startIso`. 2019 keeps clear of any seeded readings. */
function loggerFile(startIso: string, count: number, stepMin: number, condBase: number) {
  const start = Date.parse(startIso);
  const lines = ["Timestamp (UTC),Cond (µS/cm),Temp (°C)"];
  for (let i = 0; i < count; i++) {
    lines.push(`${new Date(start + i * stepMin * 60_000).toISOString()},${condBase + (i % 7)},${(11 + (i % 5) / 10).toFixed(1)}`);
  }
  return Buffer.from(lines.join("\n") + "\n");
}

const FILE_4102 = { name: "RQ-4102_2019-06-round.csv", mimeType: "text/csv", buffer: loggerFile("2019-06-01T00:00:00Z", 96, 15, 640) };
const FILE_4103 = { name: "RQ-4103_2019-06-round.csv", mimeType: "text/csv", buffer: loggerFile("2019-06-01T00:00:00Z", 144, 10, 910) };

/** Signs in as Tamsin unless this browser already is (one browser context serves every test of the file). */
async function asTamsin(page: Page) {
  await page.goto("/uploads");
  if (new URL(page.url()).pathname.startsWith("/sign-in")) {
    await signInAs(page, tamsin.email, tamsin.password);
    await page.goto("/uploads");
  }
  await expect.poll(() => page.getByTestId("current-user").textContent()).toContain(tamsin.name);
}

async function selectedText(select: Locator) {
  return select.evaluate((el) => (el as HTMLSelectElement).selectedOptions[0]?.textContent ?? "");
}

describe("uploading logger files", () => {
  it("a technician maps a layout once, then drops two files and sees both processed", async () => {
    const page = await browser.page();
    const consoleErrors: string[] = [];
    page.on("console", (m) => {
      // The 409 that refuses a file uploaded before is an expected answer, not a page error.
      if (m.type() === "error" && !/status of 409/.test(m.text())) consoleErrors.push(m.text());
    });
    await asTamsin(page);

    // 1. An import profile for the comma/ISO layout, made in the editor from a sample file.
    await page.goto("/import-profiles/new");
    await page.getByLabel("Sample logger file").setInputFiles(FILE_4102);
    await expect.poll(() => page.getByTestId("sample-table").locator('tr[data-line-kind="header"]').textContent()).toContain("Cond (µS/cm)");
    // The sniffer's guesses fill the columns; the preview reads the first ten rows with them.
    await expect.poll(() => page.getByTestId("preview-summary").textContent()).toContain("10 of 10 rows read");
    expect(await selectedText(page.getByLabel("What column 2 (Cond (µS/cm)) holds"))).toBe("Conductivity at the water's temperature");
    await page.getByLabel("Profile name").fill("Quell four-electrode, comma export");
    await page.getByRole("button", { name: "Save the profile" }).click();
    await waitForPage(page, (u) => /^\/import-profiles\/[0-9a-f-]{36}$/.test(u.pathname) && u.searchParams.get("saved") === "created");
    await expect.poll(() => page.getByRole("status").textContent()).toContain("The profile is saved");

    // 2. Two files at once through the file picker.
    await page.goto("/uploads");
    await page.getByTestId("upload-input").setInputFiles([FILE_4102, FILE_4103]);
    const entries = page.getByTestId("upload-entry");
    await expect.poll(() => entries.count()).toBe(2);
    const e4102 = entries.filter({ hasText: FILE_4102.name });
    const e4103 = entries.filter({ hasText: FILE_4103.name });

    // Logger from the serial in the file name, site from its deployment, profile from the header line.
    for (const [entry, serial, site] of [
      [e4102, "RQ-4102", "QF2"],
      [e4103, "RQ-4103", "QT3"],
    ] as const) {
      await expect.poll(() => selectedText(entry.getByLabel("Logger"))).toContain(serial);
      expect(await selectedText(entry.getByLabel("Site"))).toContain(site);
      expect(await selectedText(entry.getByLabel("Import profile"))).toContain("Quell four-electrode, comma export");
    }

    await page.getByRole("button", { name: "Upload 2 files" }).click();

    for (const [entry, file, rows] of [
      [e4102, FILE_4102, 96],
      [e4103, FILE_4103, 144],
    ] as const) {
      await expect.poll(() => entry.getAttribute("data-phase"), { timeout: 90_000, interval: 250 }).toBe("done");
      const bar = entry.getByRole("progressbar", { name: `Progress of ${file.name}` });
      expect(await bar.getAttribute("aria-valuenow")).toBe("100");
      expect(await entry.getByTestId("upload-counts").textContent()).toBe(`${rows} readings stored · 0 rows rejected · 0 already stored (skipped)`);
      // At the demo site's clock (Europe/London): 00:00 UTC on 1 June is 01:00 British Summer Time.
      expect(await entry.getByTestId("upload-outcome").textContent()).toContain("Covers 1 Jun 2019, 01:00 BST to");
    }

    // The recent uploads table lists both once they are done, and each links to its page.
    await expect.poll(() => page.getByRole("table", { name: /Uploads/ }).getByRole("link", { name: FILE_4103.name }).count()).toBe(1);
    await page.getByRole("table", { name: /Uploads/ }).getByRole("link", { name: FILE_4103.name }).click();
    await waitForPage(page, (u) => u.pathname.startsWith("/uploads/") && u.pathname.length > "/uploads/".length);
    await expect.poll(() => page.getByTestId("upload-counts").textContent()).toBe("144 readings stored · 0 rows rejected · 0 already stored (skipped)");

    // The same file again is recognised before any byte is sent.
    await page.goto("/uploads");
    await page.getByTestId("upload-input").setInputFiles([FILE_4102]);
    await page.getByRole("button", { name: "Upload 1 file" }).click();
    const again = page.getByTestId("upload-entry");
    await expect.poll(() => again.getAttribute("data-phase"), { timeout: 30_000 }).toBe("duplicate");
    expect(await again.getByRole("link", { name: "Open the earlier upload" }).count()).toBe(1);

    expect(consoleErrors).toEqual([]);
  });

  it("a file that fails on the way stays in the list with “Try again” until it goes through", async () => {
    const page = await browser.page();
    await asTamsin(page);
    // The first presign meets storage that is down (the API's 503); the first PUT loses its connection.
    let presigns = 0;
    let puts = 0;
    await page.route("**/api/uploads", async (route) => {
      if (route.request().method() === "POST" && (route.request().postData() ?? "").includes("presign") && presigns++ === 0) {
        await route.fulfill({
          status: 503,
          contentType: "application/json",
          body: JSON.stringify({ ok: false, retryable: true, errors: { file: ["File storage is not answering just now. Nothing was lost: try again in a minute."] } }),
        });
        return;
      }
      await route.continue();
    });
    await page.route(/\/uploads\/[0-9a-f-]{36}\//, async (route) => {
      if (route.request().method() === "PUT" && puts++ === 0) await route.abort("connectionreset");
      else await route.continue();
    });

    // Same layout as the first test's files: its saved profile is picked up (tests in a file run in order).
    const file = { name: "RQ-4101_2019-07-round.csv", mimeType: "text/csv", buffer: loggerFile("2019-07-01T00:00:00Z", 24, 15, 700) };
    await page.getByTestId("upload-input").setInputFiles([file]);
    const entry = page.getByTestId("upload-entry");
    await expect.poll(() => selectedText(entry.getByLabel("Import profile"))).toContain("Quell four-electrode, comma export");
    await page.getByRole("button", { name: "Upload 1 file" }).click();

    await expect.poll(() => entry.getAttribute("data-phase")).toBe("error");
    expect(await entry.getByTestId("upload-outcome").textContent()).toContain("File storage is not answering just now");
    await entry.getByRole("button", { name: "Try again" }).click();

    await expect.poll(() => entry.getByTestId("upload-outcome").textContent()).toContain("The connection to file storage dropped. Nothing is lost");
    expect(await entry.getAttribute("data-phase")).toBe("error");
    await entry.getByRole("button", { name: "Try again" }).click();

    await expect.poll(() => entry.getAttribute("data-phase"), { timeout: 90_000, interval: 250 }).toBe("done");
    expect(await entry.getByTestId("upload-counts").textContent()).toBe("24 readings stored · 0 rows rejected · 0 already stored (skipped)");
    expect(puts).toBe(2);
  });

  it("a file of a new layout gets its profile through “Map the columns”, where dates that read either way need an answer", async () => {
    const page = await browser.page();
    await asTamsin(page);
    // Semicolons, decimal commas, a preamble naming the serial, and dates that fit day-first and month-first alike.
    const lines = ["Logger export", "Serial number: RQ-4105", "Date;Time;Cond (mS/cm);Temp (°C)"];
    for (let i = 0; i < 48; i++) {
      const hh = String(Math.floor(i / 2)).padStart(2, "0");
      lines.push(`03/06/2019;${hh}:${i % 2 ? "30" : "00"}:00;0,${400 + i};10,5`);
    }
    const file = { name: "hollins-export.txt", mimeType: "text/plain", buffer: Buffer.from(lines.join("\r\n") + "\r\n") };

    await page.getByTestId("upload-input").setInputFiles([file]);
    const entry = page.getByTestId("upload-entry");
    // The serial comes from the preamble; no saved profile has this header line.
    await expect.poll(() => selectedText(entry.getByLabel("Logger"))).toContain("RQ-4105");
    expect(await selectedText(entry.getByLabel("Site"))).toContain("HR5");
    expect(await entry.getByText("No saved profile matches this file's header line.").count()).toBe(1);

    await entry.getByRole("button", { name: "Map the columns" }).click();
    const dialog = page.getByRole("dialog", { name: /Map the columns of hollins-export\.txt/ });
    await expect.poll(() => dialog.isVisible()).toBe(true);
    // Header, preamble and data lines are told apart in the sample table.
    expect(await dialog.locator('tr[data-line-kind="preamble"]').count()).toBe(2);
    expect(await dialog.locator('tr[data-line-kind="header"]').textContent()).toContain("Cond (mS/cm)");
    await dialog.getByLabel("Profile name").fill("Hollins sonde, semicolon export");
    await dialog.getByRole("button", { name: "Save the profile and use it" }).click();
    // The error is on the field: marked invalid, and its description names what to choose.
    const dates = dialog.getByLabel("Dates are written");
    await expect.poll(() => dates.getAttribute("aria-invalid")).toBe("true");
    const describedBy = (await dates.getAttribute("aria-describedby"))!.split(" ");
    const descriptions = await Promise.all(describedBy.map((id) => page.locator(`[id="${id}"]`).textContent()));
    expect(descriptions.join(" ")).toContain("The dates in this file read either way: choose day-first or month-first");
    expect(await page.getByRole("dialog").count()).toBe(1); // not saved, still open

    await dates.selectOption("dmy");
    // 0,400 mS/cm is 400 µS/cm, on 3 June 2019.
    await expect.poll(() => dialog.getByTestId("preview-table").locator("tbody tr").first().textContent()).toContain("2019-06-03 00:00:00");
    expect(await dialog.getByTestId("preview-table").locator("tbody tr").first().textContent()).toContain("400");
    await dialog.getByRole("button", { name: "Save the profile and use it" }).click();
    await expect.poll(() => page.getByRole("dialog").count()).toBe(0);
    await expect.poll(() => selectedText(entry.getByLabel("Import profile"))).toContain("Hollins sonde, semicolon export");

    await page.getByRole("button", { name: "Upload 1 file" }).click();
    await expect.poll(() => entry.getAttribute("data-phase"), { timeout: 90_000, interval: 250 }).toBe("done");
    expect(await entry.getByTestId("upload-counts").textContent()).toBe("48 readings stored · 0 rows rejected · 0 already stored (skipped)");
    // 00:00–23:30 UTC at the site's clock (Europe/London, British Summer Time, UTC+1).
    expect(await entry.getByTestId("upload-outcome").textContent()).toContain("Covers 3 Jun 2019, 01:00 BST to 4 Jun 2019, 00:30 BST");
  });
});
