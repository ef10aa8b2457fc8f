import { data, Link } from "react-router";
import type { Route } from "./+types/visit";
import { scCriterionUsPerCm } from "#app/lib/quality/calibration.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { listCorrections } from "#app/models/correction.server.ts";
import { canEditVisit, canSeeVisit, findVisit, photoLinks, standardLabel } from "#app/models/field-visit.server.ts";
import { describeRecordAudit, listRecordAudit } from "#app/models/record-audit.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES, REVIEW_ROLES, roleAllowed } from "#app/utils/permissions.ts";
import { celsius, offsetText, us } from "./+shared/format.ts";
import { visitIdParam, visitNotFound } from "./+shared/helpers.server.ts";
import { CheckLine, FoulingLine, OverallVerdict, TemperatureLine } from "./+shared/results.tsx";
import { BackLink, SavedNotice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `Visit ${data.visit.siteCode} ${data.visit.visitedAt} · Ripplemark` : "Field visit · Ripplemark" },
];

const KIND_WORDS = { fouling: "Fouling", drift: "Calibration drift", other: "Other" } as const;
const STATUS_WORDS = { proposed: "Awaiting review", approved: "Approved", rejected: "Rejected" } as const;

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const id = visitIdParam(params.visitId);
  const v = await findVisit(id);
  if (!v || !(await canSeeVisit(user, v))) visitNotFound();
  const zone = v.site_time_zone;
  const [corrections, audit, photos] = await Promise.all([
    listCorrections({ siteId: v.site_id, loggerId: v.logger_id }),
    listRecordAudit({ entity: "field_visit", entityId: v.id }),
    photoLinks(v.photo_keys),
  ]);
  const fromHere = corrections.filter((c) => c.to_visit_id === v.id);
  const checks = v.checks.map((c) => ({
    label: standardLabel(c.standard, c.custom_value_us_cm),
    temperatureC: c.standard_temperature_c,
    sensorUsPerCm: c.sensor_us_cm,
    expectedUsPerCm: c.expected_us_cm,
    errorUsPerCm: c.error_us_cm,
    errorPercent: c.error_percent,
    allowanceUsPerCm: c.allowance_us_cm,
    passed: c.passed,
    cellConstantChangePercent: c.cell_constant_change_percent,
  }));
  const verdicts = [v.fouling_passed, v.temperature_passed, ...checks.map((c) => c.passed)].filter((x): x is boolean => x !== null);
  return {
    visit: {
      id: v.id,
      siteCode: v.site_code,
      siteName: v.site_name,
      loggerSerial: v.logger_serial,
      visitedAt: formatInZone(v.visited_at, zone),
      technician: v.technician_name ?? "someone no longer listed",
      updatedBy: v.updated_at.getTime() - v.created_at.getTime() > 1000 ? `${v.updated_by_name ?? "someone"}, ${formatInZone(v.updated_at, zone)}` : null,
      recalibrated: v.recalibrated,
      notes: v.notes,
      readings: [
        { label: "Sensor before cleaning", sc: v.before_sc_us_cm, t: v.before_temperature_c },
        { label: "Sensor after cleaning", sc: v.after_sc_us_cm, t: v.after_temperature_c },
        { label: "Field meter", sc: v.meter_sc_us_cm, t: v.meter_temperature_c },
      ],
      fouling:
        v.fouling_error_us_cm === null || v.fouling_passed === null
          ? null
          : {
              errorUsPerCm: v.fouling_error_us_cm,
              errorPercent: v.fouling_error_percent ?? 0,
              reference: v.meter_sc_us_cm ? ("field-meter" as const) : ("after-cleaning" as const),
              allowanceUsPerCm: scCriterionUsPerCm(v.meter_sc_us_cm ?? v.after_sc_us_cm ?? 0),
              passed: v.fouling_passed,
            },
      temperature: v.temperature_error_c === null || v.temperature_passed === null ? null : { errorC: v.temperature_error_c, passed: v.temperature_passed },
      checks,
      verdict: verdicts.length ? verdicts.every(Boolean) : null,
      failing: [
        v.fouling_passed === false ? "fouling" : null,
        v.temperature_passed === false ? "temperature" : null,
        ...checks.map((c, i) => (c.passed ? null : `calibration check ${i + 1}`)),
      ].filter((x): x is string => !!x),
    },
    photos: photos.map((p) => ({ name: p.name, url: p.url })),
    corrections: fromHere.map((c) => ({
      id: c.id,
      kind: KIND_WORDS[c.kind],
      status: STATUS_WORDS[c.status],
      endOffset: offsetText(c.end_offset, c.offset_unit),
      period: `${formatInZone(c.period_start, zone)} to ${formatInZone(c.period_end, zone)}`,
    })),
    history: describeRecordAudit(audit, (at) => formatInZone(at, zone)),
    canEdit: canEditVisit(user, v),
    canReview: roleAllowed(user.role, REVIEW_ROLES),
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: FIELD_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}

const SAVED = {
  created: "Visit saved. The results below are as Ripplemark computed them on saving.",
  changed: "Changes saved; the results were computed again.",
  unchanged: "Nothing to save: the visit was already like that.",
};

export default function Visit({ loaderData }: Route.ComponentProps) {
  const { visit, photos, corrections, history, canEdit, canReview } = loaderData;
  return (
    <div className="mx-auto max-w-4xl space-y-5">
      <BackLink to={`/visits?site=${encodeURIComponent(visit.siteCode)}`}>Field visits at {visit.siteCode}</BackLink>
      <header className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h1>Field visit · {visit.siteCode} {visit.siteName}</h1>
          <p className="text-ink-700">
            {visit.visitedAt} · logger {visit.loggerSerial} · by {visit.technician}
            {visit.updatedBy ? ` · last changed by ${visit.updatedBy}` : ""}
          </p>
        </div>
        {canEdit ? (
          <Link to={`/visits/${visit.id}/edit`} className="btn-quiet min-h-11">Change this visit</Link>
        ) : null}
      </header>
      <SavedNotice messages={SAVED} />

      <section className="card space-y-3" aria-labelledby="results-title">
        <h2 id="results-title">Results</h2>
        <OverallVerdict verdict={visit.verdict} failing={visit.failing} computed={visit.checks.length + (visit.fouling ? 1 : 0) + (visit.temperature ? 1 : 0)} />
        <div className="space-y-2">
          <FoulingLine fouling={visit.fouling} />
          <TemperatureLine temperature={visit.temperature} />
          {visit.checks.map((c, i) => (
            <CheckLine key={i} index={i} check={c} />
          ))}
        </div>
        <p className="text-sm text-ink-700">{visit.recalibrated ? "The sensor was recalibrated at this visit." : "The sensor was not recalibrated at this visit."}</p>
      </section>

      <section className="card" aria-labelledby="readings-title">
        <h2 id="readings-title">Readings</h2>
        <table className="data-table mt-2">
          <thead>
            <tr>
              <th scope="col">Reading</th>
              <th scope="col" className="text-right">Specific conductance</th>
              <th scope="col" className="text-right">Temperature</th>
            </tr>
          </thead>
          <tbody>
            {visit.readings.map((r) => (
              <tr key={r.label}>
                <th scope="row" className="font-normal">{r.label}</th>
                <td className="text-right tabular-nums">{us(r.sc)}</td>
                <td className="text-right tabular-nums">{celsius(r.t, 2)}</td>
              </tr>
            ))}
            {visit.checks.map((c, i) => (
              <tr key={`check-${i}`}>
                <th scope="row" className="font-normal">Check {i + 1}: sensor in {c.label}</th>
                <td className="text-right tabular-nums">{us(c.sensorUsPerCm)}</td>
                <td className="text-right tabular-nums">{celsius(c.temperatureC, 1)}</td>
              </tr>
            ))}
          </tbody>
        </table>
        {visit.notes ? <p className="mt-3 whitespace-pre-line"><span className="font-semibold">Notes:</span> {visit.notes}</p> : null}
      </section>

      {photos.length ? (
        <section className="card" aria-labelledby="photos-title">
          <h2 id="photos-title">Photos</h2>
          <ul className="mt-2 space-y-1">
            {photos.map((p) => (
              <li key={p.url}>
                <a href={p.url} className="text-lake-700 underline">{p.name}</a>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <section className="card space-y-2" aria-labelledby="corrections-title">
        <h2 id="corrections-title">Corrections from this visit</h2>
        {corrections.length ? (
          <ul className="space-y-1">
            {corrections.map((c) => (
              <li key={c.id}>
                <span className="font-semibold">{c.kind}</span> {c.endOffset} at this visit, prorated from the previous visit ({c.period}) · {c.status}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-ink-700">None: what this visit found is within the criteria, or it is the logger's first visit.</p>
        )}
        {canReview ? (
          <Link to={`/sites/${visit.siteCode}/corrections`} className="inline-block py-1 text-lake-700 underline">Review corrections at {visit.siteCode}</Link>
        ) : null}
      </section>

      {history.length ? (
        <section className="card" aria-labelledby="history-title">
          <h2 id="history-title">Change history</h2>
          <ol className="mt-2 space-y-2">
            {history.map((e) => (
              <li key={e.id} className="border-l-2 border-ink-200 pl-3">
                <span className="font-semibold">{e.action === "create" ? "Recorded" : "Changed"}</span>
                <span className="text-ink-500"> · {e.at} · by {e.actorName}</span>
                {e.reason ? <p className="text-sm">Reason: {e.reason}</p> : null}
                {e.action !== "create" && e.changes.length ? (
                  <ul className="text-sm text-ink-700">
                    {e.changes.map((c) => (
                      <li key={c.field}>{c.field}: {c.before} → {c.after}</li>
                    ))}
                  </ul>
                ) : null}
              </li>
            ))}
          </ol>
        </section>
      ) : null}
    </div>
  );
}
