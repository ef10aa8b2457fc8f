import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/photos";
import { MAX_PHOTO_BYTES, PHOTO_CONTENT_TYPES, PHOTO_KEY } from "#app/lib/visits/visit-input.ts";
import { confirmPhoto, presignPhoto, VisitRefused } from "#app/models/field-visit.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";

// JSON API for visit photos, the same pattern as logger files: presign (a short-lived PUT for one
// object key, length and type) and confirm (the PUT finished). The photo never passes through here;
// the visit form carries the object keys and the visit's save checks them again.
const presignSchema = z.object({
  intent: z.literal("presign"),
  fileName: z.string().trim().min(1, "The photo has no name").max(255, "File names are limited to 255 characters"),
  sizeBytes: z.coerce.number().int().positive("The photo is empty").max(MAX_PHOTO_BYTES, `Photos are limited to ${MAX_PHOTO_BYTES / 1048576} MB each`),
  contentType: z.enum(PHOTO_CONTENT_TYPES, { error: "Photos must be JPEG, PNG, WebP or HEIC images" }),
});

const confirmSchema = z.object({ intent: z.literal("confirm"), key: z.string().regex(PHOTO_KEY, "Unknown photo") });

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: FIELD_ROLES });
  // What the photo picker may send (the same limits the presign enforces).
  return Response.json({ ok: true, maxBytes: MAX_PHOTO_BYTES, contentTypes: PHOTO_CONTENT_TYPES }, { headers: { "Cache-Control": "no-store" } });
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: FIELD_ROLES });
  const body = Object.fromEntries(await request.formData());
  try {
    switch (body.intent) {
      case "presign": {
        const parsed = presignSchema.safeParse(body);
        if (!parsed.success) return data({ ok: false, errors: z.flattenError(parsed.error).fieldErrors }, { status: 400 });
        const { key, put } = await presignPhoto(parsed.data);
        return { ok: true, key, url: put.url, headers: put.headers, expiresAt: put.expiresAt };
      }
      case "confirm": {
        const parsed = confirmSchema.safeParse(body);
        if (!parsed.success) return data({ ok: false, errors: { key: ["Unknown photo"] } }, { status: 400 });
        return { ok: true, ...(await confirmPhoto(parsed.data.key)) };
      }
      default:
        return data({ ok: false, errors: { intent: ["Unknown action"] } }, { status: 400 });
    }
  } catch (error) {
    if (error instanceof VisitRefused) return data({ ok: false, errors: { [error.field ?? "photo"]: [error.message] } }, { status: error.status });
    if (error instanceof RangeError) return data({ ok: false, errors: { photo: [error.message] } }, { status: 400 });
    throw error;
  }
}
