import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// The overview's rendered document is kept per distinct loader data and reused with a fresh nonce
// (app/utils/document-memo.server.ts, wired in app/entry.server.tsx). Through the production build:
// every response still satisfies its own CSP, people never get each other's page, fresh data shows.

let manager: Jar;
let officer: Jar;

beforeAll(async () => {
  await createPeople(db);
  manager = await signIn("manager@test.example", TEST_PASSWORD);
  officer = await signIn("officer@test.example", TEST_PASSWORD);
  await db.insertInto("site").values({ code: "MEMO1", name: "Memo Brook at Lintel Ford", kind: "river", latitude: 54, longitude: -3 }).execute();
});

async function page(url: string, jar: Jar) {
  const res = await request(url, { jar });
  expect(res.status, url).toBe(200);
  const csp = res.headers.get("Content-Security-Policy") ?? "";
  const nonce = /'nonce-([^']+)'/.exec(csp)?.[1];
  expect(nonce, "the CSP names a nonce").toBeTruthy();
  const body = await res.text();
  const nonces = [...body.matchAll(/nonce="([^"]*)"/g)].map((m) => m[1]);
  return { body, nonce: nonce!, nonces, normalised: body.replaceAll(nonce!, "NONCE") };
}

describe("the overview's document memo", () => {
  it("gives each response its own nonce, the one its CSP header names, in every script and link", async () => {
    // Two responses in a row with the same figures (a change notice from the set-up may still
    // refresh the overview's data once).
    let a = await page("/", manager);
    let b = await page("/", manager);
    for (let i = 0; i < 20 && b.normalised !== a.normalised; i++) {
      await new Promise((r) => setTimeout(r, 100));
      [a, b] = [b, await page("/", manager)];
    }
    expect(a.nonce).not.toBe(b.nonce);
    expect(a.nonces.length).toBeGreaterThan(3);
    expect(b.nonces.length).toBe(a.nonces.length);
    expect(new Set(a.nonces)).toEqual(new Set([a.nonce]));
    expect(new Set(b.nonces)).toEqual(new Set([b.nonce]));
    // Otherwise the same page.
    expect(b.normalised).toBe(a.normalised);
  });

  it("never gives one person another's page, nor anyone signed out", async () => {
    await page("/", manager);
    const asOfficer = await page("/", officer);
    expect(asOfficer.body).toContain("Test officer");
    expect(asOfficer.body).not.toContain("Test manager");
    const asManager = await page("/", manager);
    expect(asManager.body).toContain("Test manager");
    expect(asManager.body).not.toContain("Test officer");
    const signedOut = await request("/", {});
    expect(signedOut.status).toBe(302);
    expect(signedOut.headers.get("Location")).toMatch(/^\/sign-in/);
  });

  it("keeps the address apart: a filtered overview is its own page", async () => {
    const all = await page("/", manager);
    const filtered = await page("/?q=Lintel", manager);
    expect(filtered.normalised).not.toBe(all.normalised);
    expect(filtered.body).toContain('value="Lintel"');
  });

  it("shows changed figures once the data changes (the site's new name)", async () => {
    expect((await page("/", manager)).body).toContain("Memo Brook at Lintel Ford");
    await db.updateTable("site").set({ name: "Memo Brook below the weir" }).where("code", "=", "MEMO1").execute();
    // The change notice reaches the overview's data cache within moments (well inside its 15 s limit).
    const end = Date.now() + 5_000;
    let body = "";
    while (Date.now() < end) {
      body = (await page("/", manager)).body;
      if (body.includes("below the weir")) break;
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(body).toContain("Memo Brook below the weir");
    expect(body).not.toContain("Lintel Ford");
  });
});
