import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/edit";
import { FORM_IONS, labEntrySchema, labSampleColumns, type FormIon } from "#app/lib/lab/analysis-input.ts";
import { formatInZone, toWallTime } from "#app/lib/zoned-time.ts";
import { findLabSample, updateLabSample } from "#app/models/lab-sample.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { LabEntryForm, type EntryDefaults } from "./+shared/entry-form.tsx";
import { entrySites, sampleIdParam, sampleNotFound } from "./+shared/helpers.server.ts";
import { LabCaution } from "./+shared/report.tsx";
import { BackLink } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `Edit lab check ${data.siteCode} ${data.sampledAtText} · Ripplemark` : "Edit lab check · Ripplemark" },
];

const text = (n: number | null) => (n === null ? undefined : String(n));

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const id = sampleIdParam(params.sampleId);
  const [s, sites] = await Promise.all([findLabSample(id), entrySites()]);
  if (!s) sampleNotFound();
  const ions: Partial<Record<FormIon, string>> = {};
  for (const ion of FORM_IONS) {
    const v = s.ions_mg_l[ion];
    if (typeof v === "number") ions[ion] = String(v);
  }
  const defaults: EntryDefaults = {
    siteId: s.site_id,
    sampledAt: toWallTime(s.sampled_at, s.site_time_zone),
    labReference: s.lab_reference ?? undefined,
    ions,
    measuredEc: text(s.measured_ec_us_cm),
    measuredTds: text(s.measured_tds_mg_l),
    pH: text(s.ph),
    silica: text(s.silica_mg_l),
    notes: s.notes,
  };
  return { id, siteCode: s.site_code, sampledAtText: formatInZone(s.sampled_at, s.site_time_zone), defaults, sites };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const id = sampleIdParam(params.sampleId);
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "save": {
      const sites = await entrySites();
      const submission = parseWithZod(formData, { schema: labEntrySchema(sites) });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const v = submission.value;
      const { check, columns } = labSampleColumns(v);
      const outcome = await updateLabSample(user.id, id, { ...columns, site_id: v.siteId, sampled_at: v.sampledAtInstant, results: check });
      if (outcome === "missing") sampleNotFound();
      throw redirect(`/lab/${id}?saved=${outcome}`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

export default function EditLabCheck({ loaderData, actionData }: Route.ComponentProps) {
  const { id, siteCode, sampledAtText, defaults, sites } = loaderData;
  return (
    <div className="space-y-5">
      <BackLink to={`/lab/${id}`}>Back to the lab check</BackLink>
      <header className="space-y-2">
        <h1>Edit lab check · {siteCode}, {sampledAtText}</h1>
        <p className="max-w-3xl text-ink-700">Saving checks the analysis again and replaces the stored results; the change history keeps the earlier values.</p>
        <LabCaution />
      </header>
      <LabEntryForm sites={sites} lastResult={actionData?.result} defaultValue={defaults} submitLabel="Save changes" />
    </div>
  );
}
