import { useEffect } from "react";
import { data, Form, Link, redirect, useNavigation, useRevalidator, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/upload";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { listProfileChoices } from "#app/models/import-profile.server.ts";
import { reprocessUpload, UploadRefused, uploadErrors } from "#app/models/upload.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { pageWindow, parseTableParams } from "#app/utils/table-params.ts";
import { countsText, formatBytes, formatAtSite, ProgressBar, rangeText, StatusBadge } from "./+shared/status-views.tsx";
import { requireVisibleUpload } from "./+shared/upload-access.server.ts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.upload.fileName ?? "Upload"} · Ripplemark` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const upload = await requireVisibleUpload(user, params.uploadId);
  const search = new URL(request.url).searchParams;
  const tableParams = parseTableParams(search, { sortable: ["row"] as const, defaultSort: "row" });
  let errors = await uploadErrors(upload.id, tableParams.pageSize, (tableParams.page - 1) * tableParams.pageSize);
  const win = pageWindow(tableParams, errors.total);
  if (win.page !== tableParams.page) errors = await uploadErrors(upload.id, win.limit, win.offset);
  const profiles = await listProfileChoices();
  const chosen = z.uuid().safeParse(search.get("profile"));
  return {
    upload: {
      id: upload.id,
      fileName: upload.file_name,
      status: upload.status,
      message: upload.message,
      site: `${upload.site_code} · ${upload.site_name}`,
      logger: upload.logger_serial,
      profile: upload.profile_id ? { id: upload.profile_id, name: upload.profile_name ?? "(removed)" } : null,
      uploadedBy: upload.uploaded_by,
      // Times at the site's clock, as the logger's readings are read there.
      uploadedAt: formatAtSite(upload.created_at, upload.site_time_zone)!,
      finishedAt: formatAtSite(upload.finished_at, upload.site_time_zone),
      sha256: upload.sha256,
      size: formatBytes(Number(upload.size_bytes)),
      sizeBytes: Number(upload.size_bytes),
      bytesProcessed: Number(upload.bytes_processed),
      rowsTotal: upload.rows_total,
      rowsAccepted: upload.rows_accepted,
      rowsRejected: upload.rows_rejected,
      rowsDuplicate: upload.rows_duplicate,
      range: rangeText(upload.first_reading_at, upload.last_reading_at, upload.site_time_zone),
      duplicateOf: upload.duplicate_of,
    },
    errors: errors.rows.map((e) => ({ row: e.row_number, column: e.column_name, value: e.raw_value, reason: e.reason })),
    errorTable: { ...tableParams, page: win.page, total: errors.total, pageCount: win.pageCount },
    profiles: profiles.map((p) => ({ id: p.id, name: p.name })),
    chosenProfile: chosen.success && profiles.some((p) => p.id === chosen.data) ? chosen.data : (upload.profile_id ?? ""),
  };
}

const reprocessSchema = z.object({
  profileId: z.uuid({ error: "Choose an import profile" }),
});

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const upload = await requireVisibleUpload(user, params.uploadId);
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "reprocess": {
      const parsed = reprocessSchema.safeParse({ profileId: formData.get("profileId") || undefined });
      if (!parsed.success) return data({ error: parsed.error.issues[0].message }, { status: 400 });
      try {
        await reprocessUpload(upload.id, parsed.data.profileId);
      } catch (error) {
        if (error instanceof UploadRefused) return data({ error: error.message }, { status: error.status });
        throw error;
      }
      throw redirect(`/uploads/${upload.id}?saved=reprocess`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

type ErrorRow = Route.ComponentProps["loaderData"]["errors"][number];

const errorColumns: Column<ErrorRow>[] = [
  { key: "row", header: "Line", numeric: true, rowHeader: true, render: (e) => e.row.toLocaleString("en-GB") },
  { key: "column", header: "Column", render: (e) => e.column },
  // Values come from the file: shown as text, never as markup.
  { key: "value", header: "Value", render: (e) => <code className="whitespace-pre-wrap break-all text-sm">{e.value}</code> },
  { key: "reason", header: "Why it was rejected", render: (e) => e.reason },
];

const LIVE: string[] = ["queued", "processing"];

export default function Upload({ loaderData, actionData }: Route.ComponentProps) {
  const { upload, errors, errorTable, profiles, chosenProfile } = loaderData;
  const revalidator = useRevalidator();
  const navigation = useNavigation();
  const [params] = useSearchParams();
  const live = LIVE.includes(upload.status);

  // While the worker has it, refresh the page's data every 1.5 s.
  useEffect(() => {
    if (!live) return;
    const timer = setInterval(() => {
      if (revalidator.state === "idle" && document.visibilityState === "visible") void revalidator.revalidate();
    }, 1500);
    return () => clearInterval(timer);
  }, [live, revalidator]);

  const percent = upload.sizeBytes > 0 ? (upload.bytesProcessed / upload.sizeBytes) * 100 : 0;
  const canReprocess = upload.status === "done" || upload.status === "failed";
  const busy = navigation.state !== "idle";

  return (
    <div className="space-y-5">
      <p>
        <Link to="/uploads" className="text-sm text-lake-700 underline">
          <span aria-hidden="true">← </span>Uploads
        </Link>
      </p>
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="break-all">{upload.fileName}</h1>
        <StatusBadge status={upload.status} />
      </div>

      {params.get("saved") === "reprocess" && live ? (
        <p role="status" className="rounded border border-lake-600 bg-lake-100 px-3 py-2 text-lake-700">
          The file is queued to be processed again. Its earlier readings are replaced when processing finishes.
        </p>
      ) : null}

      <section className="card space-y-3" aria-labelledby="status-title">
        <h2 id="status-title">Status</h2>
        <div aria-live="polite" className="space-y-2">
          {live ? (
            <>
              <ProgressBar
                label={`Processing of ${upload.fileName}`}
                percent={upload.status === "queued" ? 0 : percent}
                text={upload.status === "queued" ? "Queued" : `Processing ${Math.floor(percent)}%`}
              />
              <p>{upload.status === "queued" ? "Waiting for the worker." : `${upload.rowsTotal.toLocaleString("en-GB")} rows read so far.`}</p>
            </>
          ) : null}
          {upload.status === "done" ? <p data-testid="upload-counts">{countsText(upload)}</p> : null}
          {upload.message ? (
            <p className={upload.status === "failed" ? "rounded border border-brick-600 bg-brick-100 px-3 py-2 text-brick-700" : "text-ink-700"}>
              {upload.message}
            </p>
          ) : null}
          {upload.status === "duplicate" && upload.duplicateOf ? (
            <p>
              <Link to={`/uploads/${upload.duplicateOf}`} className="text-lake-700 underline">
                Open the earlier upload
              </Link>
            </p>
          ) : null}
        </div>
        <dl className="grid gap-x-6 gap-y-2 sm:grid-cols-[max-content_1fr]">
          <Term label="Site">{upload.site}</Term>
          <Term label="Logger">{upload.logger}</Term>
          <Term label="Import profile">
            {upload.profile ? (
              <Link to={`/import-profiles/${upload.profile.id}`} className="text-lake-700 underline">
                {upload.profile.name}
              </Link>
            ) : (
              "None chosen"
            )}
          </Term>
          <Term label="Uploaded">
            {upload.uploadedAt}
            {upload.uploadedBy ? ` by ${upload.uploadedBy}` : ""}
          </Term>
          {upload.finishedAt ? <Term label="Finished">{upload.finishedAt}</Term> : null}
          <Term label="Size">{upload.size}</Term>
          <Term label="SHA-256">
            <code className="break-all text-sm">{upload.sha256}</code>
          </Term>
          <Term label="Rows read">{upload.rowsTotal.toLocaleString("en-GB")}</Term>
          <Term label="Readings stored">{upload.rowsAccepted.toLocaleString("en-GB")}</Term>
          <Term label="Rows rejected">{upload.rowsRejected.toLocaleString("en-GB")}</Term>
          <Term label="Already stored (skipped)">{upload.rowsDuplicate.toLocaleString("en-GB")}</Term>
          <Term label="Time covered">{upload.range ?? "—"}</Term>
        </dl>
      </section>

      <section id="process-again" className="card space-y-3" aria-labelledby="again-title">
        <h2 id="again-title">Process again</h2>
        <p className="max-w-3xl text-ink-700">
          After fixing the profile, or with another one, read the stored file again. Only this upload's own readings are
          replaced; readings from other uploads stay as they are.
        </p>
        <Form method="post" className="flex flex-wrap items-end gap-3">
          <input type="hidden" name="intent" value="reprocess" />
          <div>
            <label htmlFor="reprocess-profile" className="field-label">Import profile</label>
            <select
              id="reprocess-profile"
              name="profileId"
              defaultValue={chosenProfile}
              key={chosenProfile}
              className="field-input"
              aria-invalid={actionData?.error ? true : undefined}
              aria-describedby={actionData?.error ? "reprocess-error" : undefined}
            >
              <option value="">Choose…</option>
              {profiles.map((p) => (
                <option key={p.id} value={p.id}>{p.name}</option>
              ))}
            </select>
          </div>
          <button type="submit" className="btn" disabled={!canReprocess || busy}>
            Process again
          </button>
          {upload.profile ? (
            <Link to={`/import-profiles/${upload.profile.id}?upload=${upload.id}`} className="btn-quiet">
              Fix the profile
            </Link>
          ) : null}
          <Link to={`/import-profiles/new?upload=${upload.id}`} className="btn-quiet">
            New profile from this file
          </Link>
        </Form>
        {!canReprocess ? (
          <p className="text-sm text-ink-500">
            {live ? "Available when the current processing has finished." : "Only files that were processed (done or failed) can be processed again."}
          </p>
        ) : null}
        {actionData?.error ? (
          <p id="reprocess-error" role="alert" className="field-error">
            {actionData.error}
          </p>
        ) : null}
      </section>

      <section className="space-y-2" aria-labelledby="errors-title">
        <div className="flex flex-wrap items-center justify-between gap-3">
          <h2 id="errors-title">Rejected rows</h2>
          {errorTable.total > 0 ? (
            <a href={`/api/uploads/${upload.id}/errors.csv`} className="btn-quiet" download>
              Download the rejected rows (CSV)
            </a>
          ) : null}
        </div>
        <DataTable
          columns={errorColumns}
          rows={errors}
          rowKey={(e) => `${e.row}-${e.column}-${e.reason}`}
          table={errorTable}
          caption="Rejected values"
          empty={upload.status === "done" ? "No row was rejected." : "No rejected rows recorded."}
        />
      </section>
    </div>
  );
}

function Term({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <>
      <dt className="font-semibold text-ink-700">{label}</dt>
      <dd>{children}</dd>
    </>
  );
}
