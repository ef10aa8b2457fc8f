import { Link } from "react-router";
import type { Route } from "./+types/overview";
import { listSitesWithLoggers } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";

export const meta: Route.MetaFunction = () => [{ title: "Overview · Ripplemark" }];

const KIND_LABELS: Record<string, string> = {
  spring: "Spring",
  river: "River station",
  tidal: "Tidal reach",
  reservoir: "Reservoir",
  "treatment-works": "Treatment works",
  borehole: "Borehole",
  other: "Other",
};

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const sites = await listSitesWithLoggers({ assignedTo: user.role === "technician" ? user.id : undefined });
  return {
    sites: sites.map((s) => ({
      id: s.id,
      code: s.code,
      name: s.name,
      kind: s.kind,
      assigned: s.assigned,
      loggers: s.loggers.map((l) => ({ serial: l.serial, intervalMinutes: l.logging_interval_s / 60 })),
    })),
  };
}

export default function Overview({ loaderData }: Route.ComponentProps) {
  const { sites } = loaderData;
  return (
    <section aria-labelledby="overview-title">
      <h1 id="overview-title">Sites</h1>
      <p className="mt-1 text-ink-700">{sites.length} monitoring sites.</p>
      <ul className="mt-4 grid gap-3 sm:grid-cols-2 lg:grid-cols-3">
        {sites.map((s) => (
          <li key={s.id} className="card">
            <p className="text-sm font-semibold text-ink-500">
              {s.code} · {KIND_LABELS[s.kind] ?? s.kind}
              {s.assigned ? <span className="ml-2 rounded bg-lake-100 px-1.5 text-lake-700">your round</span> : null}
            </p>
            <h2 className="mt-0.5">{s.name}</h2>
            <p className="mt-1 text-sm text-ink-700">
              {s.loggers.length
                ? s.loggers.map((l) => `Logger ${l.serial} (every ${l.intervalMinutes} min)`).join(", ")
                : "No logger deployed"}
            </p>
          </li>
        ))}
      </ul>
      {sites.length === 0 ? (
        <p className="card mt-4">
          No sites yet. <Link className="text-lake-700 underline" to="/admin/sites">An administrator can add them.</Link>
        </p>
      ) : null}
    </section>
  );
}
