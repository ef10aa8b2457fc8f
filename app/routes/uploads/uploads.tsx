import { useCallback } from "react";
import { Link, useRevalidator } from "react-router";
import type { Route } from "./+types/uploads";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { uploadChoices } from "#app/models/upload-choices.server.ts";
import { listUploads } from "#app/models/upload.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { pageWindow, parseTableParams } from "#app/utils/table-params.ts";
import { refusePost } from "../import-profiles/+shared/refuse-post.server.ts";
import { formatAtSite, StatusBadge } from "./+shared/status-views.tsx";
import { UploadQueue } from "./+shared/upload-queue.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Uploads · Ripplemark" }];

const UPLOAD_SORT_KEYS = ["created_at", "file_name", "status"] as const;

export async function action({ request }: Route.ActionArgs) {
  // Files go to /api/uploads; this page takes no form posts.
  return refusePost(request);
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const params = parseTableParams(new URL(request.url).searchParams, {
    sortable: UPLOAD_SORT_KEYS,
    defaultSort: "created_at",
    defaultDir: "desc",
  });
  // Technicians see their own uploads; officers and administrators everyone's.
  const uploadedBy = user.role === "technician" ? user.id : undefined;
  const fetchPage = (page: number) =>
    listUploads({ uploadedBy, sort: params.sort, dir: params.dir, limit: params.pageSize, offset: (page - 1) * params.pageSize });
  let result = await fetchPage(params.page);
  const win = pageWindow(params, result.total);
  if (win.page !== params.page) result = await fetchPage(win.page);
  const choices = await uploadChoices(user.id);
  return {
    ...choices,
    showUploader: user.role !== "technician",
    recent: result.rows.map((u) => ({
      id: u.id,
      fileName: u.file_name,
      status: u.status,
      created: formatAtSite(u.created_at, u.site_time_zone)!,
      site: u.site_code,
      logger: u.logger_serial,
      uploadedBy: u.uploaded_by,
      accepted: u.rows_accepted,
      rejected: u.rows_rejected,
    })),
    table: { ...params, page: win.page, total: result.total, pageCount: win.pageCount },
  };
}

type RecentRow = Route.ComponentProps["loaderData"]["recent"][number];

function recentColumns(showUploader: boolean): Column<RecentRow>[] {
  return [
    {
      key: "file_name",
      header: "File",
      sortable: true,
      rowHeader: true,
      render: (u) => (
        <Link to={`/uploads/${u.id}`} className="break-all font-semibold text-lake-700 underline">
          {u.fileName}
        </Link>
      ),
    },
    { key: "site", header: "Site", render: (u) => u.site },
    { key: "logger", header: "Logger", render: (u) => u.logger },
    { key: "status", header: "Status", sortable: true, render: (u) => <StatusBadge status={u.status} /> },
    { key: "accepted", header: "Readings stored", numeric: true, render: (u) => u.accepted.toLocaleString("en-GB") },
    { key: "rejected", header: "Rows rejected", numeric: true, render: (u) => u.rejected.toLocaleString("en-GB") },
    ...(showUploader ? [{ key: "uploadedBy", header: "Uploaded by", render: (u: RecentRow) => u.uploadedBy ?? "—" }] : []),
    { key: "created_at", header: "Uploaded", sortable: true, firstDir: "desc", render: (u) => u.created },
  ];
}

export default function Uploads({ loaderData }: Route.ComponentProps) {
  const { sites, loggers, profiles, recent, table, showUploader } = loaderData;
  const revalidator = useRevalidator();
  const refresh = useCallback(() => {
    if (revalidator.state === "idle") void revalidator.revalidate();
  }, [revalidator]);
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1>Uploads</h1>
          <p className="max-w-3xl text-ink-700">
            Bring in logger files from a round. Each file is checked in this browser first: the logger and site are filled
            in when the file names a known serial, and the import profile when its header line matches a saved one.
          </p>
        </div>
        <Link to="/import-profiles" className="btn-quiet">
          Import profiles
        </Link>
      </div>
      <UploadQueue sites={sites} loggers={loggers} profiles={profiles} onFinished={refresh} />
      <section aria-labelledby="recent-title" className="space-y-2">
        <h2 id="recent-title">{showUploader ? "Recent uploads" : "Your recent uploads"}</h2>
        <DataTable
          columns={recentColumns(showUploader)}
          rows={recent}
          rowKey={(u) => u.id}
          table={table}
          caption="Uploads"
          empty="No uploads yet."
        />
      </section>
    </div>
  );
}
