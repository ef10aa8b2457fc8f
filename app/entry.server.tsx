import { randomBytes } from "node:crypto";
import { Writable } from "node:stream";
import type { EntryContext, HandleDataRequestFunction } from "react-router";
import { ServerRouter } from "react-router";
import { renderToPipeableStream } from "react-dom/server";
import { documentMemoKey, memoizeDocument, memoizedDocument, PLACEHOLDER_NONCE } from "./utils/document-memo.server.ts";
import { NonceContext } from "./utils/nonce.ts";
import { applySecurityHeaders } from "./utils/security-headers.server.ts";

// React Router's default Node entry, plus a per-request CSP nonce and security headers.
export const streamTimeout = 5_000;

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
) {
  const nonce = randomBytes(16).toString("base64");
  applySecurityHeaders(responseHeaders, { nonce, document: true });
  // 503 is what pages answer while the database is away (app/utils/db-errors.server.ts); the
  // headers of a loader's thrown answer do not reach the document, so they are set here.
  if (responseStatusCode === 503) {
    responseHeaders.set("Retry-After", "30");
    responseHeaders.set("Cache-Control", "no-store");
  }
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  responseHeaders.set("Content-Type", "text/html; charset=utf-8");
  const send = (body: Buffer<ArrayBuffer>) => {
    responseHeaders.set("Content-Length", String(body.byteLength));
    return new Response(body, { headers: responseHeaders, status: responseStatusCode });
  };

  // Pages that opt in are rendered once per distinct loader data (app/utils/document-memo.server.ts).
  const memoKey = documentMemoKey(request, responseStatusCode, routerContext);
  if (memoKey) {
    const memo = memoizedDocument(memoKey, nonce);
    if (memo) return send(memo);
  }
  const renderNonce = memoKey ? PLACEHOLDER_NONCE : nonce;

  // The whole document is rendered before it is sent: no route streams (no Suspense or deferred
  // data), and one buffer written once costs far less CPU than React's many small chunks, each its
  // own socket write. It also lets an error anywhere in the render still answer 500.
  return new Promise((resolve, reject) => {
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={renderNonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={renderNonce} />
      </NonceContext.Provider>,
      {
        nonce: renderNonce,
        onAllReady() {
          const chunks: Buffer[] = [];
          const sink = new Writable({
            write(chunk: Buffer, _encoding, callback) {
              chunks.push(chunk);
              callback();
            },
          });
          sink.on("finish", () => {
            clearTimeout(timeoutId);
            timeoutId = undefined;
            const body = Buffer.concat(chunks);
            // A render that failed part-way (status now 500) is not kept.
            if (memoKey && responseStatusCode === 200) resolve(send(memoizeDocument(memoKey, body, nonce)));
            else if (memoKey) resolve(send(Buffer.from(body.toString("utf8").replaceAll(PLACEHOLDER_NONCE, nonce))));
            else resolve(send(body));
          });
          sink.on("error", reject);
          pipe(sink);
        },
        onShellError(error: unknown) {
          clearTimeout(timeoutId);
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          console.error(error);
        },
      },
    );
  });
}

export const handleDataRequest: HandleDataRequestFunction = (response) => {
  applySecurityHeaders(response.headers, { document: false });
  return response;
};
