/**
 * AWS Signature Version 4 verification for the S3 fake.
 *
 * s3rver checks the access key and the expiry but never the signature, so the
 * proxy in front of it recomputes the signature with the SDK's own signer
 * (@smithy/signature-v4: the same canonical-request code the client used) and
 * compares in constant time. Both forms are handled:
 *  - the Authorization header ("AWS4-HMAC-SHA256 Credential=…, SignedHeaders=…, Signature=…")
 *  - presigned query strings (X-Amz-Algorithm, X-Amz-Credential, X-Amz-Date,
 *    X-Amz-Expires, X-Amz-SignedHeaders, X-Amz-Signature)
 *
 * The body is never read here. The payload hash that goes into the canonical
 * request is the one the client declared (x-amz-content-sha256, or
 * UNSIGNED-PAYLOAD for presigned URLs); payload.ts checks a declared hex hash
 * against the bytes as they stream past.
 */
import { createHash, createHmac, timingSafeEqual } from "node:crypto";
import type { IncomingMessage } from "node:http";
import {
  ALGORITHM_IDENTIFIER,
  MAX_PRESIGNED_TTL,
  SignatureV4,
  UNSIGNED_PAYLOAD,
  getCanonicalHeaders,
  getSigningKey,
} from "@smithy/signature-v4";
import { S3Error, hexBytes } from "./errors.ts";

type SignerRequest = Parameters<SignatureV4["presign"]>[0];
type QueryBag = Record<string, string | string[]>;

type SourceData = string | ArrayBuffer | ArrayBufferView;

function toBytes(data: SourceData): Uint8Array | string {
  if (typeof data === "string") return data;
  if (ArrayBuffer.isView(data)) return new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  return new Uint8Array(data);
}

/** SHA-256 / HMAC-SHA-256 on node:crypto, in the shape the signer expects. */
export class NodeSha256 {
  private readonly secret?: Uint8Array | string;
  private hash: ReturnType<typeof createHash> | ReturnType<typeof createHmac>;

  constructor(secret?: SourceData) {
    this.secret = secret === undefined ? undefined : toBytes(secret);
    this.hash = this.fresh();
  }
  private fresh() {
    return this.secret === undefined ? createHash("sha256") : createHmac("sha256", this.secret);
  }
  update(data: SourceData): void {
    this.hash.update(toBytes(data));
  }
  async digest(): Promise<Uint8Array> {
    return new Uint8Array(this.hash.digest());
  }
  reset(): void {
    this.hash = this.fresh();
  }
}

export interface Credentials {
  accessKeyId: string;
  secretAccessKey: string;
}

export interface VerifyConfig {
  credentials: Credentials;
  region: string;
  /** Allowed difference between the request time and the server clock (header auth). */
  maxSkewMs?: number;
  now?: () => Date;
}

export interface VerifiedRequest {
  mode: "header" | "query";
  accessKeyId: string;
  /** The payload hash that was signed: a hex SHA-256, UNSIGNED-PAYLOAD or STREAMING-… */
  payloadHash: string;
  signedHeaders: string[];
  /** Decoded query (X-Amz-Signature included), for payload.ts to look up x-amz-checksum-*. */
  query: QueryBag;
}

const PAYLOAD_HASH_FORMAT = /^(UNSIGNED-PAYLOAD|STREAMING-[A-Z0-9-]+|[0-9a-f]{64})$/;
const LONG_DATE = /^(\d{4})(\d{2})(\d{2})T(\d{2})(\d{2})(\d{2})Z$/;

/** Subclass of the SDK signer that exposes the canonical request and string to sign. */
class SignatureRecomputer extends SignatureV4 {
  constructor(credentials: Credentials, region: string) {
    super({ credentials, region, service: "s3", sha256: NodeSha256, uriEscapePath: false, applyChecksum: false });
  }

  async compute(args: {
    request: SignerRequest;
    signedHeaders: string[];
    payloadHash: string;
    longDate: string;
    scope: string;
    credentials: Credentials;
    region: string;
  }): Promise<{ signature: string; canonicalRequest: string; stringToSign: string }> {
    const { request, signedHeaders, payloadHash, longDate, scope, credentials, region } = args;
    const canonicalHeaders = getCanonicalHeaders(request, undefined, new Set(signedHeaders));
    const canonicalRequest = this.createCanonicalRequest(request, canonicalHeaders, payloadHash);
    const stringToSign = await this.createStringToSign(longDate, scope, canonicalRequest, ALGORITHM_IDENTIFIER);
    const key = await getSigningKey(NodeSha256, credentials, longDate.slice(0, 8), region, "s3");
    const signature = createHmac("sha256", key).update(stringToSign, "utf8").digest("hex");
    return { signature, canonicalRequest, stringToSign };
  }
}

/** Splits a raw request target without normalising the path (the signature covers it byte for byte). */
export function splitTarget(rawUrl: string): { rawPath: string; rawQuery: string } {
  const q = rawUrl.indexOf("?");
  return q === -1 ? { rawPath: rawUrl, rawQuery: "" } : { rawPath: rawUrl.slice(0, q), rawQuery: rawUrl.slice(q + 1) };
}

/** Query-string decoding as S3 does it: percent-decoding only ('+' stays '+'), repeated keys kept. */
export function parseQuery(rawQuery: string): QueryBag {
  const query: QueryBag = {};
  if (!rawQuery) return query;
  for (const part of rawQuery.split("&")) {
    if (!part) continue;
    const eq = part.indexOf("=");
    const rawKey = eq === -1 ? part : part.slice(0, eq);
    const rawValue = eq === -1 ? "" : part.slice(eq + 1);
    let key: string;
    let value: string;
    try {
      key = decodeURIComponent(rawKey);
      value = decodeURIComponent(rawValue);
    } catch {
      throw new S3Error("InvalidArgument", "Invalid query string: malformed percent-encoding.");
    }
    const existing = query[key];
    if (existing === undefined) query[key] = value;
    else query[key] = Array.isArray(existing) ? [...existing, value] : [existing, value];
  }
  return query;
}

function single(query: QueryBag, key: string): string | undefined {
  const v = query[key];
  return Array.isArray(v) ? v[0] : v;
}

function headerValue(req: IncomingMessage, name: string): string | undefined {
  const v = req.headers[name];
  if (v === undefined) return undefined;
  return Array.isArray(v) ? v.join(",") : v;
}

function parseLongDate(value: string | undefined): Date | undefined {
  const m = value ? LONG_DATE.exec(value) : null;
  if (!m) return undefined;
  const [, y, mo, d, h, mi, s] = m.map(Number);
  const date = new Date(Date.UTC(y, mo - 1, d, h, mi, s));
  return Number.isNaN(date.getTime()) ? undefined : date;
}

function isoSeconds(date: Date): string {
  return date.toISOString().replace(/\.\d{3}Z$/, "Z");
}

function longDateOf(date: Date): string {
  return isoSeconds(date).replace(/[-:]/g, "");
}

function constantTimeEqualHex(a: string, b: string): boolean {
  const ab = Buffer.from(a, "utf8");
  const bb = Buffer.from(b, "utf8");
  if (ab.length !== bb.length) {
    timingSafeEqual(ab, ab); // keep the timing independent of where the lengths differ
    return false;
  }
  return timingSafeEqual(ab, bb);
}

interface ParsedCredential {
  accessKeyId: string;
  date: string;
  region: string;
  service: string;
  terminator: string;
}

function parseCredential(value: string): ParsedCredential | undefined {
  const parts = value.split("/");
  if (parts.length !== 5) return undefined;
  const [accessKeyId, date, region, service, terminator] = parts;
  return { accessKeyId, date, region, service, terminator };
}

/**
 * Verifies the request's SigV4 signature. Throws an S3Error shaped like the
 * real service's answer when the request must be refused.
 * Requests with no credentials at all are refused too (the bucket is private).
 */
export async function verifySigV4(req: IncomingMessage, config: VerifyConfig): Promise<VerifiedRequest> {
  const now = (config.now ?? (() => new Date()))();
  const { rawPath, rawQuery } = splitTarget(req.url ?? "/");
  const query = parseQuery(rawQuery);
  const authorization = headerValue(req, "authorization");
  const hasQueryV4 = "X-Amz-Algorithm" in query;
  const hasQueryV2 = "Signature" in query || "AWSAccessKeyId" in query;

  if ([authorization !== undefined, hasQueryV4, hasQueryV2].filter(Boolean).length > 1) {
    throw new S3Error(
      "InvalidArgument",
      "Only one auth mechanism allowed; only the X-Amz-Algorithm query parameter, Signature query string parameter or the Authorization header should be specified",
      { ArgumentName: "Authorization", ArgumentValue: authorization ?? "null" },
    );
  }
  if (hasQueryV2 || (authorization !== undefined && /^AWS\s/.test(authorization))) {
    throw new S3Error(
      "InvalidRequest",
      "The authorization mechanism you have provided is not supported. Please use AWS4-HMAC-SHA256.",
    );
  }
  if (authorization === undefined && !hasQueryV4) {
    throw new S3Error("AccessDenied", "Access Denied");
  }

  const mode: "header" | "query" = hasQueryV4 ? "query" : "header";
  const malformed = mode === "header" ? "AuthorizationHeaderMalformed" : "AuthorizationQueryParametersError";

  let credentialValue: string;
  let signedHeadersValue: string;
  let signatureProvided: string;
  let requestDate: Date;
  let longDate: string;
  let payloadHash: string;

  if (mode === "header") {
    const m = /^AWS4-HMAC-SHA256\s+(.+)$/s.exec(authorization!.trim());
    if (!m) {
      throw new S3Error("InvalidArgument", "Unsupported Authorization Type", {
        ArgumentName: "Authorization",
        ArgumentValue: authorization!,
      });
    }
    const components = new Map<string, string>();
    for (const piece of m[1].split(",")) {
      const eq = piece.indexOf("=");
      if (eq > 0) components.set(piece.slice(0, eq).trim(), piece.slice(eq + 1).trim());
    }
    for (const name of ["Credential", "SignedHeaders", "Signature"]) {
      if (!components.get(name)) {
        throw new S3Error(malformed, `The authorization header is malformed; missing ${name}.`);
      }
    }
    credentialValue = components.get("Credential")!;
    signedHeadersValue = components.get("SignedHeaders")!;
    signatureProvided = components.get("Signature")!;

    const amzDate = headerValue(req, "x-amz-date");
    const fromHeader = amzDate !== undefined ? parseLongDate(amzDate) : parseHttpDate(headerValue(req, "date"));
    if (!fromHeader) {
      throw new S3Error("AccessDenied", "AWS authentication requires a valid Date or x-amz-date header");
    }
    requestDate = fromHeader;
    longDate = amzDate ?? longDateOf(fromHeader);
    const maxSkew = config.maxSkewMs ?? 15 * 60 * 1000;
    if (Math.abs(now.getTime() - requestDate.getTime()) > maxSkew) {
      throw new S3Error("RequestTimeTooSkewed", "The difference between the request time and the current time is too large.", {
        RequestTime: amzDate ?? headerValue(req, "date") ?? "",
        ServerTime: isoSeconds(now),
        MaxAllowedSkewMilliseconds: String(maxSkew),
      });
    }

    const declared = headerValue(req, "x-amz-content-sha256");
    if (declared === undefined) {
      throw new S3Error("InvalidRequest", "Missing required header for this request: x-amz-content-sha256");
    }
    if (!PAYLOAD_HASH_FORMAT.test(declared)) {
      throw new S3Error(
        "InvalidArgument",
        "x-amz-content-sha256 must be UNSIGNED-PAYLOAD, STREAMING-UNSIGNED-PAYLOAD-TRAILER, STREAMING-AWS4-HMAC-SHA256-PAYLOAD, STREAMING-AWS4-HMAC-SHA256-PAYLOAD-TRAILER, or a valid sha256 value.",
        { ArgumentName: "x-amz-content-sha256", ArgumentValue: declared },
      );
    }
    payloadHash = declared;
  } else {
    if (single(query, "X-Amz-Algorithm") !== ALGORITHM_IDENTIFIER) {
      throw new S3Error(malformed, 'X-Amz-Algorithm only supports "AWS4-HMAC-SHA256"');
    }
    const required = ["X-Amz-Credential", "X-Amz-Signature", "X-Amz-Date", "X-Amz-SignedHeaders", "X-Amz-Expires"];
    if (required.some((k) => single(query, k) === undefined)) {
      throw new S3Error(
        malformed,
        "Query-string authentication version 4 requires the X-Amz-Algorithm, X-Amz-Credential, X-Amz-Signature, X-Amz-Date, X-Amz-SignedHeaders, and X-Amz-Expires parameters.",
      );
    }
    credentialValue = single(query, "X-Amz-Credential")!;
    signedHeadersValue = single(query, "X-Amz-SignedHeaders")!;
    signatureProvided = single(query, "X-Amz-Signature")!;
    longDate = single(query, "X-Amz-Date")!;
    const parsed = parseLongDate(longDate);
    if (!parsed) {
      throw new S3Error(malformed, "X-Amz-Date must be in the ISO8601 Long Format \"yyyyMMdd'T'HHmmss'Z'\"");
    }
    requestDate = parsed;

    const expiresRaw = single(query, "X-Amz-Expires")!;
    if (!/^\d+$/.test(expiresRaw)) {
      throw new S3Error(malformed, "X-Amz-Expires should be a number");
    }
    const expires = Number(expiresRaw);
    if (expires > MAX_PRESIGNED_TTL) {
      throw new S3Error(malformed, "X-Amz-Expires must be less than a week (in seconds) that is 604800");
    }
    const expiresAt = new Date(requestDate.getTime() + expires * 1000);
    if (now.getTime() > expiresAt.getTime()) {
      throw new S3Error("AccessDenied", "Request has expired", {
        "X-Amz-Expires": expiresRaw,
        Expires: isoSeconds(expiresAt),
        ServerTime: isoSeconds(now),
      });
    }
    if (requestDate.getTime() - now.getTime() > (config.maxSkewMs ?? 15 * 60 * 1000)) {
      throw new S3Error("AccessDenied", "Request is not valid yet");
    }
    payloadHash = single(query, "X-Amz-Content-Sha256") ?? headerValue(req, "x-amz-content-sha256") ?? UNSIGNED_PAYLOAD;
    if (!PAYLOAD_HASH_FORMAT.test(payloadHash)) payloadHash = UNSIGNED_PAYLOAD;
  }

  const credential = parseCredential(credentialValue);
  if (!credential) {
    throw new S3Error(malformed, `Error parsing the X-Amz-Credential parameter; the Credential is mal-formed; expecting "<YOUR-AKID>/YYYYMMDD/REGION/SERVICE/aws4_request".`);
  }
  if (credential.accessKeyId !== config.credentials.accessKeyId) {
    throw new S3Error("InvalidAccessKeyId", "The AWS Access Key Id you provided does not exist in our records.", {
      AWSAccessKeyId: credential.accessKeyId,
    });
  }
  if (credential.date !== longDate.slice(0, 8)) {
    throw new S3Error(malformed, `Invalid credential date "${credential.date}". This date is not the same as X-Amz-Date: "${longDate.slice(0, 8)}".`);
  }
  if (credential.region !== config.region) {
    throw new S3Error(malformed, `The authorization header is malformed; the region '${credential.region}' is wrong; expecting '${config.region}'`, {
      Region: config.region,
    });
  }
  if (credential.service !== "s3" || credential.terminator !== "aws4_request") {
    throw new S3Error(malformed, `The authorization header is malformed; incorrect service "${credential.service}" or terminal "${credential.terminator}". This endpoint belongs to "s3".`);
  }

  const signedHeaders = signedHeadersValue.split(";").filter(Boolean);
  if (signedHeaders.some((h) => h !== h.toLowerCase())) {
    throw new S3Error(malformed, "SignedHeaders must be lower-case.");
  }
  if (!signedHeaders.includes("host")) {
    throw new S3Error("AccessDenied", "There were headers present in the request which were not signed", {
      HeadersNotSigned: "host",
    });
  }
  // Every x-amz-* header that reaches S3 must be covered by the signature.
  const unsignedAmz = Object.keys(req.headers).filter((h) => h.startsWith("x-amz-") && !signedHeaders.includes(h));
  if (unsignedAmz.length > 0) {
    throw new S3Error("AccessDenied", "There were headers present in the request which were not signed", {
      HeadersNotSigned: unsignedAmz.sort().join(", "),
    });
  }

  const headers: Record<string, string> = {};
  for (const name of signedHeaders) {
    const v = headerValue(req, name);
    // A signed header that is missing can never match; the canonical request shows it as absent.
    if (v !== undefined) headers[name] = v;
  }

  const canonicalQuery: QueryBag = { ...query };
  if (mode === "query") delete canonicalQuery["X-Amz-Signature"];

  const request: SignerRequest = {
    method: (req.method ?? "GET").toUpperCase(),
    protocol: "http:",
    hostname: headers.host ?? "",
    path: rawPath,
    query: canonicalQuery,
    headers,
  };
  const recomputer = new SignatureRecomputer(config.credentials, config.region);
  const scope = `${credential.date}/${credential.region}/${credential.service}/${credential.terminator}`;
  const { signature, canonicalRequest, stringToSign } = await recomputer.compute({
    request,
    signedHeaders,
    payloadHash,
    longDate,
    scope,
    credentials: config.credentials,
    region: credential.region,
  });

  if (!constantTimeEqualHex(signature, signatureProvided.toLowerCase()) || Object.keys(headers).length !== signedHeaders.length) {
    throw new S3Error(
      "SignatureDoesNotMatch",
      "The request signature we calculated does not match the signature you provided. Check your key and signing method.",
      {
        AWSAccessKeyId: credential.accessKeyId,
        StringToSign: stringToSign,
        SignatureProvided: signatureProvided,
        StringToSignBytes: hexBytes(stringToSign),
        CanonicalRequest: canonicalRequest,
        CanonicalRequestBytes: hexBytes(canonicalRequest),
      },
    );
  }

  return { mode, accessKeyId: credential.accessKeyId, payloadHash, signedHeaders, query };
}

function parseHttpDate(value: string | undefined): Date | undefined {
  if (!value) return undefined;
  const d = new Date(value);
  return Number.isNaN(d.getTime()) ? undefined : d;
}

