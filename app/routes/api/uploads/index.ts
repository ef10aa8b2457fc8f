import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/index";
import { confirmUpload, duplicateMessage, startUpload, UploadRefused, uploadStatuses } from "#app/models/upload.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";

// JSON API for the uploads page: presign (register a file and get a short-lived PUT URL), confirm
// (the PUT finished: queue the ingest) and status polling. The file body never passes through here.
const presignSchema = z.object({
  intent: z.literal("presign"),
  fileName: z.string().trim().min(1, "The file has no name").max(255, "File names are limited to 255 characters"),
  sizeBytes: z.coerce.number().int().positive("The file is empty"),
  contentType: z.string().max(100).default("text/csv"),
  sha256: z.string().regex(/^[0-9a-f]{64}$/, "The file's SHA-256 is missing"),
  siteId: z.string().uuid("Choose the site"),
  loggerId: z.string().uuid("Choose the logger"),
  profileId: z.union([z.string().uuid(), z.literal("")]).transform((v) => v || null),
});

const confirmSchema = z.object({ intent: z.literal("confirm"), uploadId: z.string().uuid() });

/** S3 unreachable or failing on its side (no answer, or a 5xx): the person can simply retry. */
function isStorageUnavailable(error: unknown) {
  const e = error as { name?: string; code?: string; $metadata?: { httpStatusCode?: number }; cause?: { code?: string } };
  const status = e?.$metadata?.httpStatusCode;
  if (status !== undefined) return status >= 500;
  const code = e?.code ?? e?.cause?.code;
  return (
    e?.name === "TimeoutError" ||
    e?.name === "TypeError" ||
    ["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "ENOTFOUND", "EAI_AGAIN"].includes(code ?? "")
  );
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const ids = (new URL(request.url).searchParams.get("ids") ?? "").split(",").filter((id) => z.string().uuid().safeParse(id).success).slice(0, 100);
  // Technicians follow only their own uploads (as on the upload pages); others' ids are left out.
  const rows = (await uploadStatuses(ids)).filter((r) => user.role !== "technician" || r.uploaded_by === user.id);
  return Response.json(
    {
      uploads: rows.map((r) => ({
        id: r.id,
        status: r.status,
        message: r.message,
        sizeBytes: Number(r.size_bytes),
        bytesProcessed: Number(r.bytes_processed),
        rowsTotal: r.rows_total,
        rowsAccepted: r.rows_accepted,
        rowsRejected: r.rows_rejected,
        rowsDuplicate: r.rows_duplicate,
        firstReadingAt: r.first_reading_at,
        lastReadingAt: r.last_reading_at,
        siteTimeZone: r.site_time_zone,
        duplicateOf: r.duplicate_of,
      })),
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const body = Object.fromEntries(await request.formData());
  try {
    switch (body.intent) {
      case "presign": {
        const parsed = presignSchema.safeParse(body);
        if (!parsed.success) {
          return data({ ok: false, errors: z.flattenError(parsed.error).fieldErrors }, { status: 400 });
        }
        const result = await startUpload(user, parsed.data);
        if ("duplicateOf" in result && result.duplicateOf) {
          return data(
            { ok: false, duplicate: { uploadId: result.duplicateOf.id, message: duplicateMessage(result.duplicateOf) } },
            { status: 409 },
          );
        }
        return { ok: true, uploadId: result.uploadId, url: result.put.url, headers: result.put.headers, expiresAt: result.put.expiresAt };
      }
      case "confirm": {
        const parsed = confirmSchema.safeParse(body);
        if (!parsed.success) return data({ ok: false, errors: { uploadId: ["Missing upload id"] } }, { status: 400 });
        return { ok: true, ...(await confirmUpload(user, parsed.data.uploadId)) };
      }
      default:
        return data({ ok: false, errors: { intent: ["Unknown action"] } }, { status: 400 });
    }
  } catch (error) {
    if (error instanceof UploadRefused) {
      return data({ ok: false, errors: { [error.field ?? "file"]: [error.message] } }, { status: error.status });
    }
    if (error instanceof RangeError) return data({ ok: false, errors: { file: [error.message] } }, { status: 400 });
    if (isStorageUnavailable(error)) {
      return data(
        { ok: false, retryable: true, errors: { file: ["File storage is not answering just now. Nothing was lost: try again in a minute."] } },
        { status: 503 },
      );
    }
    throw error;
  }
}
