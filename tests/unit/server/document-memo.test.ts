import { randomBytes } from "node:crypto";
import type { EntryContext } from "react-router";
import { afterEach, describe, expect, it } from "vitest";
import {
  clearDocumentMemo,
  documentMemoKey,
  documentMemoStats,
  memoizeDocument,
  memoizedDocument,
  PLACEHOLDER_NONCE,
} from "#app/utils/document-memo.server.ts";

// The rendered-document memo (app/utils/document-memo.server.ts): which renders take part, what
// the key depends on, and that each response gets its own nonce in every place the render put one.

function context(loaderData: Record<string, unknown>, opts: { memoize?: boolean; actionData?: unknown; errors?: unknown } = {}) {
  return {
    staticHandlerContext: {
      loaderData,
      actionData: opts.actionData ?? null,
      errors: opts.errors ?? null,
      matches: [{ route: { id: "root" } }, { route: { id: "routes/overview" } }],
    },
    routeModules: { root: {}, "routes/overview": { handle: opts.memoize === false ? undefined : { memoizeDocument: true } } },
  } as unknown as EntryContext;
}

const get = (url = "http://127.0.0.1/") => new Request(url);
const nonce = () => randomBytes(16).toString("base64");

afterEach(() => clearDocumentMemo());

describe("documentMemoKey", () => {
  const makeData = () => ({ "routes/app-layout": { user: { name: "A. Person", role: "manager" } }, "routes/overview": { nowMs: 1, sites: [{ code: "QF2" }] } });
  const data = makeData();

  it("is the same for the same address and loader data, built the same way", () => {
    // (A loader builds its answer the same way each time. v8's serialisation is not canonical: a
    // copy made another way, e.g. by structuredClone, may be written differently and only miss.)
    expect(documentMemoKey(get(), 200, context(makeData()))).toBe(documentMemoKey(get(), 200, context(makeData())));
  });

  it("differs when any route's data differs: another person, other figures, a Date, a Map", () => {
    const key = documentMemoKey(get(), 200, context(data))!;
    const other = (patch: (d: typeof data & Record<string, unknown>) => void) => {
      const d = structuredClone(data) as typeof data & Record<string, unknown>;
      patch(d);
      return documentMemoKey(get(), 200, context(d));
    };
    expect(other((d) => (d["routes/app-layout"].user.name = "B. Person"))).not.toBe(key);
    expect(other((d) => (d["routes/overview"].nowMs = 2))).not.toBe(key);
    // JSON would write both Maps as {} and both invalid Dates as null; v8's serialisation does not.
    const withMap = (m: Map<string, number>) => documentMemoKey(get(), 200, context({ ...data, extra: m }));
    expect(withMap(new Map([["a", 1]]))).not.toBe(withMap(new Map([["a", 2]])));
    const withDate = (t: number) => documentMemoKey(get(), 200, context({ ...data, extra: new Date(t) }));
    expect(withDate(0)).not.toBe(withDate(1));
  });

  it("differs by address, query string included", () => {
    expect(documentMemoKey(get("http://127.0.0.1/?status=alert"), 200, context(data))).not.toBe(documentMemoKey(get(), 200, context(data)));
  });

  it("is null when the render must not be reused", () => {
    expect(documentMemoKey(get(), 200, context(data, { memoize: false }))).toBeNull();
    expect(documentMemoKey(get(), 404, context(data))).toBeNull();
    expect(documentMemoKey(new Request("http://127.0.0.1/", { method: "POST" }), 200, context(data))).toBeNull();
    expect(documentMemoKey(get(), 200, context(data, { actionData: { ok: true } }))).toBeNull();
    expect(documentMemoKey(get(), 200, context(data, { errors: { root: new Error("x") } }))).toBeNull();
    // Loader data that cannot be serialised (a function) is rendered every time.
    expect(documentMemoKey(get(), 200, context({ f: () => 1 }))).toBeNull();
  });
});

describe("memoised documents", () => {
  const html = (n: string) => Buffer.from(`<html><head><script nonce="${n}">a()</script></head><body><p>Ünïcode ✓</p><script nonce="${n}">b()</script></body></html>`);

  it("are returned with each response's own nonce in every place", () => {
    const key = "k1";
    const first = nonce();
    expect(memoizedDocument(key, first)).toBeUndefined();
    expect(memoizeDocument(key, html(PLACEHOLDER_NONCE), first).toString()).toBe(html(first).toString());
    const hitsBefore = documentMemoStats.hits;
    const second = nonce();
    const again = memoizedDocument(key, second)!;
    expect(documentMemoStats.hits).toBe(hitsBefore + 1);
    expect(again.toString()).toBe(html(second).toString());
    expect(again.toString()).not.toContain(PLACEHOLDER_NONCE);
    // Each response is its own copy: writing one nonce never shows in another response.
    const third = memoizedDocument(key, nonce())!;
    expect(again.toString()).toContain(second);
    expect(third.toString()).not.toContain(second);
  });

  it("refuse a nonce of another length (it would shift the document)", () => {
    memoizeDocument("k2", html(PLACEHOLDER_NONCE), nonce());
    expect(() => memoizedDocument("k2", "short")).toThrow(/length/);
  });
});
