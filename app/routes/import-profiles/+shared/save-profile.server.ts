import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import { z } from "zod";
import { createProfile, saveProfile } from "#app/models/import-profile.server.ts";
import type { SessionUser } from "#app/models/person.server.ts";
import { profileFormSchema } from "./profile-form.ts";

const NAME_TAKEN = "Another profile already has this name: choose another";

/**
 * The editor's save, for a new profile (`profileId` undefined) or an existing one. Invalid input
 * and a taken name answer 400 with the errors on their fields. `respond=json` (the editor opened
 * from the uploads page) answers with the saved profile instead of redirecting.
 */
export async function saveProfileAction(request: Request, user: SessionUser, profileId?: string) {
  const formData = await request.formData();
  if (formData.get("intent") !== "save") throw data("Unknown action.", { status: 400 });
  const submission = parseWithZod(formData, { schema: profileFormSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply(), saved: null }, { status: 400 });
  }
  const values = submission.value;
  let saved: { id: string; name: string; headerSignature: string };
  if (profileId) {
    const outcome = await saveProfile(user.id, profileId, values);
    if (outcome === "missing") throw data("No such import profile.", { status: 404 });
    if (outcome === "taken") {
      return data({ result: submission.reply({ fieldErrors: { name: [NAME_TAKEN] } }), saved: null }, { status: 400 });
    }
    saved = { id: profileId, name: values.name, headerSignature: values.headerSignature };
  } else {
    const row = await createProfile(user.id, values);
    if (!row) return data({ result: submission.reply({ fieldErrors: { name: [NAME_TAKEN] } }), saved: null }, { status: 400 });
    saved = { id: row.id, name: row.name, headerSignature: row.header_signature };
  }

  if (formData.get("respond") === "json") return { result: submission.reply(), saved };
  // Opened from an upload ("Fix the profile"): back to it, with the profile chosen for processing again.
  const upload = z.uuid().safeParse(formData.get("upload"));
  if (upload.success) throw redirect(`/uploads/${upload.data}?profile=${saved.id}#process-again`);
  throw redirect(`/import-profiles/${saved.id}?saved=${profileId ? "updated" : "created"}`);
}
