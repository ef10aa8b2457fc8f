/**
 * Local S3 for development and tests: s3rver on an internal loopback port,
 * behind a small HTTP proxy that does what s3rver does not:
 *  - verifies AWS SigV4 signatures (Authorization header and presigned URLs),
 *  - refuses anonymous requests (the bucket is private),
 *  - checks declared payload hashes/checksums and decodes aws-chunked bodies,
 *  - answers CORS with the caller's own origin (s3rver answers `*`).
 * Bodies are streamed, never held whole in memory.
 *
 * Run: npx tsx fakes/s3/server.ts
 */
import { randomBytes } from "node:crypto";
import { mkdirSync } from "node:fs";
import http, { type IncomingHttpHeaders, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { resolve } from "node:path";
import { pipeline } from "node:stream/promises";
import S3rver from "s3rver";
import { makeObjectWritesAtomic } from "./atomic-store.ts";
import { S3Error, escapeXml } from "./errors.ts";
import { prepareBody } from "./payload.ts";
import { verifySigV4 } from "./sigv4.ts";
import { isMainModule } from "../shared/main.ts";

export const S3_FAKE_ACCESS_KEY_ID = "S3RVER";
export const S3_FAKE_SECRET_ACCESS_KEY = "S3RVER";

export interface S3FakeOptions {
  /** Port for the signature-checking proxy (the URL clients use). 0 = pick a free port. Default 54330. */
  port?: number;
  /** Folder for s3rver's objects. Default `.data/s3`. */
  dir?: string;
  /** Bucket created at start. Default `ripplemark`. */
  bucket?: string;
  /** Browser origins allowed by the bucket's CORS rule. */
  corsOrigins?: string[];
  /** Region clients must sign for. Default `us-east-1`. */
  region?: string;
  /** Log each refused request with its S3 error code. */
  logRefused?: boolean;
  /** Also print s3rver's own request log. */
  verbose?: boolean;
  log?: (line: string) => void;
}

export interface S3Fake {
  /** Endpoint for the S3 client, e.g. http://127.0.0.1:54330 */
  url: string;
  port: number;
  bucket: string;
  region: string;
  credentials: { accessKeyId: string; secretAccessKey: string };
  close(): Promise<void>;
}

export const S3_FAKE_DEFAULTS = {
  port: 54330,
  dir: ".data/s3",
  bucket: "ripplemark",
  corsOrigins: ["http://127.0.0.1:3210", "http://localhost:3210"],
  region: "us-east-1",
} as const;

export function s3FakeOptionsFromEnv(env: NodeJS.ProcessEnv = process.env): S3FakeOptions {
  return {
    port: env.S3_FAKE_PORT ? Number(env.S3_FAKE_PORT) : S3_FAKE_DEFAULTS.port,
    dir: env.S3_FAKE_DIR || S3_FAKE_DEFAULTS.dir,
    bucket: env.S3_BUCKET || S3_FAKE_DEFAULTS.bucket,
    corsOrigins:
      env.S3_CORS_ORIGINS !== undefined
        ? env.S3_CORS_ORIGINS.split(",").map((s) => s.trim()).filter(Boolean)
        : [...S3_FAKE_DEFAULTS.corsOrigins],
    region: env.S3_REGION || S3_FAKE_DEFAULTS.region,
    verbose: env.S3_FAKE_VERBOSE === "1" || env.S3_FAKE_VERBOSE === "true",
  };
}

function corsXml(origins: string[]): string {
  const rule = [
    ...origins.map((o) => `<AllowedOrigin>${escapeXml(o)}</AllowedOrigin>`),
    ...["PUT", "GET", "HEAD"].map((m) => `<AllowedMethod>${m}</AllowedMethod>`),
    ...["content-type", "content-length", "x-amz-*"].map((h) => `<AllowedHeader>${h}</AllowedHeader>`),
    "<ExposeHeader>ETag</ExposeHeader>",
    "<MaxAgeSeconds>3000</MaxAgeSeconds>",
  ].join("");
  return `<CORSConfiguration><CORSRule>${rule}</CORSRule></CORSConfiguration>`;
}

const HOP_BY_HOP = new Set([
  "connection",
  "keep-alive",
  "proxy-connection",
  "proxy-authorization",
  "te",
  "trailer",
  "transfer-encoding",
  "upgrade",
  "expect",
]);

function forwardableHeaders(headers: IncomingHttpHeaders, overrides: Record<string, string | undefined>) {
  const out: Record<string, string | string[]> = {};
  for (const [name, value] of Object.entries(headers)) {
    if (value === undefined || HOP_BY_HOP.has(name)) continue;
    out[name] = value;
  }
  for (const [name, value] of Object.entries(overrides)) {
    if (value === undefined) delete out[name];
    else out[name] = value;
  }
  return out;
}

export async function startS3Fake(options: S3FakeOptions = {}): Promise<S3Fake> {
  const port = options.port ?? S3_FAKE_DEFAULTS.port;
  const dir = resolve(options.dir ?? S3_FAKE_DEFAULTS.dir);
  const bucket = options.bucket ?? S3_FAKE_DEFAULTS.bucket;
  const corsOrigins = options.corsOrigins ?? [...S3_FAKE_DEFAULTS.corsOrigins];
  const region = options.region ?? S3_FAKE_DEFAULTS.region;
  const log = options.log ?? ((line: string) => console.log(line));
  const allowedOrigins = new Set(corsOrigins);
  const credentials = { accessKeyId: S3_FAKE_ACCESS_KEY_ID, secretAccessKey: S3_FAKE_SECRET_ACCESS_KEY };

  mkdirSync(dir, { recursive: true });
  const s3rver = new S3rver({
    address: "127.0.0.1",
    port: 0,
    directory: dir,
    silent: !options.verbose,
    vhostBuckets: false,
    configureBuckets: [{ name: bucket, configs: corsOrigins.length ? [corsXml(corsOrigins)] : [] }],
  });
  makeObjectWritesAtomic(s3rver);
  const upstream = await s3rver.run();
  const upstreamPort = upstream.port;
  const agent = new http.Agent({ keepAlive: true, maxSockets: 64 });
  const hostId = randomBytes(24).toString("base64");

  /** CORS headers for a response, derived from the real Origin (never `*`). */
  function applyCors(req: IncomingMessage, headers: Record<string, string | string[] | number | undefined>) {
    const origin = req.headers.origin;
    for (const name of Object.keys(headers)) {
      if (name.toLowerCase().startsWith("access-control-")) {
        if (!origin || !allowedOrigins.has(origin)) delete headers[name];
      }
    }
    if (origin && allowedOrigins.has(origin)) {
      const hadRule = Object.keys(headers).some((n) => n.toLowerCase() === "access-control-allow-origin");
      if (hadRule || req.method !== "OPTIONS") {
        for (const n of Object.keys(headers)) if (n.toLowerCase() === "access-control-allow-origin") delete headers[n];
        headers["access-control-allow-origin"] = origin;
        if (req.method === "OPTIONS") {
          headers["access-control-max-age"] = "3000";
        } else if (!Object.keys(headers).some((n) => n.toLowerCase() === "access-control-expose-headers")) {
          headers["access-control-expose-headers"] = "ETag";
        }
      }
    }
    const varyKey = Object.keys(headers).find((n) => n.toLowerCase() === "vary");
    const vary = varyKey ? String(headers[varyKey]) : "";
    if (!/\borigin\b/i.test(vary)) {
      if (varyKey) delete headers[varyKey];
      headers["vary"] = vary ? `${vary}, Origin` : "Origin";
    }
  }

  function sendError(req: IncomingMessage, res: ServerResponse, err: S3Error, requestId: string, closeConnection: boolean) {
    if (res.headersSent) {
      res.destroy(err);
      return;
    }
    if (options.logRefused) {
      log(`s3 fake: ${err.status} ${err.code} ${req.method} ${req.url?.split("?")[0]}: ${err.message}`);
    }
    const body = err.toXML(requestId, hostId);
    const headers: Record<string, string | number> = {
      "content-type": "application/xml",
      "x-amz-request-id": requestId,
      "x-amz-id-2": hostId,
      "content-length": req.method === "HEAD" ? 0 : Buffer.byteLength(body),
    };
    if (closeConnection) headers.connection = "close";
    applyCors(req, headers);
    res.writeHead(err.status, headers);
    res.end(req.method === "HEAD" ? undefined : body);
  }

  function forward(req: IncomingMessage, res: ServerResponse, body: NodeJS.ReadableStream, overrides: Record<string, string | undefined>) {
    return new Promise<void>((resolveForward, rejectForward) => {
      const upstreamReq = http.request({
        host: "127.0.0.1",
        port: upstreamPort,
        method: req.method,
        path: req.url,
        headers: forwardableHeaders(req.headers, overrides),
        agent,
      });
      upstreamReq.on("response", (upstreamRes) => {
        const headers: Record<string, string | string[] | number | undefined> = { ...upstreamRes.headers };
        delete headers.connection;
        delete headers["keep-alive"];
        delete headers["transfer-encoding"];
        applyCors(req, headers);
        res.writeHead(upstreamRes.statusCode ?? 502, headers as http.OutgoingHttpHeaders);
        pipeline(upstreamRes, res).then(resolveForward, rejectForward);
      });
      upstreamReq.on("error", rejectForward);
      pipeline(body, upstreamReq).catch((err) => {
        upstreamReq.destroy();
        rejectForward(err);
      });
    });
  }

  async function handle(req: IncomingMessage, res: ServerResponse, expectContinue: boolean) {
    const requestId = randomBytes(8).toString("hex").toUpperCase();
    let bodyConsumed = false;
    let cleanup = async () => {};
    try {
      if (req.method === "OPTIONS") {
        // CORS preflight: unauthenticated by design; the bucket's CORS rule decides.
        bodyConsumed = true;
        await forward(req, res, req, {});
        return;
      }
      const verified = await verifySigV4(req, { credentials, region });
      if (expectContinue) res.writeContinue();
      bodyConsumed = true;
      const prepared = await prepareBody(req, verified.payloadHash, verified.query);
      cleanup = prepared.cleanup;
      await forward(req, res, prepared.stream, prepared.headerOverrides);
    } catch (error) {
      if (req.destroyed && !req.complete) {
        // The client went away mid-request: nobody to answer, nothing was stored.
        res.destroy();
        return;
      }
      const err =
        error instanceof S3Error
          ? error
          : new S3Error("InternalError", "We encountered an internal error. Please try again.");
      if (!(error instanceof S3Error) && !res.headersSent) log(`s3 fake: internal error: ${String(error)}`);
      if (!bodyConsumed && !expectContinue && req.readable) {
        // Read the rest of the upload so the client sees the answer, not a reset.
        req.resume();
        await new Promise<void>((done) => {
          req.once("end", done);
          req.once("error", () => done());
          req.once("close", () => done());
        });
      }
      // Close the connection when part of the request body was never read.
      sendError(req, res, err, requestId, !req.complete);
    } finally {
      await cleanup();
    }
  }

  const server = http.createServer((req, res) => void handle(req, res, false));
  server.on("checkContinue", (req, res) => void handle(req, res, true));
  server.on("clientError", (_err, socket) => socket.destroy());

  await new Promise<void>((ok, fail) => {
    server.once("error", fail);
    server.listen(port, "127.0.0.1", () => {
      server.off("error", fail);
      ok();
    });
  });
  const actualPort = (server.address() as AddressInfo).port;

  let closed = false;
  return {
    url: `http://127.0.0.1:${actualPort}`,
    port: actualPort,
    bucket,
    region,
    credentials,
    async close() {
      if (closed) return;
      closed = true;
      await new Promise<void>((done) => {
        server.close(() => done());
        server.closeAllConnections();
      });
      agent.destroy();
      await s3rver.close();
    },
  };
}

if (isMainModule(import.meta.url)) {
  const fake = await startS3Fake({ ...s3FakeOptionsFromEnv(), logRefused: true });
  console.log(`s3 fake listening on ${fake.url} (bucket ${fake.bucket}, region ${fake.region})`);
  const stop = async () => {
    await fake.close();
    process.exit(0);
  };
  process.once("SIGINT", stop);
  process.once("SIGTERM", stop);
}
