import { randomUUID } from "node:crypto";
import { db } from "#app/utils/db.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { headObject, MAX_UPLOAD_BYTES, presignPut, uploadObjectKey } from "#app/utils/storage.server.ts";
import type { SessionUser } from "./person.server.ts";

export const ALLOWED_CONTENT_TYPES = ["text/csv", "text/plain", "application/vnd.ms-excel", "text/tab-separated-values", "application/octet-stream"];

export class UploadRefused extends Error {
  constructor(message: string, readonly status = 400, readonly field?: string) {
    super(message);
  }
}

type NewUpload = {
  fileName: string;
  sizeBytes: number;
  contentType: string;
  sha256: string;
  siteId: string;
  loggerId: string;
  profileId: string | null;
};

/** An earlier upload of the very same bytes that was (or is being) ingested, if any. */
export async function findDuplicate(sha256: string) {
  return db
    .selectFrom("upload")
    .innerJoin("site", "site.id", "upload.site_id")
    .leftJoin("person", "person.id", "upload.uploaded_by")
    .select(["upload.id", "upload.file_name", "upload.created_at", "upload.status", "site.code as site_code", "person.name as uploaded_by"])
    .where("upload.sha256", "=", sha256)
    .where("upload.status", "in", ["queued", "processing", "done"])
    .orderBy("upload.created_at")
    .executeTakeFirst();
}

/**
 * Registers an upload and returns a presigned PUT for its object. The same file (by SHA-256)
 * already ingested is refused with the earlier upload named.
 */
export async function startUpload(user: SessionUser, input: NewUpload) {
  if (input.sizeBytes > MAX_UPLOAD_BYTES) {
    throw new UploadRefused(`${input.fileName} is ${(input.sizeBytes / 1048576).toFixed(0)} MB; the limit is ${MAX_UPLOAD_BYTES / 1048576} MB per file.`, 413, "size");
  }
  const duplicate = await findDuplicate(input.sha256);
  if (duplicate) {
    return { duplicateOf: duplicate } as const;
  }
  const deployed = await db
    .selectFrom("logger")
    .select(["id"])
    .where("id", "=", input.loggerId)
    .executeTakeFirst();
  if (!deployed) throw new UploadRefused("That logger does not exist.", 400, "loggerId");
  const site = await db.selectFrom("site").select("id").where("id", "=", input.siteId).executeTakeFirst();
  if (!site) throw new UploadRefused("That site does not exist.", 400, "siteId");
  if (input.profileId) {
    const profile = await db.selectFrom("import_profile").select("id").where("id", "=", input.profileId).executeTakeFirst();
    if (!profile) throw new UploadRefused("That import profile does not exist.", 400, "profileId");
  }
  const id = randomUUID();
  const key = uploadObjectKey(id, input.fileName);
  await db
    .insertInto("upload")
    .values({
      id,
      object_key: key,
      file_name: input.fileName.slice(0, 255),
      size_bytes: input.sizeBytes,
      content_type: input.contentType,
      sha256: input.sha256,
      site_id: input.siteId,
      logger_id: input.loggerId,
      profile_id: input.profileId,
      uploaded_by: user.id,
    })
    .execute();
  const put = await presignPut(key, input.sizeBytes, input.contentType);
  return { uploadId: id, put } as const;
}

/** Called after the browser's PUT: checks the object is there and whole, then queues the ingest. */
export async function confirmUpload(user: SessionUser, uploadId: string) {
  const upload = await db
    .selectFrom("upload")
    .select(["id", "object_key", "size_bytes", "status", "uploaded_by", "profile_id", "sha256"])
    .where("id", "=", uploadId)
    .executeTakeFirst();
  if (!upload) throw new UploadRefused("No such upload.", 404);
  if (upload.uploaded_by !== user.id && user.role === "technician") throw new UploadRefused("This upload belongs to someone else.", 403);
  if (upload.status !== "awaiting-file") return { status: upload.status };
  const head = await headObject(upload.object_key);
  if (!head) throw new UploadRefused("The file has not arrived in storage. Try the upload again.", 409);
  if (head.size !== Number(upload.size_bytes)) {
    throw new UploadRefused(`The stored file has ${head.size} bytes, not the ${upload.size_bytes} announced. Try the upload again.`, 409);
  }
  const duplicate = await findDuplicate(upload.sha256);
  return db.transaction().execute(async (trx) => {
    if (duplicate && duplicate.id !== upload.id) {
      await trx
        .updateTable("upload")
        .set({ status: "duplicate", duplicate_of: duplicate.id, confirmed_at: new Date(), finished_at: new Date(), message: duplicateMessage(duplicate) })
        .where("id", "=", uploadId)
        .execute();
      return { status: "duplicate" as const };
    }
    if (!upload.profile_id) {
      await trx
        .updateTable("upload")
        .set({ status: "failed", confirmed_at: new Date(), message: "Choose an import profile for this file, then process it." })
        .where("id", "=", uploadId)
        .execute();
      return { status: "failed" as const };
    }
    await trx.updateTable("upload").set({ status: "queued", confirmed_at: new Date() }).where("id", "=", uploadId).execute();
    await enqueue("ingest-upload", { uploadId }, { jobKey: `ingest:${uploadId}`, maxAttempts: 5 }, trx);
    return { status: "queued" as const };
  });
}

export function duplicateMessage(d: { file_name: string; created_at: Date; site_code: string; uploaded_by: string | null }) {
  return `This file was already uploaded as “${d.file_name}” on ${d.created_at.toISOString().slice(0, 16).replace("T", " ")} UTC for site ${d.site_code}${d.uploaded_by ? ` by ${d.uploaded_by}` : ""}; it was not ingested again.`;
}

/** Re-processes an upload (e.g. after its profile was corrected): replaces its own readings only. */
export async function reprocessUpload(uploadId: string, profileId: string | null) {
  return db.transaction().execute(async (trx) => {
    const upload = await trx.selectFrom("upload").select(["id", "status", "profile_id"]).where("id", "=", uploadId).forUpdate().executeTakeFirst();
    if (!upload) throw new UploadRefused("No such upload.", 404);
    if (upload.status === "awaiting-file") throw new UploadRefused("The file has not been uploaded yet.", 409);
    if (upload.status === "duplicate") throw new UploadRefused("This file duplicates an earlier upload; process that one instead.", 409);
    if (upload.status === "queued" || upload.status === "processing") throw new UploadRefused("This upload is already being processed.", 409);
    const profile = profileId ?? upload.profile_id;
    if (!profile) throw new UploadRefused("Choose an import profile first.", 400, "profileId");
    await trx
      .updateTable("upload")
      .set({ status: "queued", profile_id: profile, message: null, finished_at: null })
      .where("id", "=", uploadId)
      .execute();
    await enqueue("ingest-upload", { uploadId }, { jobKey: `ingest:${uploadId}`, maxAttempts: 5 }, trx);
  });
}

export type UploadStatusRow = Awaited<ReturnType<typeof uploadStatuses>>[number];

export async function uploadStatuses(ids: string[]) {
  if (ids.length === 0) return [];
  return db
    .selectFrom("upload")
    .innerJoin("site", "site.id", "upload.site_id")
    .select([
      "upload.id", "upload.file_name", "upload.status", "upload.message", "upload.size_bytes", "upload.bytes_processed",
      "upload.rows_total", "upload.rows_accepted", "upload.rows_rejected", "upload.rows_duplicate", "upload.first_reading_at",
      "upload.last_reading_at", "upload.duplicate_of", "upload.uploaded_by", "site.time_zone as site_time_zone",
    ])
    .where("upload.id", "in", ids)
    .execute();
}

export async function listUploads(options: { uploadedBy?: string; limit: number; offset: number; sort: "created_at" | "file_name" | "status"; dir: "asc" | "desc" }) {
  let q = db
    .selectFrom("upload")
    .innerJoin("site", "site.id", "upload.site_id")
    .innerJoin("logger", "logger.id", "upload.logger_id")
    .leftJoin("person", "person.id", "upload.uploaded_by")
    .leftJoin("import_profile", "import_profile.id", "upload.profile_id");
  if (options.uploadedBy) q = q.where("upload.uploaded_by", "=", options.uploadedBy);
  const [rows, total] = await Promise.all([
    q
      .select([
        "upload.id", "upload.file_name", "upload.status", "upload.created_at", "upload.rows_accepted", "upload.rows_rejected",
        "upload.rows_duplicate", "upload.first_reading_at", "upload.last_reading_at", "upload.message",
        "site.code as site_code", "site.time_zone as site_time_zone", "logger.serial as logger_serial", "person.name as uploaded_by",
        "import_profile.name as profile_name",
      ])
      .orderBy(`upload.${options.sort}`, options.dir)
      .orderBy("upload.id")
      .limit(options.limit)
      .offset(options.offset)
      .execute(),
    q.select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow(),
  ]);
  return { rows, total: Number(total.n) };
}

export async function getUpload(id: string) {
  return db
    .selectFrom("upload")
    .innerJoin("site", "site.id", "upload.site_id")
    .innerJoin("logger", "logger.id", "upload.logger_id")
    .leftJoin("person", "person.id", "upload.uploaded_by")
    .leftJoin("import_profile", "import_profile.id", "upload.profile_id")
    .select([
      "upload.id", "upload.file_name", "upload.status", "upload.created_at", "upload.size_bytes", "upload.sha256", "upload.message",
      "upload.rows_total", "upload.rows_accepted", "upload.rows_rejected", "upload.rows_duplicate", "upload.bytes_processed",
      "upload.first_reading_at", "upload.last_reading_at", "upload.finished_at", "upload.duplicate_of", "upload.uploaded_by as uploaded_by_id",
      "upload.profile_id", "upload.object_key", "upload.site_id",
      "site.code as site_code", "site.name as site_name", "site.time_zone as site_time_zone", "logger.serial as logger_serial",
      "person.name as uploaded_by", "import_profile.name as profile_name",
    ])
    .where("upload.id", "=", id)
    .executeTakeFirst();
}

export async function uploadErrors(uploadId: string, limit: number, offset: number) {
  const [rows, total] = await Promise.all([
    db
      .selectFrom("upload_error")
      .select(["row_number", "column_name", "raw_value", "reason"])
      .where("upload_id", "=", uploadId)
      .orderBy("row_number")
      .limit(limit)
      .offset(offset)
      .execute(),
    db.selectFrom("upload_error").select((eb) => eb.fn.countAll<number>().as("n")).where("upload_id", "=", uploadId).executeTakeFirstOrThrow(),
  ]);
  return { rows, total: Number(total.n) };
}

/** All error rows of an upload for the CSV report (at most MAX_STORED_ERRORS, so one query). */
export async function allUploadErrors(uploadId: string) {
  return db
    .selectFrom("upload_error")
    .select(["row_number", "column_name", "raw_value", "reason"])
    .where("upload_id", "=", uploadId)
    .orderBy("row_number")
    .orderBy("column_name")
    .execute();
}
