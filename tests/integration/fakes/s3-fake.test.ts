import { createHash, randomBytes } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import http from "node:http";
import { Readable } from "node:stream";
import {
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
  UploadPartCommand,
  type S3ClientConfig,
} from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { SignatureV4 } from "@smithy/signature-v4";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startS3Fake, type S3Fake } from "#fakes/s3/server.ts";
import { NodeSha256 } from "#fakes/s3/sigv4.ts";

process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED = "true";

const APP_ORIGIN = "http://127.0.0.1:3210";
const OTHER_ORIGIN = "http://evil.example:3210";

let fake: S3Fake;
let dir: string;
let s3: S3Client;
let bucket: string;

function client(overrides: Partial<S3ClientConfig> = {}): S3Client {
  return new S3Client({
    endpoint: fake.url,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: fake.credentials,
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
    ...overrides,
  });
}

const sha256 = (data: Uint8Array) => createHash("sha256").update(data).digest("hex");

async function readAll(key: string): Promise<Buffer> {
  const out = await s3.send(new GetObjectCommand({ Bucket: bucket, Key: key }));
  return Buffer.from(await out.Body!.transformToByteArray());
}

async function exists(key: string): Promise<boolean> {
  try {
    await s3.send(new HeadObjectCommand({ Bucket: bucket, Key: key }));
    return true;
  } catch (err) {
    if ((err as { name?: string }).name === "NotFound") return false;
    throw err;
  }
}

/** Byte comparison without a slow element-by-element deep equality on large buffers. */
function expectSameBytes(actual: Buffer, expected: Uint8Array) {
  expect(actual.length).toBe(expected.length);
  expect(sha256(actual)).toBe(sha256(expected));
}

function xmlField(xml: string, field: string): string | undefined {
  return new RegExp(`<${field}>([\\s\\S]*?)</${field}>`).exec(xml)?.[1];
}

async function presignPut(key: string, body: Uint8Array, extra: { contentType?: string; signContentType?: boolean } = {}) {
  return getSignedUrl(
    s3,
    new PutObjectCommand({ Bucket: bucket, Key: key, ContentType: extra.contentType ?? "text/csv", ContentLength: body.length }),
    { expiresIn: 300, ...(extra.signContentType ? { signableHeaders: new Set(["content-type"]) } : {}) },
  );
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "ripplemark-s3-fake-test-"));
  fake = await startS3Fake({ port: 0, dir, corsOrigins: [APP_ORIGIN, "http://localhost:3210"] });
  bucket = fake.bucket;
  s3 = client();
});

afterAll(async () => {
  s3?.destroy();
  await fake?.close();
  await rm(dir, { recursive: true, force: true });
});

describe("S3 fake: ordinary SDK traffic through the signature-checking proxy", () => {
  it("listens on loopback and uses the default bucket", () => {
    expect(fake.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(bucket).toBe("ripplemark");
  });

  it("PutObject, GetObject, HeadObject and ListObjectsV2 work", async () => {
    const body = Buffer.from("site,ec_us_cm\nRiver A,412.5\n");
    await s3.send(
      new PutObjectCommand({ Bucket: bucket, Key: "sdk/readings one.csv", Body: body, ContentType: "text/csv" }),
    );
    expectSameBytes(await readAll("sdk/readings one.csv"), body);

    const head = await s3.send(new HeadObjectCommand({ Bucket: bucket, Key: "sdk/readings one.csv" }));
    expect(head.ContentLength).toBe(body.length);
    expect(head.ContentType).toBe("text/csv");

    await s3.send(new PutObjectCommand({ Bucket: bucket, Key: "sdk/second.csv", Body: "x" }));
    const list = await s3.send(new ListObjectsV2Command({ Bucket: bucket, Prefix: "sdk/" }));
    expect(list.Contents?.map((o) => o.Key).sort()).toEqual(["sdk/readings one.csv", "sdk/second.csv"]);
  });

  it("multipart upload (CreateMultipartUpload / UploadPart / Complete) works", async () => {
    const part1 = randomBytes(5 * 1024 * 1024);
    const part2 = randomBytes(1234);
    const { UploadId } = await s3.send(new CreateMultipartUploadCommand({ Bucket: bucket, Key: "mp/big.bin" }));
    const p1 = await s3.send(new UploadPartCommand({ Bucket: bucket, Key: "mp/big.bin", UploadId, PartNumber: 1, Body: part1 }));
    const p2 = await s3.send(new UploadPartCommand({ Bucket: bucket, Key: "mp/big.bin", UploadId, PartNumber: 2, Body: part2 }));
    await s3.send(
      new CompleteMultipartUploadCommand({
        Bucket: bucket,
        Key: "mp/big.bin",
        UploadId,
        MultipartUpload: { Parts: [{ PartNumber: 1, ETag: p1.ETag }, { PartNumber: 2, ETag: p2.ETag }] },
      }),
    );
    expect(sha256(await readAll("mp/big.bin"))).toBe(sha256(Buffer.concat([part1, part2])));
  });

  it("a 20 MB upload from a stream reads back with the same SHA-256", async () => {
    const data = randomBytes(20 * 1024 * 1024);
    const chunks = Array.from({ length: 20 }, (_, i) => data.subarray(i * 1024 * 1024, (i + 1) * 1024 * 1024));
    await s3.send(
      new PutObjectCommand({ Bucket: bucket, Key: "big/stream.bin", Body: Readable.from(chunks), ContentLength: data.length }),
    );
    expect(sha256(await readAll("big/stream.bin"))).toBe(sha256(data));
  });

  it("an 8 MB upload from a Buffer (hex payload hash, checked by the proxy) reads back identical", async () => {
    const data = randomBytes(8 * 1024 * 1024);
    await s3.send(new PutObjectCommand({ Bucket: bucket, Key: "big/buffer.bin", Body: data }));
    expect(sha256(await readAll("big/buffer.bin"))).toBe(sha256(data));
  });

  it("a client left on the SDK's default checksum settings (aws-chunked uploads) still stores the right bytes", async () => {
    const defaults = new S3Client({ endpoint: fake.url, region: "us-east-1", forcePathStyle: true, credentials: fake.credentials });
    try {
      const data = randomBytes(3 * 1024 * 1024 + 17);
      await defaults.send(
        new PutObjectCommand({ Bucket: bucket, Key: "chunked/obj.bin", Body: Readable.from([data.subarray(0, 1000), data.subarray(1000)]), ContentLength: data.length }),
      );
      expect(sha256(await readAll("chunked/obj.bin"))).toBe(sha256(data));
    } finally {
      defaults.destroy();
    }
  });
  it("an upload cut off half-way stores nothing and leaves the previous version intact", async () => {
    const original = randomBytes(256 * 1024);
    await s3.send(new PutObjectCommand({ Bucket: bucket, Key: "cut/existing.bin", Body: original }));
    for (const key of ["cut/existing.bin", "cut/fresh.bin"]) {
      const url = await getSignedUrl(s3, new PutObjectCommand({ Bucket: bucket, Key: key, ContentLength: 4 * 1024 * 1024 }), { expiresIn: 60 });
      await new Promise<void>((done) => {
        const req = http.request(url, { method: "PUT", headers: { "content-length": 4 * 1024 * 1024 } });
        req.on("error", () => done());
        req.write(randomBytes(1024 * 1024), () => {
          setTimeout(() => {
            req.destroy();
            done();
          }, 100);
        });
      });
    }
    await new Promise((r) => setTimeout(r, 200));
    expectSameBytes(await readAll("cut/existing.bin"), original);
    expect(await exists("cut/fresh.bin")).toBe(false);
  });
});

describe("S3 fake: presigned URLs", () => {
  it("a presigned PUT uploaded with fetch works and reads back byte-identical", async () => {
    const body = randomBytes(64 * 1024);
    const url = await presignPut("uploads/logger-17.csv", body);
    expect(url).toContain("X-Amz-SignedHeaders=content-length%3Bhost");

    const res = await fetch(url, { method: "PUT", body, headers: { "content-type": "text/csv", origin: APP_ORIGIN } });
    expect(res.status).toBe(200);
    expect(res.headers.get("etag")).toBe(`"${createHash("md5").update(body).digest("hex")}"`);
    expect(res.headers.get("access-control-allow-origin")).toBe(APP_ORIGIN);
    expect(res.headers.get("access-control-expose-headers")).toMatch(/etag/i);

    expectSameBytes(await readAll("uploads/logger-17.csv"), body);
    const head = await s3.send(new HeadObjectCommand({ Bucket: bucket, Key: "uploads/logger-17.csv" }));
    expect(head.ContentType).toBe("text/csv");
  });

  it("a presigned GET works, and the same URL for another key does not", async () => {
    await s3.send(new PutObjectCommand({ Bucket: bucket, Key: "dl/report.txt", Body: "weekly summary" }));
    await s3.send(new PutObjectCommand({ Bucket: bucket, Key: "dl/secret.txt", Body: "other" }));
    const url = await getSignedUrl(s3, new GetObjectCommand({ Bucket: bucket, Key: "dl/report.txt" }), { expiresIn: 60 });
    const ok = await fetch(url);
    expect(ok.status).toBe(200);
    expect(await ok.text()).toBe("weekly summary");

    const moved = await fetch(url.replace("/dl/report.txt?", "/dl/secret.txt?"));
    expect(moved.status).toBe(403);
    expect(xmlField(await moved.text(), "Code")).toBe("SignatureDoesNotMatch");
  });

  it("refuses a presigned PUT whose key was changed", async () => {
    const body = Buffer.from("a,b\n1,2\n");
    const url = await presignPut("uploads/allowed.csv", body);
    const res = await fetch(url.replace("/uploads/allowed.csv?", "/uploads/other.csv?"), {
      method: "PUT",
      body,
      headers: { "content-type": "text/csv" },
    });
    expect(res.status).toBe(403);
    const xml = await res.text();
    expect(xmlField(xml, "Code")).toBe("SignatureDoesNotMatch");
    expect(xmlField(xml, "CanonicalRequest")).toContain("/ripplemark/uploads/other.csv");
    expect(await exists("uploads/other.csv")).toBe(false);
  });

  it("refuses a presigned PUT whose query string was changed", async () => {
    const body = Buffer.from("a,b\n1,2\n");
    const url = await presignPut("uploads/query.csv", body);
    const longer = url.replace("X-Amz-Expires=300", "X-Amz-Expires=3000");
    expect(longer).not.toBe(url);
    const res = await fetch(longer, { method: "PUT", body, headers: { "content-type": "text/csv" } });
    expect(res.status).toBe(403);
    expect(xmlField(await res.text(), "Code")).toBe("SignatureDoesNotMatch");

    const added = await fetch(`${url}&acl=public-read`, { method: "PUT", body, headers: { "content-type": "text/csv" } });
    expect(added.status).toBe(403);
    expect(xmlField(await added.text(), "Code")).toBe("SignatureDoesNotMatch");
    expect(await exists("uploads/query.csv")).toBe(false);
  });

  it("refuses a presigned PUT sent with a different Content-Length than signed", async () => {
    const signed = Buffer.from("a,b\n1,2\n");
    const url = await presignPut("uploads/length.csv", signed);
    const res = await fetch(url, { method: "PUT", body: Buffer.from("a,b\n1,2\n3,4\n"), headers: { "content-type": "text/csv" } });
    expect(res.status).toBe(403);
    expect(xmlField(await res.text(), "Code")).toBe("SignatureDoesNotMatch");
    expect(await exists("uploads/length.csv")).toBe(false);
  });

  it("refuses a different Content-Type when the content type was signed", async () => {
    const body = Buffer.from("a,b\n");
    const url = await presignPut("uploads/typed.csv", body, { signContentType: true });
    expect(url).toContain("X-Amz-SignedHeaders=content-length%3Bcontent-type%3Bhost");
    const wrong = await fetch(url, { method: "PUT", body, headers: { "content-type": "text/html" } });
    expect(wrong.status).toBe(403);
    expect(xmlField(await wrong.text(), "Code")).toBe("SignatureDoesNotMatch");
    const right = await fetch(url, { method: "PUT", body, headers: { "content-type": "text/csv" } });
    expect(right.status).toBe(200);
  });

  it("refuses an expired presigned URL with AccessDenied 'Request has expired'", async () => {
    const body = Buffer.from("late");
    const url = await getSignedUrl(
      s3,
      new PutObjectCommand({ Bucket: bucket, Key: "uploads/late.csv", ContentLength: body.length }),
      { expiresIn: 60, signingDate: new Date(Date.now() - 5 * 60 * 1000) },
    );
    const res = await fetch(url, { method: "PUT", body });
    expect(res.status).toBe(403);
    const xml = await res.text();
    expect(xmlField(xml, "Code")).toBe("AccessDenied");
    expect(xmlField(xml, "Message")).toBe("Request has expired");
    expect(await exists("uploads/late.csv")).toBe(false);
  });

  it("refuses X-Amz-Expires above one week with AuthorizationQueryParametersError", async () => {
    const url = await getSignedUrl(s3, new GetObjectCommand({ Bucket: bucket, Key: "dl/report.txt" }), { expiresIn: 604800 });
    const ok = await fetch(url);
    expect(ok.status).toBe(200);
    const res = await fetch(url.replace("X-Amz-Expires=604800", "X-Amz-Expires=604801"));
    expect(res.status).toBe(400);
    expect(xmlField(await res.text(), "Code")).toBe("AuthorizationQueryParametersError");
  });

  it("a presign made with the SDK's default checksum settings is refused with BadDigest, as S3 would", async () => {
    const defaults = new S3Client({ endpoint: fake.url, region: "us-east-1", forcePathStyle: true, credentials: fake.credentials });
    try {
      const body = Buffer.from("a,b\n1,2\n");
      const url = await getSignedUrl(defaults, new PutObjectCommand({ Bucket: bucket, Key: "uploads/crc.csv", ContentLength: body.length }), { expiresIn: 60 });
      expect(url.toLowerCase()).toContain("x-amz-checksum-crc32=");
      const res = await fetch(url, { method: "PUT", body });
      expect(res.status).toBe(400);
      expect(xmlField(await res.text(), "Code")).toBe("BadDigest");
      expect(await exists("uploads/crc.csv")).toBe(false);
    } finally {
      defaults.destroy();
    }
  });
});

describe("S3 fake: Authorization-header requests", () => {
  it("refuses anonymous requests", async () => {
    const res = await fetch(`${fake.url}/${bucket}/dl/report.txt`);
    expect(res.status).toBe(403);
    expect(xmlField(await res.text(), "Code")).toBe("AccessDenied");
  });

  it("refuses a request signed with the wrong secret, without storing the body", async () => {
    const wrong = client({ credentials: { accessKeyId: "S3RVER", secretAccessKey: "not-the-secret" }, maxAttempts: 1 });
    try {
      const err = await wrong
        .send(new PutObjectCommand({ Bucket: bucket, Key: "auth/wrong.bin", Body: randomBytes(3 * 1024 * 1024) }))
        .then(() => undefined, (e: unknown) => e as { name: string; $metadata: { httpStatusCode: number } });
      expect(err?.name).toBe("SignatureDoesNotMatch");
      expect(err?.$metadata.httpStatusCode).toBe(403);
      expect(await exists("auth/wrong.bin")).toBe(false);
    } finally {
      wrong.destroy();
    }
  });

  it("refuses an unknown access key with InvalidAccessKeyId", async () => {
    const stranger = client({ credentials: { accessKeyId: "SOMEONE", secretAccessKey: "S3RVER" }, maxAttempts: 1 });
    try {
      const err = await stranger.send(new GetObjectCommand({ Bucket: bucket, Key: "dl/report.txt" })).catch((e: unknown) => e as { name: string });
      expect((err as { name: string }).name).toBe("InvalidAccessKeyId");
    } finally {
      stranger.destroy();
    }
  });

  it("refuses a body that does not match its signed x-amz-content-sha256", async () => {
    const signer = new SignatureV4({ service: "s3", region: "us-east-1", credentials: fake.credentials, sha256: NodeSha256, uriEscapePath: false });
    const host = new URL(fake.url).host;
    const declared = Buffer.from("the body that was signed");
    const sent = Buffer.from("a different body, same len");
    const signed = await signer.sign({
      method: "PUT",
      protocol: "http:",
      hostname: "127.0.0.1",
      path: `/${bucket}/auth/hash.txt`,
      headers: { host, "x-amz-content-sha256": sha256(declared), "content-length": String(sent.length) },
    });
    const res = await fetch(`${fake.url}/${bucket}/auth/hash.txt`, { method: "PUT", headers: signed.headers, body: sent });
    expect(res.status).toBe(400);
    expect(xmlField(await res.text(), "Code")).toBe("XAmzContentSHA256Mismatch");
    expect(await exists("auth/hash.txt")).toBe(false);

    // The same request with the body that was signed goes through.
    const good = await signer.sign({
      method: "PUT",
      protocol: "http:",
      hostname: "127.0.0.1",
      path: `/${bucket}/auth/hash.txt`,
      headers: { host, "x-amz-content-sha256": sha256(declared), "content-length": String(declared.length) },
    });
    const ok = await fetch(`${fake.url}/${bucket}/auth/hash.txt`, { method: "PUT", headers: good.headers, body: declared });
    expect(ok.status).toBe(200);
    expectSameBytes(await readAll("auth/hash.txt"), declared);
  });
});

describe("S3 fake: CORS", () => {
  const preflight = (origin: string) =>
    fetch(`${fake.url}/${bucket}/uploads/from-browser.csv`, {
      method: "OPTIONS",
      headers: { origin, "access-control-request-method": "PUT", "access-control-request-headers": "content-type" },
    });

  it("answers a preflight from the app's origin with that origin", async () => {
    const res = await preflight(APP_ORIGIN);
    expect(res.status).toBe(200);
    expect(res.headers.get("access-control-allow-origin")).toBe(APP_ORIGIN);
    expect(res.headers.get("access-control-allow-methods")).toContain("PUT");
    expect(res.headers.get("access-control-allow-headers")).toContain("content-type");
    expect(res.headers.get("vary")).toMatch(/origin/i);
  });

  it("gives no CORS grant to another origin", async () => {
    const res = await preflight(OTHER_ORIGIN);
    expect(res.status).toBe(403);
    expect(res.headers.get("access-control-allow-origin")).toBeNull();

    const url = await getSignedUrl(s3, new GetObjectCommand({ Bucket: bucket, Key: "dl/report.txt" }), { expiresIn: 60 });
    const get = await fetch(url, { headers: { origin: OTHER_ORIGIN } });
    expect(get.status).toBe(200);
    expect(get.headers.get("access-control-allow-origin")).toBeNull();
    const allowed = await fetch(url, { headers: { origin: APP_ORIGIN } });
    expect(allowed.headers.get("access-control-allow-origin")).toBe(APP_ORIGIN);
  });
});
