import { GetObjectCommand, HeadObjectCommand, PutObjectCommand, S3Client, CreateBucketCommand, HeadBucketCommand } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import type { Readable } from "node:stream";
import { getEnv } from "./env.server.ts";

// One S3 client for the process. Locally it talks to the S3 fake (path-style; checksums only when
// required, which the fake needs); in production to real S3 with the same code.
let client: S3Client | undefined;
let publicClient: S3Client | undefined;

function makeClient(endpoint: string | undefined) {
  const env = getEnv();
  return new S3Client({
    region: env.S3_REGION,
    endpoint,
    forcePathStyle: env.S3_FORCE_PATH_STYLE,
    credentials: { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY },
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}

export function s3() {
  return (client ??= makeClient(getEnv().S3_ENDPOINT));
}

/** The client whose endpoint browsers can reach (differs from the server's behind some proxies). */
function s3Public() {
  const env = getEnv();
  if (!env.S3_PUBLIC_ENDPOINT) return s3();
  return (publicClient ??= makeClient(env.S3_PUBLIC_ENDPOINT));
}

export function bucket() {
  return getEnv().S3_BUCKET;
}

export const PRESIGN_TTL_SECONDS = 5 * 60;
export const MAX_UPLOAD_BYTES = 512 * 1024 * 1024;

/**
 * A short-lived URL for one PUT of exactly this key, length and content type: the browser sends the
 * file straight to S3 and a changed key, length or type breaks the signature.
 */
export async function presignPut(key: string, contentLength: number, contentType: string) {
  if (!Number.isInteger(contentLength) || contentLength <= 0 || contentLength > MAX_UPLOAD_BYTES) {
    throw new RangeError(`file size must be between 1 byte and ${MAX_UPLOAD_BYTES} bytes`);
  }
  const command = new PutObjectCommand({ Bucket: bucket(), Key: key, ContentLength: contentLength, ContentType: contentType });
  const url = await getSignedUrl(s3Public(), command, {
    expiresIn: PRESIGN_TTL_SECONDS,
    signableHeaders: new Set(["content-length", "content-type"]),
  });
  return { url, expiresAt: new Date(Date.now() + PRESIGN_TTL_SECONDS * 1000), headers: { "Content-Type": contentType } };
}

export async function presignGet(key: string, fileName: string, ttlSeconds = 60) {
  const command = new GetObjectCommand({
    Bucket: bucket(),
    Key: key,
    ResponseContentDisposition: `attachment; filename="${fileName.replace(/[^\w.-]+/g, "_")}"`,
  });
  return getSignedUrl(s3Public(), command, { expiresIn: ttlSeconds });
}

export async function headObject(key: string) {
  try {
    const r = await s3().send(new HeadObjectCommand({ Bucket: bucket(), Key: key }));
    return { size: r.ContentLength ?? 0, contentType: r.ContentType ?? "" };
  } catch (error) {
    const status = (error as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode;
    if (status === 404 || (error as Error).name === "NotFound") return null;
    throw error;
  }
}

/** The object's body as a Node stream (never the whole file in memory). */
export async function getObjectStream(key: string, range?: string): Promise<Readable> {
  const r = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key, Range: range }));
  return r.Body as Readable;
}

export async function putObject(key: string, body: Buffer | string | Readable, contentType: string, contentLength?: number) {
  await s3().send(new PutObjectCommand({ Bucket: bucket(), Key: key, Body: body, ContentType: contentType, ContentLength: contentLength }));
}

export async function ensureBucket() {
  try {
    await s3().send(new HeadBucketCommand({ Bucket: bucket() }));
  } catch {
    await s3().send(new CreateBucketCommand({ Bucket: bucket() }));
  }
}

/** Object keys are uploads/<uuid>/<sanitised file name>: no path traversal, no odd characters. */
export function uploadObjectKey(uploadId: string, fileName: string) {
  const base = fileName.split(/[\\/]/).pop() ?? "file";
  const safe = base.normalize("NFKC").replace(/[^\w.\- ]+/g, "_").replace(/^\.+/, "_").replace(/\s+/g, "_").slice(0, 120) || "file";
  return `uploads/${uploadId}/${safe}`;
}
