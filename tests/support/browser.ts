import { mkdirSync, mkdtempSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { afterAll, afterEach, beforeAll, inject } from "vitest";

// Debian's chromium driven by playwright-core. One persistent context per test file (launch()
// refuses --user-data-dir), a fresh page per test; a screenshot is saved when a test fails.
const ARGS = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export const SCREENSHOTS = path.resolve(import.meta.dirname, "../e2e/screenshots");

export function useBrowser(viewport = { width: 1280, height: 900 }) {
  const state: { context?: BrowserContext; dir?: string } = {};
  const pages: Page[] = [];

  beforeAll(async () => {
    state.dir = mkdtempSync(path.join(os.tmpdir(), "rm-chromium-"));
    state.context = await chromium.launchPersistentContext(state.dir, {
      executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
      args: ARGS,
      viewport,
      baseURL: inject("baseURL"),
    });
  });

  afterEach(async (ctx) => {
    const failed = ctx.task.result?.state === "fail";
    for (const p of pages.splice(0)) {
      if (failed) {
        mkdirSync(SCREENSHOTS, { recursive: true });
        const file = path.join(SCREENSHOTS, `${ctx.task.name.replace(/[^a-z0-9]+/gi, "-").slice(0, 80)}.png`);
        await p.screenshot({ path: file, fullPage: true }).catch(() => {});
        console.error(`screenshot saved: ${file}`);
      }
      await p.close().catch(() => {});
    }
  });

  afterAll(async () => {
    await state.context?.close();
    if (state.dir) rmSync(state.dir, { recursive: true, force: true });
  });

  return {
    async page(): Promise<Page> {
      const p = await state.context!.newPage();
      pages.push(p);
      return p;
    },
    context: () => state.context!,
  };
}

export async function signInAs(page: Page, email: string, password: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await waitForPage(page, (u) => !u.pathname.startsWith("/sign-in"));
}

export async function signOut(page: Page) {
  await page.getByRole("button", { name: "Sign out" }).click();
  await waitForPage(page, (u) => u.pathname.startsWith("/sign-in"));
}

/**
 * Waits for a navigation to finish: the address matches and the page for it has been rendered.
 * A client navigation changes the address before React commits the new page, so acting right
 * after `waitForURL` can hit a same-named field of the page being left.
 */
export async function waitForPage(page: Page, url: Parameters<Page["waitForURL"]>[0]) {
  await page.waitForURL(url);
  await page.waitForFunction(() => document.body.dataset.location === location.pathname + location.search);
}
