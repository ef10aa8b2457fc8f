import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/new";
import { labEntrySchema, labSampleColumns } from "#app/lib/lab/analysis-input.ts";
import { LAB_CSV_MAX_BYTES, parseLabCsv, type LabCsvRowError } from "#app/lib/lab/csv.ts";
import { createLabSamples } from "#app/models/lab-sample.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { CsvUpload, uploadSchema } from "./+shared/csv-upload.tsx";
import { LabEntryForm } from "./+shared/entry-form.tsx";
import { entrySites } from "./+shared/helpers.server.ts";
import { LabCaution } from "./+shared/report.tsx";
import { BackLink } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "New lab check · Ripplemark" }];

const NO_ROW_ERRORS: LabCsvRowError[] = [];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  return { sites: await entrySites() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  // Refuse an oversized upload before reading it into memory (the file limit plus room for the form).
  if (Number(request.headers.get("Content-Length") ?? 0) > LAB_CSV_MAX_BYTES + 64_000) {
    throw data("The upload is too large.", { status: 413 });
  }
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "save": {
      const sites = await entrySites();
      const submission = parseWithZod(formData, { schema: labEntrySchema(sites) });
      if (submission.status !== "success") return data({ intent: "save" as const, result: submission.reply() }, { status: 400 });
      const v = submission.value;
      const { check, columns } = labSampleColumns(v);
      const [id] = await createLabSamples(user.id, [{ ...columns, site_id: v.siteId, sampled_at: v.sampledAtInstant, results: check }], "form");
      throw redirect(`/lab/${id}?saved=created`);
    }
    case "upload": {
      const submission = parseWithZod(formData, { schema: uploadSchema });
      if (submission.status !== "success") {
        return data({ intent: "upload" as const, result: submission.reply(), rowErrors: NO_ROW_ERRORS, errorCount: 0 }, { status: 400 });
      }
      const sites = await entrySites();
      const parsed = parseLabCsv(await submission.value.file.text(), sites);
      if (!parsed.ok) {
        return data(
          { intent: "upload" as const, result: submission.reply({ formErrors: [parsed.message] }), rowErrors: parsed.errors, errorCount: parsed.errorCount },
          { status: 400 },
        );
      }
      const samples = parsed.rows.map((row) => {
        const { check, columns } = labSampleColumns(row.values);
        return { ...columns, site_id: row.siteId, sampled_at: row.sampledAt, results: check };
      });
      const ids = await createLabSamples(user.id, samples, "csv");
      throw redirect(`/lab?imported=${ids.length}`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

export default function NewLabCheck({ loaderData, actionData }: Route.ComponentProps) {
  const { sites } = loaderData;
  return (
    <div className="space-y-5">
      <BackLink to="/lab">All lab checks</BackLink>
      <header className="space-y-2">
        <h1>New lab check</h1>
        <p className="max-w-3xl text-ink-700">
          Enter the laboratory’s analysis of a grab sample. Ripplemark calculates the conductivity from the ions and
          checks the analysis against itself: the ion balance, the TDS and EC ratios. Or import several analyses at
          once from a CSV file below.
        </p>
        <LabCaution />
      </header>
      {sites.length === 0 ? (
        <p className="card">There are no sites yet. An administrator adds them first.</p>
      ) : (
        <LabEntryForm
          sites={sites}
          lastResult={actionData?.intent === "save" ? actionData.result : undefined}
          submitLabel="Save the lab check"
        />
      )}
      <CsvUpload
        lastResult={actionData?.intent === "upload" ? actionData.result : undefined}
        rowErrors={actionData?.intent === "upload" ? actionData.rowErrors : undefined}
        errorCount={actionData?.intent === "upload" ? actionData.errorCount : undefined}
      />
    </div>
  );
}
