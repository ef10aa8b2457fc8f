import { data, Link, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/profile";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { findProfile, parseSettings } from "#app/models/import-profile.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { readUploadSample, requireVisibleUpload } from "../uploads/+shared/upload-access.server.ts";
import { ProfileEditor } from "./+shared/profile-editor.tsx";
import { saveProfileAction } from "./+shared/save-profile.server.ts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.profile.name ?? "Import profile"} · Ripplemark` }];

async function requireProfile(profileId: string | undefined) {
  const id = z.uuid().safeParse(profileId);
  if (!id.success) throw data("No such import profile.", { status: 404 });
  const profile = await findProfile(id.data);
  if (!profile) throw data("No such import profile.", { status: 404 });
  return profile;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const profile = await requireProfile(params.profileId);
  const uploadId = new URL(request.url).searchParams.get("upload");
  let upload: { id: string; fileName: string } | null = null;
  let sample = null;
  let sampleProblem: string | null = null;
  if (uploadId) {
    // "Fix the profile" on an upload page: edit with that stored file as the sample.
    const row = await requireVisibleUpload(user, uploadId);
    upload = { id: row.id, fileName: row.file_name };
    try {
      sample = await readUploadSample(row);
    } catch {
      sampleProblem = "The stored file could not be read just now. Choose the file from this computer instead, or try again in a minute.";
    }
  }
  return {
    profile: {
      id: profile.id,
      name: profile.name,
      settings: parseSettings(profile.settings),
      createdBy: profile.createdBy,
      created: formatInZone(profile.created_at, "UTC"),
      updated: formatInZone(profile.updated_at, "UTC"),
    },
    upload,
    sample,
    sampleProblem,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const profile = await requireProfile(params.profileId);
  return saveProfileAction(request, user, profile.id);
}

const SAVED: Record<string, string> = {
  created: "The profile is saved. Uploads with this header line will pick it.",
  updated: "Your changes are saved. Uploads already processed keep their readings until you process them again.",
};

export default function ImportProfile({ loaderData, actionData }: Route.ComponentProps) {
  const { profile, upload, sample, sampleProblem } = loaderData;
  const [params] = useSearchParams();
  const saved = SAVED[params.get("saved") ?? ""];
  return (
    <div className="space-y-4">
      <p>
        <Link to={upload ? `/uploads/${upload.id}` : "/import-profiles"} className="text-sm text-lake-700 underline">
          <span aria-hidden="true">← </span>
          {upload ? `Back to ${upload.fileName}` : "Import profiles"}
        </Link>
      </p>
      <div>
        <h1>{profile.name}</h1>
        <p className="text-sm text-ink-500">
          Created {profile.created}
          {profile.createdBy ? ` by ${profile.createdBy}` : ""} · last changed {profile.updated}
        </p>
      </div>
      {saved ? (
        <p role="status" className="rounded border border-reed-600 bg-reed-100 px-3 py-2 text-reed-700">
          <span aria-hidden="true">✓ </span>
          {saved}
        </p>
      ) : null}
      {sampleProblem ? <p role="alert" className="caution">{sampleProblem}</p> : null}
      {!profile.settings ? (
        <p role="alert" className="caution">The stored settings of this profile no longer fit the current rules. Choose a sample file and set the columns again.</p>
      ) : null}
      <ProfileEditor
        key={`${profile.id}-${upload?.id ?? ""}`}
        formId="profile-edit"
        action={`/import-profiles/${profile.id}`}
        initialName={profile.name}
        initialProfile={profile.settings}
        sample={sample}
        allowPickSample
        hidden={upload ? { upload: upload.id } : undefined}
        submitLabel="Save the changes"
        serverResult={actionData?.result}
      />
    </div>
  );
}
