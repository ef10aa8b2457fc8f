import { Link } from "react-router";
import type { Route } from "./+types/profile-new";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { readUploadSample, requireVisibleUpload } from "../uploads/+shared/upload-access.server.ts";
import { ProfileEditor } from "./+shared/profile-editor.tsx";
import { saveProfileAction } from "./+shared/save-profile.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "New import profile · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const uploadId = new URL(request.url).searchParams.get("upload");
  if (!uploadId) return { upload: null, sample: null, sampleProblem: null };
  // "Make a profile from this file" on an upload page: the editor works on the stored file's start.
  const upload = await requireVisibleUpload(user, uploadId);
  try {
    return { upload: { id: upload.id, fileName: upload.file_name }, sample: await readUploadSample(upload), sampleProblem: null };
  } catch {
    return {
      upload: { id: upload.id, fileName: upload.file_name },
      sample: null,
      sampleProblem: "The stored file could not be read just now. Choose the file from this computer instead, or try again in a minute.",
    };
  }
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  return saveProfileAction(request, user);
}

export default function NewImportProfile({ loaderData, actionData }: Route.ComponentProps) {
  const { upload, sample, sampleProblem } = loaderData;
  return (
    <div className="space-y-4">
      <p>
        <Link to={upload ? `/uploads/${upload.id}` : "/import-profiles"} className="text-sm text-lake-700 underline">
          <span aria-hidden="true">← </span>
          {upload ? `Back to ${upload.fileName}` : "Import profiles"}
        </Link>
      </p>
      <h1>New import profile</h1>
      <p className="max-w-3xl text-ink-700">
        Tell Ripplemark how to read one layout of logger file. Start from a sample file: the layout and the columns are
        guessed from it, and the preview shows how its first rows will be read.
      </p>
      {sampleProblem ? <p role="alert" className="caution">{sampleProblem}</p> : null}
      <ProfileEditor
        formId="profile-new"
        action="/import-profiles/new"
        initialName=""
        initialProfile={null}
        sample={sample}
        allowPickSample
        hidden={upload ? { upload: upload.id } : undefined}
        submitLabel="Save the profile"
        serverResult={actionData?.result}
      />
    </div>
  );
}
