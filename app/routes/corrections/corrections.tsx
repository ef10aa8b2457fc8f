import { data, Link } from "react-router";
import type { Route } from "./+types/corrections";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { correctionCountsBySite, listCorrections } from "#app/models/correction.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { db } from "#app/utils/db.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { KIND_LABELS } from "#app/lib/visits/review-input.ts";
import { offsetText } from "../visits/+shared/format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Corrections · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const [counts, proposed, sites, periods] = await Promise.all([
    correctionCountsBySite(),
    listCorrections({ status: "proposed" }, 100),
    db.selectFrom("site").select(["id", "code", "name"]).orderBy("code").execute(),
    db
      .selectFrom("record_period")
      .select((eb) => ["site_id", eb.fn.countAll<number>().as("n"), eb.fn.sum<number>(eb.case().when("locked", "=", true).then(1).else(0).end()).as("approved")])
      .groupBy("site_id")
      .execute(),
  ]);
  const count = (siteId: string, status: string) => Number(counts.find((c) => c.site_id === siteId && c.status === status)?.n ?? 0);
  return {
    sites: sites.map((s) => {
      const p = periods.find((x) => x.site_id === s.id);
      return {
        code: s.code,
        name: s.name,
        proposed: count(s.id, "proposed"),
        approved: count(s.id, "approved"),
        periods: Number(p?.n ?? 0),
        periodsApproved: Number(p?.approved ?? 0),
      };
    }),
    proposed: proposed.map((c) => ({
      id: c.id,
      siteCode: c.site_code,
      kind: KIND_LABELS[c.kind],
      logger: c.logger_serial,
      to: formatInZone(c.period_end, c.site_time_zone),
      endOffset: offsetText(c.end_offset, c.offset_unit),
    })),
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}

export default function Corrections({ loaderData }: Route.ComponentProps) {
  const { sites, proposed } = loaderData;
  return (
    <div className="space-y-6">
      <header className="space-y-2">
        <h1>Corrections</h1>
        <p className="max-w-3xl text-ink-700">
          Corrections of specific conductance proposed from field visits, and the approval of each period of record. Open a site
          to review its corrections and approve its periods.
        </p>
      </header>
      <section aria-labelledby="queue-title" className="space-y-2">
        <h2 id="queue-title">Awaiting review ({proposed.length})</h2>
        {proposed.length ? (
          <ul className="space-y-1">
            {proposed.map((c) => (
              <li key={c.id}>
                <Link to={`/sites/${c.siteCode}/corrections`} className="font-semibold text-lake-700 underline">{c.siteCode}</Link>{" "}
                {c.kind} correction, logger {c.logger}, {c.endOffset} at the visit of {c.to}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-ink-700">Nothing awaits review.</p>
        )}
      </section>
      <section aria-labelledby="sites-title" className="space-y-2">
        <h2 id="sites-title">By site</h2>
        <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
          <table className="data-table">
            <caption className="sr-only">Corrections and periods of record by site</caption>
            <thead>
              <tr>
                <th scope="col">Site</th>
                <th scope="col" className="text-right">Awaiting review</th>
                <th scope="col" className="text-right">Approved corrections</th>
                <th scope="col" className="text-right">Periods approved</th>
              </tr>
            </thead>
            <tbody>
              {sites.map((s) => (
                <tr key={s.code}>
                  <th scope="row" className="border-b border-ink-100 font-normal">
                    <Link to={`/sites/${s.code}/corrections`} className="inline-block py-1 text-lake-700 underline">
                      <span className="font-semibold">{s.code}</span> {s.name}
                    </Link>
                  </th>
                  <td className="text-right tabular-nums">{s.proposed}</td>
                  <td className="text-right tabular-nums">{s.approved}</td>
                  <td className="text-right tabular-nums">{s.periodsApproved} of {s.periods}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
    </div>
  );
}
