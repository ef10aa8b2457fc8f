/**
 * Request bodies on their way from the client to s3rver.
 *
 * - aws-chunked bodies (x-amz-content-sha256: STREAMING-…) are decoded back to
 *   the plain object bytes. s3rver does not understand that framing and would
 *   store it verbatim, silently corrupting the object.
 * - A body whose declared hash or checksum must be checked (hex
 *   x-amz-content-sha256, x-amz-checksum-crc32/sha1/sha256 in a header, the
 *   query or an aws-chunked trailer) is spooled to a temporary file while it is
 *   hashed, and only handed to s3rver once it matches, as real S3 only stores
 *   objects whose bytes match. Nothing is ever held whole in memory.
 * - Everything else (UNSIGNED-PAYLOAD, the usual case for presigned browser
 *   uploads) is streamed straight through.
 */
import { createHash } from "node:crypto";
import { createReadStream, createWriteStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Transform, type Readable, type TransformCallback } from "node:stream";
import { pipeline } from "node:stream/promises";
import { crc32 } from "node:zlib";
import { S3Error } from "./errors.ts";

type QueryBag = Record<string, string | string[]>;

const MAX_LINE = 8 * 1024;

/** Decodes `aws-chunked` framing: `<hex size>[;chunk-signature=…]\r\n<data>\r\n … 0\r\n<trailers>\r\n`. */
export class AwsChunkedDecoder extends Transform {
  readonly trailers = new Map<string, string>();
  private state: "size" | "data" | "data-end" | "trailer" | "done" = "size";
  private line = Buffer.alloc(0);
  private remaining = 0;
  decodedBytes = 0;

  override _transform(chunk: Buffer, _enc: BufferEncoding, callback: TransformCallback): void {
    try {
      let offset = 0;
      while (offset < chunk.length) {
        if (this.state === "data") {
          const take = Math.min(this.remaining, chunk.length - offset);
          this.push(chunk.subarray(offset, offset + take));
          this.decodedBytes += take;
          this.remaining -= take;
          offset += take;
          if (this.remaining === 0) this.state = "data-end";
          continue;
        }
        if (this.state === "done") {
          // Anything after the final CRLF is ignored, as S3 does.
          break;
        }
        const nl = chunk.indexOf(0x0a, offset);
        const end = nl === -1 ? chunk.length : nl + 1;
        this.line = Buffer.concat([this.line, chunk.subarray(offset, end)]);
        offset = end;
        if (this.line.length > MAX_LINE) throw invalidChunk("chunk header line too long");
        if (nl === -1) continue;
        const text = this.line.toString("latin1").replace(/\r?\n$/, "");
        this.line = Buffer.alloc(0);
        this.onLine(text);
      }
      callback();
    } catch (err) {
      callback(err as Error);
    }
  }

  private onLine(text: string): void {
    switch (this.state) {
      case "size": {
        const sizeText = text.split(";")[0].trim();
        if (!/^[0-9a-fA-F]+$/.test(sizeText)) throw invalidChunk(`bad chunk size "${sizeText}"`);
        this.remaining = parseInt(sizeText, 16);
        this.state = this.remaining === 0 ? "trailer" : "data";
        return;
      }
      case "data-end":
        if (text !== "") throw invalidChunk("chunk data not followed by CRLF");
        this.state = "size";
        return;
      case "trailer": {
        if (text === "") {
          this.state = "done";
          return;
        }
        const colon = text.indexOf(":");
        if (colon <= 0) throw invalidChunk("bad trailer line");
        this.trailers.set(text.slice(0, colon).trim().toLowerCase(), text.slice(colon + 1).trim());
        return;
      }
      default:
        return;
    }
  }

  override _flush(callback: TransformCallback): void {
    // Some clients end right after the last trailer line without the blank line.
    if (this.state === "done" || (this.state === "trailer" && this.line.length === 0)) callback();
    else callback(new S3Error("IncompleteBody", "The request body terminated unexpectedly"));
  }
}

function invalidChunk(reason: string): S3Error {
  return new S3Error("InvalidArgument", `Invalid aws-chunked body: ${reason}`);
}

/** Running digests over the object bytes. */
class DigestTap extends Transform {
  bytes = 0;
  private readonly sha256 = createHash("sha256");
  private readonly sha1 = createHash("sha1");
  private crc = 0;

  override _transform(chunk: Buffer, _enc: BufferEncoding, callback: TransformCallback): void {
    this.bytes += chunk.length;
    this.sha256.update(chunk);
    this.sha1.update(chunk);
    this.crc = crc32(chunk, this.crc);
    callback(null, chunk);
  }

  results(): { sha256Hex: string; sha256: string; sha1: string; crc32: string } {
    const sha256 = this.sha256.digest();
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(this.crc >>> 0);
    return {
      sha256Hex: sha256.toString("hex"),
      sha256: sha256.toString("base64"),
      sha1: this.sha1.digest("base64"),
      crc32: crc.toString("base64"),
    };
  }
}

const CHECKED_ALGORITHMS = ["crc32", "sha1", "sha256"] as const;
type CheckedAlgorithm = (typeof CHECKED_ALGORITHMS)[number];

export interface PreparedBody {
  stream: Readable;
  /** Headers to send to s3rver instead of the client's (undefined = delete). */
  headerOverrides: Record<string, string | undefined>;
  cleanup: () => Promise<void>;
}

function headerOf(req: Readable & { headers: Record<string, string | string[] | undefined> }, name: string) {
  const v = req.headers[name];
  return Array.isArray(v) ? v.join(",") : v;
}

function queryValue(query: QueryBag, name: string): string | undefined {
  for (const [k, v] of Object.entries(query)) {
    if (k.toLowerCase() === name) return Array.isArray(v) ? v[0] : v;
  }
  return undefined;
}

/**
 * Turns the incoming request body into the stream s3rver should receive.
 * Throws (or rejects) with an S3Error when the bytes do not match what the
 * client declared; in that case nothing has been sent to s3rver.
 */
export async function prepareBody(
  req: Readable & { headers: Record<string, string | string[] | undefined> },
  payloadHash: string,
  query: QueryBag,
): Promise<PreparedBody> {
  const headerOverrides: Record<string, string | undefined> = {};
  const chunked = payloadHash.startsWith("STREAMING-");
  const trailerNames = (headerOf(req, "x-amz-trailer") ?? "")
    .split(",")
    .map((s) => s.trim().toLowerCase())
    .filter(Boolean);

  const declared = new Map<CheckedAlgorithm, string>();
  for (const alg of CHECKED_ALGORITHMS) {
    const v = headerOf(req, `x-amz-checksum-${alg}`) ?? queryValue(query, `x-amz-checksum-${alg}`);
    if (v !== undefined) declared.set(alg, v);
  }
  const trailerChecks = trailerNames.filter((n) => CHECKED_ALGORITHMS.some((a) => n === `x-amz-checksum-${a}`));
  const hexHash = /^[0-9a-f]{64}$/.test(payloadHash) ? payloadHash : undefined;

  if (chunked) {
    const contentEncoding = (headerOf(req, "content-encoding") ?? "")
      .split(",")
      .map((s) => s.trim())
      .filter((s) => s && s.toLowerCase() !== "aws-chunked")
      .join(", ");
    headerOverrides["content-encoding"] = contentEncoding || undefined;
    headerOverrides["x-amz-decoded-content-length"] = undefined;
    headerOverrides["x-amz-trailer"] = undefined;
    headerOverrides["x-amz-content-sha256"] = "UNSIGNED-PAYLOAD";
    const decodedLength = headerOf(req, "x-amz-decoded-content-length");
    headerOverrides["content-length"] = decodedLength;
  }

  const mustVerify = hexHash !== undefined || declared.size > 0 || trailerChecks.length > 0;
  const decoder = chunked ? new AwsChunkedDecoder() : undefined;

  if (!mustVerify) {
    const stream = decoder ? req.pipe(decoder) : req;
    if (decoder) req.on("error", (err) => decoder.destroy(err));
    return { stream, headerOverrides, cleanup: async () => {} };
  }

  const dir = await mkdtemp(join(tmpdir(), "ripplemark-s3-spool-"));
  const file = join(dir, "body");
  const cleanup = () => rm(dir, { recursive: true, force: true });
  try {
    const tap = new DigestTap();
    if (decoder) await pipeline(req, decoder, tap, createWriteStream(file));
    else await pipeline(req, tap, createWriteStream(file));
    const got = tap.results();

    if (hexHash !== undefined && got.sha256Hex !== hexHash) {
      throw new S3Error("XAmzContentSHA256Mismatch", "The provided 'x-amz-content-sha256' header does not match what was computed.", {
        ClientComputedContentSHA256: hexHash,
        S3ComputedContentSHA256: got.sha256Hex,
      });
    }
    for (const name of trailerChecks) {
      const value = decoder?.trailers.get(name);
      if (value !== undefined) declared.set(name.slice("x-amz-checksum-".length) as CheckedAlgorithm, value);
    }
    for (const [alg, value] of declared) {
      if (got[alg] !== value) {
        throw new S3Error("BadDigest", `The ${alg.toUpperCase()} you specified did not match the calculated checksum.`);
      }
    }
    headerOverrides["content-length"] = String(tap.bytes);
    return { stream: createReadStream(file), headerOverrides, cleanup };
  } catch (err) {
    await cleanup();
    throw err;
  }
}
