import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/week";
import { Heatmap } from "#app/components/summaries/heatmap.tsx";
import { WeekTable } from "#app/components/summaries/week-table.tsx";
import { HEATMAP_STAT_INFO, HEATMAP_STATS, isHeatmapStat } from "#app/lib/series/week-status.ts";
import { addWeeks, weekKey, weekLabel } from "#app/lib/series/weeks.ts";
import { loadHeatmap, loadWeekTable } from "#app/models/summary-read.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { ADMIN_ONLY, READ_ROLES, userCan } from "#app/utils/permissions.ts";
import { ScreeningCaution } from "./+shared/caution.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Weekly summaries${data ? ` · ${data.table.label}` : ""} · Ripplemark` }];

const HEATMAP_WEEKS = [8, 12, 26, 52] as const;

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: READ_ROLES });
  const url = new URL(request.url);
  const table = await loadWeekTable(url.searchParams.get("week"));
  const statParam = url.searchParams.get("stat");
  const stat = isHeatmapStat(statParam) ? statParam : "sc25-median";
  const weeksParam = Number(url.searchParams.get("weeks"));
  const weeks = (HEATMAP_WEEKS as readonly number[]).includes(weeksParam) ? weeksParam : 12;
  const heatmap = await loadHeatmap(stat, table.week, weeks);
  return {
    table,
    heatmap,
    stat,
    weeks,
    canSendDigest: userCan(user, "administer"),
    digestQueued: url.searchParams.get("digest") === "queued",
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const form = await request.formData();
  if (form.get("intent") !== "send-digest") throw data("Unknown action.", { status: 400 });
  const { week, key } = await loadWeekTable(String(form.get("week") ?? "")).then((t) => ({ week: t.week, key: t.key }));
  // One queued digest per week however often the button is pressed; deliveries are idempotent anyway.
  await enqueue("weekly-digest", { week }, { jobKey: `weekly-digest:${week}`, maxAttempts: 5 });
  throw redirect(`/summaries?week=${encodeURIComponent(key)}&digest=queued`);
}

export default function WeeklySummaries({ loaderData }: Route.ComponentProps) {
  const { table, heatmap, stat, weeks, canSendDigest, digestQueued } = loaderData;
  const navigation = useNavigation();
  const prev = weekKey(addWeeks(table.week, -1));
  const next = weekKey(addWeeks(table.week, 1));
  const keep = `&stat=${stat}&weeks=${weeks}`;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="text-sm font-semibold text-ink-700">Weekly summaries</p>
          <h1>{table.label}</h1>
          <p className="text-sm text-ink-700">
            Monday 00:00 to Sunday 24:00 at each site's clock ({table.timeZone}).
          </p>
        </div>
        <div className="flex flex-wrap items-end gap-2 no-print">
          <Link className="btn-quiet" to={`/summaries?week=${prev}${keep}`} aria-label={`Previous week, ${weekLabel(addWeeks(table.week, -1))}`}>
            ← Week before
          </Link>
          <Form method="get" className="flex items-end gap-2">
            <label>
              <span className="field-label">Week</span>
              <input className="field-input" type="week" name="week" defaultValue={table.key} key={table.key} />
            </label>
            <input type="hidden" name="stat" value={stat} />
            <input type="hidden" name="weeks" value={weeks} />
            <button className="btn-quiet" type="submit">Show</button>
          </Form>
          <Link className="btn-quiet" to={`/summaries?week=${next}${keep}`} aria-label={`Next week, ${weekLabel(addWeeks(table.week, 1))}`}>
            Week after →
          </Link>
        </div>
      </div>
      {table.asked === false ? (
        <p role="alert" className="caution">That is not a week Ripplemark knows; showing the last complete week instead.</p>
      ) : null}

      <div className="flex flex-wrap gap-2 no-print">
        <Link className="btn" to={`/summaries/${table.key}/print`}>Printable report</Link>
        <a className="btn-quiet" href={`/api/summaries/${table.key}/table.csv`} download>
          Download the table (CSV)
        </a>
        {canSendDigest ? (
          <Form method="post">
            <input type="hidden" name="intent" value="send-digest" />
            <input type="hidden" name="week" value={table.key} />
            <button className="btn-quiet" type="submit" disabled={navigation.state !== "idle"}>
              Send this week's digest now
            </button>
          </Form>
        ) : null}
      </div>
      {digestQueued ? (
        <p role="status" className="text-reed-700">
          The digest for {table.label} is on its way to managers and everyone who asked for it. Anyone who already has it is not sent a second copy.
        </p>
      ) : null}

      {table.rows.every((r) => !r.figures) ? (
        <p className="card">No site has a summary for this week yet. Summaries follow each upload within a few minutes.</p>
      ) : null}
      <WeekTable rows={table.rows} weekKey={table.key} previousLabel={weekLabel(table.previousWeek)} lastYearLabel={table.lastYearWeek ? weekLabel(table.lastYearWeek) : "a year ago"} />
      <ScreeningCaution />

      <section aria-labelledby="heatmap-title" className="space-y-3">
        <h2 id="heatmap-title">Sites week by week</h2>
        <Form method="get" className="flex flex-wrap items-end gap-3 no-print">
          <input type="hidden" name="week" value={table.key} />
          <label>
            <span className="field-label">Statistic</span>
            <select className="field-input" name="stat" defaultValue={stat}>
              {HEATMAP_STATS.map((s) => (
                <option key={s} value={s}>
                  {HEATMAP_STAT_INFO[s].label}
                </option>
              ))}
            </select>
          </label>
          <label>
            <span className="field-label">Weeks up to this one</span>
            <select className="field-input" name="weeks" defaultValue={weeks}>
              {HEATMAP_WEEKS.map((w) => (
                <option key={w} value={w}>
                  {w}
                </option>
              ))}
            </select>
          </label>
          <button className="btn-quiet" type="submit">Redraw</button>
        </Form>
        <Heatmap data={heatmap} />
      </section>
    </div>
  );
}
