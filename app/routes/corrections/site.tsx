import type { SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Link } from "react-router";
import type { Route } from "./+types/site";
import { describeBands, SC_GRADE_BANDS } from "#app/lib/quality/grades.ts";
import { addSchema, adjustSchema, approvePeriodSchema, decideSchema, reopenPeriodSchema } from "#app/lib/visits/review-input.ts";
import { addCorrection, CorrectionRefused, RecordLocked, reviewCorrection } from "#app/models/correction.server.ts";
import { approvePeriod, PeriodRefused, reopenPeriod } from "#app/models/record-period.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { AddCorrectionForm, CorrectionCard, PeriodsTable } from "./+shared/review-parts.tsx";
import { loadReview, siteByCode } from "./+shared/review.server.ts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Corrections · ${data?.site.code ?? "Site"} · Ripplemark` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const site = await siteByCode(params.siteCode);
  return { site: { code: site.code, name: site.name }, ...(await loadReview(site)) };
}

type Replies = { reply: (options?: { resetForm?: boolean; fieldErrors?: Record<string, string[]>; formErrors?: string[] }) => SubmissionResult<string[]> };

/** Runs one review change; model refusals come back as errors on the form that sent it. */
async function run(submission: Replies, change: () => Promise<unknown>, noteField = "note") {
  try {
    await change();
    return { result: submission.reply({ resetForm: true }) };
  } catch (e) {
    if (e instanceof RecordLocked) return data({ result: submission.reply({ fieldErrors: { [noteField]: [e.message] } }) }, { status: 409 });
    if (e instanceof CorrectionRefused || e instanceof PeriodRefused) {
      if (e.status === 404) throw data(e.message, { status: 404 });
      const field = e instanceof CorrectionRefused ? e.field : undefined;
      const reply = field ? submission.reply({ fieldErrors: { [field]: [e.message] } }) : submission.reply({ formErrors: [e.message] });
      return data({ result: reply }, { status: e.status });
    }
    throw e;
  }
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const site = await siteByCode(params.siteCode);
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "approve":
    case "reject": {
      const s = parseWithZod(formData, { schema: decideSchema });
      if (s.status !== "success") return data({ result: s.reply() }, { status: 400 });
      return run(s, () => reviewCorrection(user.id, site.id, s.value.correctionId, { action: s.value.intent, note: s.value.note }));
    }
    case "adjust": {
      const s = parseWithZod(formData, { schema: adjustSchema });
      if (s.status !== "success") return data({ result: s.reply() }, { status: 400 });
      const v = s.value;
      return run(s, () =>
        reviewCorrection(user.id, site.id, v.correctionId, { action: "adjust", kind: v.kind, unit: v.unit, startOffset: v.startOffset, endOffset: v.endOffset, reason: v.reason, note: v.note }),
      );
    }
    case "add": {
      const s = parseWithZod(formData, { schema: addSchema });
      if (s.status !== "success") return data({ result: s.reply() }, { status: 400 });
      const v = s.value;
      return run(s, () =>
        addCorrection(user.id, { siteId: site.id, periodId: v.periodId, kind: v.kind, unit: v.unit, startOffset: v.startOffset, endOffset: v.endOffset, reason: v.reason, note: v.note, approve: v.approve }),
      );
    }
    case "approve-period": {
      const s = parseWithZod(formData, { schema: approvePeriodSchema });
      if (s.status !== "success") return data({ result: s.reply() }, { status: 400 });
      return run(s, () => approvePeriod(user.id, s.value.periodId, site.id));
    }
    case "reopen-period": {
      const s = parseWithZod(formData, { schema: reopenPeriodSchema });
      if (s.status !== "success") return data({ result: s.reply() }, { status: 400 });
      return run(s, () => reopenPeriod(user.id, s.value.periodId, site.id, s.value.reason), "reason");
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

export default function SiteCorrections({ loaderData }: Route.ComponentProps) {
  const { site, corrections, periods, history } = loaderData;
  const proposed = corrections.filter((c) => c.status === "proposed");
  const decided = corrections.filter((c) => c.status !== "proposed");
  return (
    <div className="space-y-6">
      <header className="space-y-2">
        <p className="text-sm font-semibold text-ink-500">
          <Link to="/corrections" className="text-lake-700 underline">Corrections</Link> · {site.code}
        </p>
        <h1>Corrections and approval · {site.name}</h1>
        <p className="max-w-3xl text-ink-700">
          Fouling and drift found at a field visit are corrected from zero at the previous visit to the full value at the visit
          that found them. Corrections are kept as records of their own: the readings keep their recorded values, and the
          corrected specific conductance (and TDS) is what charts and summaries show.
        </p>
        <nav aria-label="Site links" className="flex flex-wrap gap-2">
          <Link className="btn-quiet min-h-11" to={`/sites/${site.code}`}>Site page</Link>
          <Link className="btn-quiet min-h-11" to={`/visits?site=${encodeURIComponent(site.code)}`}>Field visits</Link>
        </nav>
      </header>

      <section aria-labelledby="proposed-title" className="space-y-3">
        <h2 id="proposed-title">Awaiting review ({proposed.length})</h2>
        {proposed.length ? (
          <ul className="space-y-3">{proposed.map((c) => <CorrectionCard key={c.id} c={c} />)}</ul>
        ) : (
          <p className="text-ink-700">Nothing awaits review at {site.code}.</p>
        )}
      </section>

      <section aria-labelledby="periods-title" className="space-y-3">
        <h2 id="periods-title">Periods of record</h2>
        <p className="max-w-3xl text-sm text-ink-700">
          Graded on the total absolute correction over each period, approved and still proposed ones (U.S. Geological Survey
          Techniques and Methods 1-D3, 2006). {describeBands(SC_GRADE_BANDS)} An approved period is locked: changing a
          correction or visit in it needs a reason, kept in the history below.
        </p>
        <PeriodsTable periods={periods} canApprove />
      </section>

      <section aria-labelledby="decided-title" className="space-y-3">
        <h2 id="decided-title">Approved and rejected corrections</h2>
        {decided.length ? (
          <ul className="space-y-3">{decided.map((c) => <CorrectionCard key={c.id} c={c} />)}</ul>
        ) : (
          <p className="text-ink-700">None yet.</p>
        )}
      </section>

      <section aria-labelledby="add-title" className="card space-y-3">
        <h2 id="add-title">Add a correction</h2>
        <p className="text-sm text-ink-700">For an error the visits do not show by themselves (a known offset, a replaced sensor), over one period between two visits.</p>
        <AddCorrectionForm periods={periods} />
      </section>

      <section aria-labelledby="history-title" className="card">
        <h2 id="history-title">Changes to the record</h2>
        {history.length ? (
          <ol className="mt-2 space-y-2">
            {history.map((e) => (
              <li key={e.id} className="border-l-2 border-ink-200 pl-3">
                <span className="font-semibold">{e.entity.replace("_", " ")} · {e.action}</span>
                <span className="text-ink-500"> · {e.at} · by {e.actorName}{e.inLockedPeriod ? " · in an approved period" : ""}</span>
                {e.reason ? <p className="text-sm">Reason: {e.reason}</p> : null}
                {e.changes.length ? (
                  <ul className="text-sm text-ink-700">
                    {e.changes.map((c) => (
                      <li key={c.field}>{c.field}: {c.before ?? "—"} → {c.after ?? "—"}</li>
                    ))}
                  </ul>
                ) : null}
              </li>
            ))}
          </ol>
        ) : (
          <p className="text-ink-700">No changes yet.</p>
        )}
      </section>
    </div>
  );
}
