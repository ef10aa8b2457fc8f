import { createHash, randomBytes } from "node:crypto";
import { serialize } from "node:v8";
import { LRUCache } from "lru-cache";
import type { EntryContext } from "react-router";

// Rendered documents kept for reuse, for pages many people reload (the overview). A server render
// is a pure function of the address and the routes' loader data: the same inputs give the same
// HTML but for the per-request CSP nonce. So the key is the address plus a digest of all loader
// data (which holds the person's name, role and e-mail from the layout's loader, so two people
// never share an entry even when their figures agree), and the HTML is kept rendered with a
// placeholder nonce that each response gets its own nonce written over.
//
// Only leaf routes that declare `handle = { memoizeDocument: true }` take part; their components,
// and the layouts above them, must render from loader data and the address alone (no clock, no
// randomness: the overview takes its "now" from its loader for the same reason, hydration).
// A route's fresh data makes a new key, so nothing here needs invalidating; entries age out.

/** The same shape as a real nonce (16 random bytes, base64), so it has the same length. */
export const PLACEHOLDER_NONCE = randomBytes(16).toString("base64");
const PLACEHOLDER = Buffer.from(PLACEHOLDER_NONCE);

type Memo = { body: Buffer; at: number[] };

const cache = new LRUCache<string, Memo>({
  maxSize: 32 * 1024 * 1024,
  sizeCalculation: (m) => m.body.byteLength + 64,
  ttl: 60_000,
  ttlAutopurge: false,
});

export const documentMemoStats = { hits: 0, misses: 0 };

const memoOff = () => process.env.RESPONSE_CACHE === "off";

/**
 * The memo key for this render, or null when the page does not take part: not a GET, not a 200,
 * an action or an error in play, a leaf route without the opt-in, or loader data that cannot be
 * serialised.
 */
export function documentMemoKey(request: Request, status: number, context: EntryContext): string | null {
  if (memoOff() || request.method !== "GET" || status !== 200) return null;
  const handlerContext = context.staticHandlerContext;
  if (handlerContext.actionData || handlerContext.errors) return null;
  const leaf = handlerContext.matches.at(-1);
  const handle = leaf ? (context.routeModules[leaf.route.id]?.handle as { memoizeDocument?: boolean } | undefined) : undefined;
  if (!handle?.memoizeDocument) return null;
  try {
    // v8's structured serialisation covers Dates, Maps and Sets, which JSON would flatten. It can be
    // read back, so different data never gives the same bytes (no wrong hit); it is not canonical
    // (an array can be written dense or sparse), which at worst costs a miss.
    const digest = createHash("sha256").update(serialize(handlerContext.loaderData)).digest("base64url");
    const url = new URL(request.url);
    return `${url.pathname}${url.search}|${digest}`;
  } catch {
    return null;
  }
}

/** The document for `key` with `nonce` written in, or undefined. */
export function memoizedDocument(key: string, nonce: string): Buffer<ArrayBuffer> | undefined {
  const memo = cache.get(key);
  if (!memo) {
    documentMemoStats.misses++;
    return undefined;
  }
  documentMemoStats.hits++;
  return withNonce(memo, nonce);
}

/** Keeps `body` (rendered with PLACEHOLDER_NONCE) and returns it with `nonce` written in. */
export function memoizeDocument(key: string, body: Buffer, nonce: string): Buffer<ArrayBuffer> {
  const at: number[] = [];
  for (let i = body.indexOf(PLACEHOLDER); i !== -1; i = body.indexOf(PLACEHOLDER, i + PLACEHOLDER.length)) at.push(i);
  const memo = { body, at };
  cache.set(key, memo);
  return withNonce(memo, nonce);
}

function withNonce(memo: Memo, nonce: string): Buffer<ArrayBuffer> {
  const out = Buffer.from(memo.body);
  const bytes = Buffer.from(nonce);
  if (bytes.length !== PLACEHOLDER.length) throw new Error("a nonce must have the placeholder's length");
  for (const i of memo.at) bytes.copy(out, i);
  return out;
}

/** Drops every entry (tests). */
export function clearDocumentMemo() {
  cache.clear();
}
