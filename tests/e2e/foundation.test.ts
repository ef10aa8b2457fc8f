import { describe, expect, inject, it } from "vitest";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { waitForMessage } from "#fakes/smtp/client.ts";
import { createDb } from "#db/connect.ts";
import { hashPassword } from "#app/utils/password.server.ts";
import { signInAs, signOut, useBrowser, waitForPage } from "../support/browser.ts";

const browser = useBrowser();

// What each role's navigation must show and must not show (DESIGN.md's role table).
const EXPECTED_NAV: Record<string, { shows: string[]; hides: string[] }> = {
  technician: { shows: ["Overview", "Uploads"], hides: ["People", "Mail outbox"] },
  officer: { shows: ["Overview", "Uploads"], hides: ["People", "Mail outbox"] },
  manager: { shows: ["Overview"], hides: ["Uploads", "People", "Mail outbox"] },
  admin: { shows: ["Overview", "Uploads", "People", "Sites", "Loggers", "Mail outbox"], hides: [] },
};

describe("sign-in and navigation per role", () => {
  for (const person of DEMO_PEOPLE) {
    it(`${person.role} signs in, sees the right navigation, signs out`, async () => {
      const page = await browser.page();
      await signInAs(page, person.email, person.password);
      await expect.poll(() => page.getByTestId("current-user").textContent()).toContain(person.name);
      const nav = page.locator("nav");
      for (const label of EXPECTED_NAV[person.role].shows) {
        await expect.poll(() => nav.getByRole("link", { name: label, exact: true }).count()).toBe(1);
      }
      for (const label of EXPECTED_NAV[person.role].hides) {
        expect(await nav.getByRole("link", { name: label, exact: true }).count()).toBe(0);
      }
      await signOut(page);
      // Signed out: a protected page sends us back to sign-in.
      await page.goto("/account");
      expect(new URL(page.url()).pathname).toBe("/sign-in");
    });
  }

  it("shows the generic error on a wrong password", async () => {
    const page = await browser.page();
    await page.goto("/sign-in");
    await page.getByLabel("E-mail").fill(DEMO_PEOPLE[0].email);
    await page.getByLabel("Password").fill("definitely-wrong");
    await page.getByRole("button", { name: "Sign in" }).click();
    await expect.poll(() => page.getByRole("alert").textContent()).toContain("do not match an active account");
  });
});

describe("password reset", () => {
  it("the e-mail arrives in the SMTP fake and its link sets a new password", async () => {
    // A person of this test's own: the demo people keep their passwords for the other browser tests.
    const manager = { email: `reset.${Date.now()}@marrowby.example`, name: "Rowan Reset", password: "first-password-1" };
    const db = createDb(inject("databaseUrl"), 1);
    await db.insertInto("person").values({ email: manager.email, name: manager.name, role: "manager", password_hash: await hashPassword(manager.password) }).execute();
    await db.destroy();
    const page = await browser.page();
    const since = Date.now();
    await page.goto("/forgot-password");
    await page.getByLabel("E-mail").fill(manager.email);
    await page.getByRole("button", { name: "Send the link" }).click();
    await expect.poll(() => page.getByRole("status").textContent()).toContain("reset link is on its way");

    const mail = await waitForMessage(
      inject("mailboxUrl"),
      (m) => m.to.includes(manager.email) && Date.parse(m.receivedAt) >= since - 1000,
      15_000,
    );
    const link = /https?:\/\/\S+\/reset-password\/[\w-]+/.exec(mail.text ?? "")![0];
    await page.goto(new URL(link).pathname);
    await page.getByLabel("New password").fill("a-brand-new-pass-1");
    await page.getByLabel("The same password again").fill("a-brand-new-pass-1");
    await page.getByRole("button", { name: /Save the password/ }).click();
    await waitForPage(page, (u) => u.pathname === "/");
    await expect.poll(() => page.getByTestId("current-user").textContent()).toContain(manager.name);
    await signOut(page);
    await signInAs(page, manager.email, "a-brand-new-pass-1");
    expect(new URL(page.url()).pathname).toBe("/");

    // The same link a second time says it was used.
    await signOut(page);
    await page.goto(new URL(link).pathname);
    await expect.poll(() => page.getByRole("alert").textContent()).toContain("already been used");
  });
});
