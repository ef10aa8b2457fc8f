import { getFormProps, getInputProps, getTextareaProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/exceedance";
import { ErrorList, FormErrors } from "#app/components/forms.tsx";
import { CANONICAL_UNIT, CONDITION_LABELS, PARAMETER_NAMES, describeCondition, parseRuleCondition, showValue } from "#app/lib/quality/alert-rules.ts";
import { formatDuration, formatPeak, OUTCOME_HELP, OUTCOME_LABELS, OUTCOMES, peakLabel } from "#app/lib/quality/exceedance-words.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { findExceedance, listExceedanceAudit, reviewExceedance } from "#app/models/exceedance.server.ts";
import { wasNotified } from "#app/models/notification.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE, REVIEW_ROLES, roleAllowed } from "#app/utils/permissions.ts";
import { BackLink, SavedNotice } from "#app/routes/admin/+shared/ui.tsx";
import { ScreeningCaution } from "#app/routes/alert-rules/+shared/ui.tsx";
import { EventChart } from "./+shared/event-chart.tsx";
import { describeAudit } from "./+shared/audit-words.ts";
import { reviewSchema } from "./+shared/review-schema.ts";
import { OutcomeText, StatusMark } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.event.siteCode ?? ""} event · Exceedances · Ripplemark` }];

async function eventOr404(id: string) {
  if (!z.uuid().safeParse(id).success) throw data("No such event.", { status: 404 });
  const e = await findExceedance(id);
  if (!e) throw data("No such event.", { status: 404 });
  return e;
}

const HOUR = 3_600_000;

export async function loader({ request, params }: Route.LoaderArgs) {
  // Officers and admins review every event; a technician or manager may read an event they were told about.
  const user = await requireUser(request, { roles: ANY_ROLE });
  const e = await eventOr404(params.exceedanceId);
  const canReview = roleAllowed(user.role, REVIEW_ROLES);
  if (!canReview && !(await wasNotified(user.id, e.id))) throw data("Only the people told about this event may open it.", { status: 403 });
  const audit = canReview ? await listExceedanceAudit(e.id) : [];
  const unit = (e.params as { unit?: string } | null)?.unit;
  const endMs = (e.ended_at ?? e.last_reading_at).getTime();
  const startMs = e.started_at.getTime();
  // Room around the event: half its length on each side, at least six hours.
  const pad = Math.max(6 * HOUR, (endMs - startMs) / 2);
  const rc = parseRuleCondition(e.condition, e.params);
  const levels =
    e.condition === "above" || e.condition === "below"
      ? [
          ...(e.threshold_value !== null ? [{ label: `threshold ${showValue(e.parameter, e.threshold_value, unit)}`, value: e.threshold_value, kind: "threshold" as const }] : []),
          ...(e.clear_value !== null && e.clear_value !== e.threshold_value
            ? [{ label: `clear level ${showValue(e.parameter, e.clear_value, unit)}`, value: e.clear_value, kind: "clear" as const }]
            : []),
        ]
      : e.condition === "out-of-range" || e.condition === "temperature-range"
        ? [
            ...(e.threshold_value !== null ? [{ label: `highest ${showValue(e.parameter, e.threshold_value, unit)}`, value: e.threshold_value, kind: "threshold" as const }] : []),
            ...(e.clear_value !== null ? [{ label: `lowest ${showValue(e.parameter, e.clear_value, unit)}`, value: e.clear_value, kind: "threshold" as const }] : []),
          ]
        : [];
  return {
    canReview,
    event: {
      id: e.id,
      siteId: e.site_id,
      siteCode: e.site_code,
      siteName: e.site_name,
      timeZone: e.time_zone,
      parameter: e.parameter,
      parameterName: e.parameter === "sc25" ? `Specific conductance at ${e.reference_c} °C` : PARAMETER_NAMES[e.parameter],
      unit: CANONICAL_UNIT[e.parameter] || "pH",
      condition: CONDITION_LABELS[e.condition],
      ruleId: e.rule_id,
      ruleName: e.rule_name,
      ruleSettings: rc ? describeCondition(e.parameter, rc) : "",
      guidelineSource: e.guideline_source,
      started: formatInZone(e.started_at, e.time_zone),
      ended: e.ended_at ? formatInZone(e.ended_at, e.time_zone) : null,
      lastReading: formatInZone(e.last_reading_at, e.time_zone),
      duration: formatDuration(e.duration_s),
      peakLabel: peakLabel(e.condition),
      peak: formatPeak(e.condition, e.parameter, e.peak_value, unit),
      peakAt: formatInZone(e.peak_at, e.time_zone),
      status: e.status,
      outcome: e.outcome,
      comment: e.comment,
      readingsFlagged: e.readings_flagged,
      closed: e.closed_at ? `${formatInZone(e.closed_at, e.time_zone)}${e.closed_by_name ? ` by ${e.closed_by_name}` : ""}` : null,
    },
    chart: { fromMs: startMs - pad, toMs: endMs + pad, event: { fromMs: startMs, toMs: endMs }, lines: levels },
    audit: describeAudit(audit, e.parameter, unit, (d) => formatInZone(d, e.time_zone)),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const e = await eventOr404(params.exceedanceId);
  const formData = await request.formData();
  if (formData.get("intent") !== "review") throw data("Unknown action.", { status: 400 });
  const submission = parseWithZod(formData, { schema: reviewSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const result = await reviewExceedance(user.id, e.id, {
    outcome: v.outcome ?? null,
    comment: v.comment ?? "",
    then: v.then,
    flagReadings: v.flagReadings ?? false,
  });
  if (result.outcome === "withdrawn") {
    return data({ result: submission.reply({ formErrors: ["This event is no longer in the data and cannot be reviewed."] }) }, { status: 409 });
  }
  const key = result.outcome === "missing" ? "unchanged" : result.outcome;
  throw redirect(`/exceedances/${e.id}?saved=${key}`);
}

const SAVED = {
  saved: "The review is saved.",
  closed: "The review is saved and the event is closed.",
  unchanged: "Nothing to save: the event was already like that.",
};

export default function ExceedancePage({ loaderData, actionData }: Route.ComponentProps) {
  const { event, chart, audit, canReview } = loaderData;
  return (
    <div className="space-y-5">
      {canReview ? <BackLink to="/exceedances">Exceedances</BackLink> : <BackLink to="/notifications">Notifications</BackLink>}
      <header>
        <p className="text-sm font-semibold text-ink-500">
          <Link to={`/sites/${encodeURIComponent(event.siteCode)}`} className="text-lake-700 underline">{event.siteCode} · {event.siteName}</Link> ·{" "}
          {event.condition}
        </p>
        <h1 className="mt-0.5">{event.parameterName}: {event.peak}</h1>
        <p className="mt-1" data-testid="event-status">
          <StatusMark status={event.status} /> · <OutcomeText outcome={event.outcome} />
          {event.readingsFlagged ? <span className="text-ink-700"> · {event.readingsFlagged} readings flagged as a sensor fault</span> : null}
        </p>
      </header>
      <SavedNotice messages={SAVED} />

      <section className="card" aria-labelledby="facts-title">
        <h2 id="facts-title" className="text-base">The event</h2>
        <dl className="mt-2 grid gap-x-4 gap-y-1 sm:grid-cols-[12rem_1fr]">
          <dt className="font-semibold">Started</dt>
          <dd>{event.started}</dd>
          <dt className="font-semibold">Ended</dt>
          <dd>{event.ended ?? `Still going on at the latest reading (${event.lastReading})`}</dd>
          <dt className="font-semibold">Duration</dt>
          <dd>{event.ended ? event.duration : `${event.duration} so far`}</dd>
          <dt className="font-semibold">{event.peakLabel}</dt>
          <dd>
            {event.peak} at {event.peakAt}
          </dd>
          <dt className="font-semibold">Rule</dt>
          <dd>
            {canReview ? <Link to={`/alert-rules/${event.ruleId}`} className="text-lake-700 underline">{event.ruleName}</Link> : event.ruleName}
            {event.ruleSettings ? <span className="text-ink-700"> ({event.ruleSettings})</span> : null}
          </dd>
          {event.closed ? (
            <>
              <dt className="font-semibold">Closed</dt>
              <dd>{event.closed}</dd>
            </>
          ) : null}
        </dl>
        {event.guidelineSource ? <p className="mt-2 text-sm text-ink-700"><span className="font-semibold">Source of the level: </span>{event.guidelineSource}</p> : null}
      </section>
      <ScreeningCaution />

      <section aria-labelledby="chart-title" className="space-y-2">
        <h2 id="chart-title">Readings around the event</h2>
        <EventChart
          siteId={event.siteId}
          parameter={event.parameter}
          parameterLabel={event.parameterName}
          unit={event.unit}
          fromMs={chart.fromMs}
          toMs={chart.toMs}
          event={chart.event}
          lines={chart.lines}
          timeZone={event.timeZone}
        />
      </section>

      {canReview ? (
        <>
          <ReviewForm event={event} lastResult={actionData?.result} />
          <section aria-labelledby="trail-title" className="space-y-2">
            <h2 id="trail-title">Change history</h2>
            <ol className="card divide-y divide-ink-100" data-testid="audit-trail">
              {audit.map((a) => (
                <li key={a.id} className="py-2">
                  <p>
                    <span className="font-semibold">{a.action}</span> · {a.at} · {a.who}
                  </p>
                  {a.changes.length ? (
                    <ul className="ml-4 list-disc text-sm text-ink-700">
                      {a.changes.map((c) => (
                        <li key={c.field}>
                          {c.field}: {c.before} → {c.after}
                        </li>
                      ))}
                    </ul>
                  ) : null}
                </li>
              ))}
            </ol>
          </section>
        </>
      ) : (
        <p className="text-ink-700">Environmental officers review and classify events. {event.comment ? `Their comment: “${event.comment}”` : ""}</p>
      )}
    </div>
  );
}

function ReviewForm({ event, lastResult }: { event: { status: string; outcome: string | null; comment: string; readingsFlagged: number }; lastResult: unknown }) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "review",
    lastResult: lastResult as never,
    defaultValue: { outcome: event.outcome ?? "", comment: event.comment, flagReadings: event.readingsFlagged > 0 ? "on" : undefined },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: reviewSchema }),
    shouldRevalidate: "onBlur",
  });
  const [outcome, setOutcome] = useState(event.outcome ?? "");
  const closed = event.status === "closed";
  const busy = navigation.state !== "idle";
  const commentProps = getTextareaProps(fields.comment);
  return (
    <section aria-labelledby="review-title" className="card space-y-4">
      <h2 id="review-title">Review</h2>
      <Form method="post" {...getFormProps(form)} className="space-y-4">
        <input type="hidden" name="intent" value="review" />
        <FormErrors id={form.errorId} errors={form.errors} />
        <fieldset onChange={(e) => setOutcome(e.target instanceof HTMLInputElement ? e.target.value : outcome)}>
          <legend className="field-label">What caused it?</legend>
          <div className="space-y-1.5">
            {OUTCOMES.map((o) => (
              <label key={o} className="flex items-start gap-2">
                <input type="radio" name={fields.outcome.name} value={o} defaultChecked={event.outcome === o} className="mt-1.5" />
                <span>
                  <span className="font-semibold">{OUTCOME_LABELS[o]}</span>
                  <span className="block text-sm text-ink-700">{OUTCOME_HELP[o]}</span>
                </span>
              </label>
            ))}
          </div>
          <ErrorList id={fields.outcome.errorId} errors={fields.outcome.errors} />
        </fieldset>
        {outcome === "sensor-fault" ? (
          <label className="flex items-start gap-2">
            <input {...getInputProps(fields.flagReadings, { type: "checkbox" })} key={fields.flagReadings.key} className="mt-1.5" />
            <span>
              Flag this event's readings as a sensor fault
              <span className="block text-sm text-ink-700">
                Raw values stay as logged; flagged readings are left out of summaries and of later checks. Unticking (or another outcome) takes the flag off again.
              </span>
            </span>
          </label>
        ) : null}
        <div>
          <label className="field-label" htmlFor={fields.comment.id}>Comment</label>
          <textarea className="field-input" rows={3} {...commentProps} key={commentProps.key} />
          <ErrorList id={fields.comment.errorId} errors={fields.comment.errors} />
        </div>
        <div className="flex flex-wrap gap-2">
          <button type="submit" name="then" value="save" className="btn-quiet" disabled={busy}>Save</button>
          {closed ? (
            <button type="submit" name="then" value="reopen" className="btn-quiet" disabled={busy}>Save and reopen</button>
          ) : (
            <button type="submit" name="then" value="close" className="btn" disabled={busy}>Save and close</button>
          )}
        </div>
      </Form>
    </section>
  );
}
