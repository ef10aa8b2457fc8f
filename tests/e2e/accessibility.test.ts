import axe from "axe-core";
import { describe, expect, it } from "vitest";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { signInAs, useBrowser } from "../support/browser.ts";

// axe-core on the main pages of each role: no serious or critical violations.
const browser = useBrowser();

const PAGES: Record<string, string[]> = {
  admin: ["/", "/account", "/admin/people", "/admin/sites", "/admin/loggers", "/admin/outbox"],
  technician: ["/", "/uploads", "/import-profiles", "/import-profiles/new"],
  officer: ["/lab", "/lab/new"],
};

async function audit(page: import("playwright-core").Page) {
  // Evaluated over the DevTools protocol, so the page's Content-Security-Policy does not block it.
  await page.evaluate(axe.source);
  return page.evaluate(async () => {
    const result = await (window as unknown as { axe: typeof axe }).axe.run(document, {
      resultTypes: ["violations"],
      runOnly: { type: "tag", values: ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"] },
    });
    return result.violations
      .filter((v) => v.impact === "serious" || v.impact === "critical")
      .map((v) => `${v.id} (${v.impact}): ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(" ")).join(" | ")}`);
  });
}

describe("accessibility (axe-core)", () => {
  it("finds a known problem (the check itself works)", async () => {
    const page = await browser.page();
    await page.setContent(`<html lang="en"><head><title>t</title></head><body><main><img src="x.png"></main></body></html>`);
    expect((await audit(page)).some((v) => v.startsWith("image-alt"))).toBe(true);
  });

  it("the sign-in page", async () => {
    const page = await browser.page();
    await page.goto("/sign-in");
    expect(await audit(page)).toEqual([]);
  });

  for (const [role, paths] of Object.entries(PAGES)) {
    it(`${role} pages: ${paths.join(", ")}`, async () => {
      const person = DEMO_PEOPLE.find((p) => p.role === role)!;
      const page = await browser.page();
      await signInAs(page, person.email, person.password);
      const problems: string[] = [];
      for (const p of paths) {
        const res = await page.goto(p);
        expect(res?.status(), `${p} answers`).toBeLessThan(400);
        await page.waitForLoadState("networkidle");
        for (const v of await audit(page)) problems.push(`${p}: ${v}`);
      }
      expect(problems).toEqual([]);
      await page.getByRole("button", { name: "Sign out" }).click();
    });
  }
});
