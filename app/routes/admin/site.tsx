import { parseWithZod } from "@conform-to/zod/v4";
import { data, Link, redirect } from "react-router";
import type { Route } from "./+types/site";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { findSite, listLoggersAtSite, saveSite, siteCodeTaken } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { COMPENSATION_LABELS, SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { auditLines, idParam, notFound } from "./+shared/helpers.server.ts";
import { siteSchema } from "./+shared/schemas.ts";
import { SiteForm, timeZoneNames } from "./+shared/site-form.tsx";
import { AuditTrail, BackLink, SavedNotice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.site.code ?? "Site"} · Sites · Ripplemark` }];

const CODE_TAKEN = "Another site already uses this code";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.siteId);
  const site = await findSite(id);
  if (!site) notFound("site");
  const [loggers, history] = await Promise.all([listLoggersAtSite(id), auditLines("site", id)]);
  return {
    site: {
      id: site.id,
      code: site.code,
      name: site.name,
      kind: site.kind,
      latitude: site.latitude,
      longitude: site.longitude,
      timeZone: site.time_zone,
      notes: site.notes,
      compensationMethod: site.compensation_method,
      alphaPerC: site.alpha_per_c,
      referenceC: site.reference_c,
      tdsFactor: site.tds_factor,
      settingsVersion: site.settings_version,
    },
    loggers: loggers.map((l) => ({ id: l.id, serial: l.serial, model: l.model, since: formatInZone(l.deployed_from, site.time_zone) })),
    timeZones: timeZoneNames(),
    history,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.siteId);
  if (!(await findSite(id))) notFound("site");
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "save": {
      const submission = parseWithZod(formData, { schema: siteSchema });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const taken = () => data({ result: submission.reply({ fieldErrors: { code: [CODE_TAKEN] } }) }, { status: 400 });
      const v = submission.value;
      if (await siteCodeTaken(v.code, id)) return taken();
      const outcome = await saveSite(user.id, id, {
        code: v.code,
        name: v.name,
        kind: v.kind,
        latitude: v.latitude,
        longitude: v.longitude,
        time_zone: v.timeZone,
        notes: v.notes,
      });
      if (outcome === "taken") return taken();
      throw redirect(`/admin/sites/${id}?saved=${outcome}`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

const SAVED = {
  created: "Site added.",
  saved: "Changes saved.",
  unchanged: "Nothing to save: the site was already like that.",
};

export default function Site({ loaderData, actionData }: Route.ComponentProps) {
  const { site, loggers, timeZones, history } = loaderData;
  return (
    <div className="max-w-3xl space-y-6">
      <BackLink to="/admin/sites">All sites</BackLink>
      <header>
        <h1>
          {site.code} · {site.name}
        </h1>
        <p className="text-ink-700">{SITE_KIND_LABELS[site.kind]}</p>
      </header>
      <SavedNotice messages={SAVED} />
      <section className="card" aria-labelledby="site-details">
        <h2 id="site-details" className="mb-3">Details</h2>
        <SiteForm
          lastResult={actionData?.result}
          timeZones={timeZones}
          submitLabel="Save changes"
          defaultValue={{
            code: site.code,
            name: site.name,
            kind: site.kind,
            latitude: String(site.latitude),
            longitude: String(site.longitude),
            timeZone: site.timeZone,
            notes: site.notes,
          }}
        />
      </section>
      <section className="card" aria-labelledby="site-derivation">
        <h2 id="site-derivation">Derivation settings</h2>
        <p className="mt-1 text-sm text-ink-500">Read-only here: environmental officers set these on the site’s settings page, and a change recomputes the site’s history.</p>
        <dl className="mt-2 grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1">
          <dt className="font-semibold">Temperature compensation</dt>
          <dd>{COMPENSATION_LABELS[site.compensationMethod]}</dd>
          <dt className="font-semibold">Coefficient</dt>
          <dd>{(site.alphaPerC * 100).toFixed(2)} % per °C</dd>
          <dt className="font-semibold">Reference temperature</dt>
          <dd>{site.referenceC} °C</dd>
          <dt className="font-semibold">TDS factor</dt>
          <dd>{site.tdsFactor}</dd>
          <dt className="font-semibold">Settings version</dt>
          <dd>{site.settingsVersion}</dd>
        </dl>
      </section>
      <section className="card" aria-labelledby="site-loggers">
        <h2 id="site-loggers">Loggers deployed here now</h2>
        {loggers.length === 0 ? (
          <p className="mt-2 text-ink-500">None. Deploy one from its logger page.</p>
        ) : (
          <ul className="mt-2 space-y-1">
            {loggers.map((l) => (
              <li key={l.id}>
                <Link to={`/admin/loggers/${l.id}`} className="font-semibold text-lake-700 underline">{l.serial}</Link>
                {l.model ? ` (${l.model})` : ""} since {l.since}
              </li>
            ))}
          </ul>
        )}
      </section>
      <AuditTrail events={history} headingId="site-history" />
      <p className="text-sm text-ink-500">Change history times are in UTC.</p>
    </div>
  );
}
