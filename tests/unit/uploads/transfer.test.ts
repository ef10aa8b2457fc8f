import { afterEach, describe, expect, it, vi } from "vitest";
import { confirm, presign, putFile, PutFailed, sha256Hex } from "#app/routes/uploads/+shared/transfer.ts";

// The browser's upload steps against stubbed network answers: each answer of /api/uploads becomes
// what the page shows, and whether "Try again" is offered.

const file = new File(["Time,EC\n2025-01-01T00:00Z,400\n"], "RQ-4102.csv", { type: "text/csv" });
const input = { file, sha256: "a".repeat(64), siteId: "s", loggerId: "l", profileId: "p" };

function answer(status: number, body: unknown) {
  vi.stubGlobal("fetch", vi.fn(async () => new Response(JSON.stringify(body), { status, headers: { "Content-Type": "application/json" } })));
}

afterEach(() => {
  vi.unstubAllGlobals();
});

describe("presign", () => {
  it("sends the file's facts as a form and returns the signed address", async () => {
    answer(200, { ok: true, uploadId: "u1", url: "http://s3.test/put", headers: { "Content-Type": "text/csv" }, expiresAt: "2030-01-01T00:00:00Z" });
    const out = await presign(input);
    expect(out).toEqual({ kind: "ok", uploadId: "u1", url: "http://s3.test/put", headers: { "Content-Type": "text/csv" }, expiresAt: Date.parse("2030-01-01T00:00:00Z") });
    const [url, init] = (fetch as unknown as ReturnType<typeof vi.fn>).mock.calls[0];
    expect(url).toBe("/api/uploads");
    const body = init.body as FormData;
    expect(Object.fromEntries(body)).toMatchObject({ intent: "presign", fileName: "RQ-4102.csv", sizeBytes: String(file.size), contentType: "text/csv", sha256: "a".repeat(64) });
  });

  it("reports an earlier upload of the same bytes without sending anything", async () => {
    answer(409, { ok: false, duplicate: { uploadId: "u0", message: "This file was already uploaded as “a.csv”" } });
    expect(await presign(input)).toEqual({ kind: "duplicate", uploadId: "u0", message: "This file was already uploaded as “a.csv”" });
  });

  it("offers another try when storage is not answering (503, retryable)", async () => {
    answer(503, { ok: false, retryable: true, errors: { file: ["File storage is not answering just now."] } });
    expect(await presign(input)).toEqual({ kind: "refused", message: "File storage is not answering just now.", retryable: true, fields: ["file"] });
  });

  it("names the fields to fix when the choices are refused (400, not retryable)", async () => {
    answer(400, { ok: false, errors: { siteId: ["Choose the site"] } });
    expect(await presign(input)).toEqual({ kind: "refused", message: "Choose the site", retryable: false, fields: ["siteId"] });
  });

  it("offers another try when the server cannot be reached", async () => {
    vi.stubGlobal("fetch", vi.fn(async () => Promise.reject(new TypeError("Failed to fetch"))));
    const out = await presign(input);
    expect(out.kind).toBe("refused");
    expect(out.kind === "refused" && out.retryable).toBe(true);
  });
});

describe("confirm", () => {
  it("passes the queued status on", async () => {
    answer(200, { ok: true, status: "queued" });
    expect(await confirm("u1")).toEqual({ ok: true, status: "queued" });
  });

  it("treats bytes that did not all arrive (409) as worth sending again", async () => {
    answer(409, { ok: false, errors: { file: ["The file has not arrived in storage. Try the upload again."] } });
    expect(await confirm("u1")).toEqual({ ok: false, message: "The file has not arrived in storage. Try the upload again.", retryable: true });
  });
});

/** Just enough of XMLHttpRequest: records the request and answers with `status` after two progress events. */
function fakeXhr(status: number) {
  const sent: { method?: string; url?: string; headers: Record<string, string> } = { headers: {} };
  class FakeXhr {
    status = 0;
    upload: { onprogress: ((e: { lengthComputable: boolean; loaded: number; total: number }) => void) | null } = { onprogress: null };
    onload: (() => void) | null = null;
    onerror: (() => void) | null = null;
    ontimeout: (() => void) | null = null;
    onabort: (() => void) | null = null;
    open(method: string, url: string) {
      sent.method = method;
      sent.url = url;
    }
    setRequestHeader(name: string, value: string) {
      sent.headers[name] = value;
    }
    send(body: Blob) {
      queueMicrotask(() => {
        this.upload.onprogress?.({ lengthComputable: true, loaded: body.size / 2, total: body.size });
        this.upload.onprogress?.({ lengthComputable: true, loaded: body.size, total: body.size });
        if (status === 0) this.onerror?.();
        else {
          this.status = status;
          this.onload?.();
        }
      });
    }
  }
  vi.stubGlobal("XMLHttpRequest", FakeXhr);
  return sent;
}

describe("putFile", () => {
  const target = { uploadId: "u1", url: "http://s3.test/put?sig", headers: { "Content-Type": "text/csv" }, expiresAt: 0 };

  it("PUTs with the signed headers and reports progress", async () => {
    const sent = fakeXhr(200);
    const progress: number[] = [];
    await putFile(target, file, (s, t) => progress.push(s / t));
    expect(sent).toEqual({ method: "PUT", url: "http://s3.test/put?sig", headers: { "Content-Type": "text/csv" } });
    expect(progress).toEqual([0.5, 1]);
  });

  it("asks for a new signature after a 403 from storage, not after a dropped connection", async () => {
    fakeXhr(403);
    const refused = await putFile(target, file, () => {}).catch((e) => e);
    expect(refused).toBeInstanceOf(PutFailed);
    expect(refused.mustPresignAgain).toBe(true);
    fakeXhr(0);
    const dropped = await putFile(target, file, () => {}).catch((e) => e);
    expect(dropped.message).toBe("The connection to file storage dropped");
    expect(dropped.mustPresignAgain).toBe(false);
  });
});

describe("sha256Hex", () => {
  it("fingerprints the whole file", async () => {
    // SHA-256("abc") from FIPS 180-2, appendix B.1.
    expect(await sha256Hex(new Blob(["abc"]))).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });
});
