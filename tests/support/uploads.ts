import { createHash } from "node:crypto";
import { db } from "#app/utils/db.server.ts";
import { runIngestJob } from "#app/jobs/ingest.server.ts";
import { request, type Jar } from "./app.ts";

export function sha256(body: string | Buffer) {
  return createHash("sha256").update(body).digest("hex");
}

export type UploadOutcome = {
  status: number;
  ok: boolean;
  uploadId?: string;
  confirmed?: { ok: boolean; status: string };
  duplicate?: { uploadId: string; message: string };
  errors?: Record<string, string[]>;
};

/** The browser's side of an upload: presign through the API, PUT to S3, confirm. */
export async function uploadFile(
  jar: Jar,
  opts: { fileName: string; body: string | Buffer; siteId: string; loggerId: string; profileId: string | null },
): Promise<UploadOutcome> {
  const body = typeof opts.body === "string" ? Buffer.from(opts.body) : opts.body;
  const presign = await request("/api/uploads", {
    jar,
    form: {
      intent: "presign",
      fileName: opts.fileName,
      sizeBytes: String(body.length),
      contentType: "text/csv",
      sha256: sha256(body),
      siteId: opts.siteId,
      loggerId: opts.loggerId,
      profileId: opts.profileId ?? "",
    },
  });
  const presigned = (await presign.json()) as {
    ok: boolean;
    uploadId?: string;
    url?: string;
    headers?: Record<string, string>;
    duplicate?: { uploadId: string; message: string };
    errors?: Record<string, string[]>;
  };
  if (!presigned.ok) return { status: presign.status, ok: false, duplicate: presigned.duplicate, errors: presigned.errors };
  const put = await fetch(presigned.url!, { method: "PUT", body: new Uint8Array(body), headers: presigned.headers });
  if (!put.ok) throw new Error(`PUT to S3 failed: ${put.status} ${await put.text()}`);
  const confirm = await request("/api/uploads", { jar, form: { intent: "confirm", uploadId: presigned.uploadId! } });
  const confirmed = (await confirm.json()) as { ok: boolean; status: string };
  return { status: confirm.status, ok: true, uploadId: presigned.uploadId!, confirmed };
}

/** Runs the queued ingest job for an upload now (what the worker does). */
export async function processUpload(uploadId: string) {
  await runIngestJob(uploadId);
  return db.selectFrom("upload").selectAll().where("id", "=", uploadId).executeTakeFirstOrThrow();
}
