import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sample";
import { ionFormula, storedLabCheck } from "#app/lib/lab/analysis-input.ts";
import { IONS, type IonName } from "#app/lib/water/index.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { listAuditEvents } from "#app/models/audit.server.ts";
import { deleteLabSample, findLabSample } from "#app/models/lab-sample.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { formatEc, formatMgPerL, formatPH } from "./+shared/format.ts";
import { entrySites, sampleIdParam, sampleNotFound } from "./+shared/helpers.server.ts";
import { LabCaution, LabCheckReport } from "./+shared/report.tsx";
import { BackLink, Notice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `Lab check ${data.sample.siteCode} ${data.sample.sampledAt} · Ripplemark` : "Lab check · Ripplemark" },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const id = sampleIdParam(params.sampleId);
  const s = await findLabSample(id);
  if (!s) sampleNotFound();
  const check = storedLabCheck(s.results);
  if (!check) throw data("This lab sample's stored results cannot be read.", { status: 500 });
  const [events, sites] = await Promise.all([listAuditEvents("lab_sample", id), entrySites()]);
  const siteCodes = new Map(sites.map((site) => [site.id, site.code]));
  const history = events.map((e) => ({
    id: String(e.id),
    at: formatInZone(e.at, "UTC"),
    action: e.action,
    actorName: e.actorName ?? "someone no longer listed",
    changes: e.action === "update" ? describeChanges(e.before, e.after, siteCodes) : [],
  }));
  return {
    sample: {
      id: s.id,
      siteCode: s.site_code,
      siteName: s.site_name,
      timeZone: s.site_time_zone,
      sampledAt: formatInZone(s.sampled_at, s.site_time_zone),
      labReference: s.lab_reference,
      measuredEc: s.measured_ec_us_cm,
      measuredTds: s.measured_tds_mg_l,
      pH: s.ph,
      silica: s.silica_mg_l,
      notes: s.notes,
      enteredBy: s.entered_by_name ?? "someone no longer listed",
      createdAt: formatInZone(s.created_at, "UTC"),
      updatedAt: s.updated_at.getTime() - s.created_at.getTime() > 1000 ? formatInZone(s.updated_at, "UTC") : null,
      ionCount: Object.keys(s.ions_mg_l).length,
    },
    check,
    history,
  };
}

const deleteSchema = z.object({ reason: z.string().trim().max(500).optional() });

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const id = sampleIdParam(params.sampleId);
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "delete": {
      const { reason } = deleteSchema.parse({ reason: formData.get("reason") || undefined });
      if (!(await deleteLabSample(user.id, id, reason || null))) sampleNotFound();
      throw redirect("/lab?deleted=1");
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

const SAVED = {
  created: "Lab check saved.",
  saved: "Changes saved; the checks were made again.",
  unchanged: "Nothing to save: the analysis was already like that.",
};

const HISTORY_LABELS: Record<string, string> = { create: "Entered", update: "Changed", delete: "Deleted" };

export default function LabSample({ loaderData }: Route.ComponentProps) {
  const { sample, check, history } = loaderData;
  const navigation = useNavigation();
  return (
    <div className="space-y-5">
      <BackLink to={`/lab?site=${encodeURIComponent(sample.siteCode)}`}>Lab checks at {sample.siteCode}</BackLink>
      <header className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h1>Lab check · {sample.siteCode} {sample.siteName}</h1>
          <p className="text-ink-700">
            Grab sample taken {sample.sampledAt}
            {sample.labReference ? <> · lab reference {sample.labReference}</> : null}
          </p>
        </div>
        <Link to={`/lab/${sample.id}/edit`} className="btn-quiet">Edit the analysis</Link>
      </header>
      <Notice param="saved" messages={SAVED} />
      <LabCaution />

      <section className="card" aria-labelledby="sample-report">
        <h2 id="sample-report" className="sr-only">Results</h2>
        <p className="mb-3 text-sm text-ink-500">As checked when the analysis was saved; editing it checks it again.</p>
        <LabCheckReport check={check} measuredEc={sample.measuredEc} idPrefix="result" />
      </section>

      <section className="card" aria-labelledby="sample-inputs">
        <h2 id="sample-inputs">Measured by the laboratory</h2>
        <dl className="mt-2 grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1">
          <dt className="font-semibold">EC at 25 °C</dt>
          <dd className="tabular-nums">{formatEc(sample.measuredEc)}</dd>
          <dt className="font-semibold">TDS</dt>
          <dd className="tabular-nums">{formatMgPerL(sample.measuredTds)}</dd>
          <dt className="font-semibold">pH</dt>
          <dd className="tabular-nums">{formatPH(sample.pH)}</dd>
          <dt className="font-semibold">Silica (SiO₂)</dt>
          <dd className="tabular-nums">{formatMgPerL(sample.silica)}</dd>
          <dt className="font-semibold">Ions reported</dt>
          <dd>{sample.ionCount} (concentrations in the working table above)</dd>
          <dt className="font-semibold">Notes</dt>
          <dd className="whitespace-pre-line">{sample.notes || "—"}</dd>
          <dt className="font-semibold">Entered by</dt>
          <dd>
            {sample.enteredBy}, {sample.createdAt}
            {sample.updatedAt ? `; last changed ${sample.updatedAt}` : ""}
          </dd>
        </dl>
      </section>

      <section className="card" aria-labelledby="sample-history">
        <h2 id="sample-history">Change history</h2>
        <ol className="mt-2 space-y-2">
          {history.map((e) => (
            <li key={e.id} className="border-l-2 border-ink-200 pl-3">
              <span className="font-semibold">{HISTORY_LABELS[e.action] ?? e.action}</span>
              <span className="text-ink-500"> · {e.at} · by {e.actorName}</span>
              {e.changes.length ? (
                <ul className="text-sm text-ink-700">
                  {e.changes.map((c) => (
                    <li key={c.field}>
                      {c.field}: {c.before} → {c.after}
                    </li>
                  ))}
                </ul>
              ) : null}
            </li>
          ))}
        </ol>
        <p className="mt-2 text-sm text-ink-500">Times in UTC.</p>
      </section>

      <section className="card space-y-2" aria-labelledby="sample-delete">
        <h2 id="sample-delete">Delete</h2>
        <details>
          <summary className="cursor-pointer text-brick-700 underline">Delete this lab check…</summary>
          <Form method="post" className="mt-3 space-y-3">
            <input type="hidden" name="intent" value="delete" />
            <p className="text-ink-700">
              The analysis and its checks leave the site’s records. The change history keeps the values that were entered.
            </p>
            <div>
              <label htmlFor="delete-reason" className="field-label">Reason (optional)</label>
              <input id="delete-reason" name="reason" maxLength={500} className="field-input" />
            </div>
            <button type="submit" className="btn btn-danger" disabled={navigation.state !== "idle"}>
              Delete the lab check
            </button>
          </Form>
        </details>
      </section>
    </div>
  );
}

const FIELD_LABELS: Record<string, string> = {
  sampled_at: "Sampled at (UTC)",
  lab_reference: "Lab reference",
  ions_mg_l: "Ions (mg/L)",
  measured_ec_us_cm: "Measured EC (µS/cm)",
  measured_tds_mg_l: "Measured TDS (mg/L)",
  ph: "pH",
  silica_mg_l: "Silica (mg/L)",
  notes: "Notes",
  verdict: "Overall verdict",
};

function show(value: unknown) {
  return value === null || value === undefined || value === "" ? "—" : String(value);
}

/** An audited change as lines a reader follows: one line per field, ions one by one. */
function describeChanges(before: unknown, after: unknown, siteCodes: Map<string, string>) {
  const b = (before ?? {}) as Record<string, unknown>;
  const a = (after ?? {}) as Record<string, unknown>;
  const lines: { field: string; before: string; after: string }[] = [];
  for (const key of Object.keys(a)) {
    if (key === "site_id") {
      const code = (v: unknown) => siteCodes.get(String(v)) ?? "a site no longer listed";
      lines.push({ field: "Site", before: code(b[key]), after: code(a[key]) });
      continue;
    }
    if (key === "ions_mg_l") {
      const bi = (b[key] ?? {}) as Record<string, number>;
      const ai = (a[key] ?? {}) as Record<string, number>;
      for (const ion of new Set([...Object.keys(bi), ...Object.keys(ai)])) {
        if (bi[ion] === ai[ion]) continue;
        const label = ion in IONS ? `${ionFormula(ion as IonName)} (mg/L)` : ion;
        lines.push({ field: label, before: show(bi[ion]), after: show(ai[ion]) });
      }
      continue;
    }
    lines.push({ field: FIELD_LABELS[key] ?? key, before: show(b[key]), after: show(a[key]) });
  }
  return lines;
}
