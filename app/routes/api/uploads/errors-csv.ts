import { data } from "react-router";
import type { Route } from "./+types/errors-csv";
import { csvSafeCell, toCsvLine } from "#app/lib/import/csv.ts";
import { allUploadErrors, getUpload } from "#app/models/upload.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";

// The error report of one upload as CSV. Every cell is neutralised against spreadsheet formula
// injection, so opening it in a spreadsheet never runs a value from the logger file.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const upload = await getUpload(params.uploadId);
  if (!upload) throw data("No such upload.", { status: 404 });
  if (user.role === "technician" && upload.uploaded_by_id !== user.id) throw data("This upload belongs to someone else.", { status: 403 });
  const rows = await allUploadErrors(upload.id);
  const lines = [
    toCsvLine(["file", "row", "column", "value", "reason"]),
    ...rows.map((r) => toCsvLine([upload.file_name, String(r.row_number), r.column_name, r.raw_value, r.reason].map(csvSafeCell))),
  ];
  const name = `${upload.file_name.replace(/\.[^.]+$/, "").replace(/[^\w.-]+/g, "_")}-rejected-rows.csv`;
  return new Response("\uFEFF" + lines.join("\r\n") + "\r\n", {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${name}"`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "no-store",
    },
  });
}
