import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/site-new";
import { createSite, siteCodeTaken } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { siteSchema } from "./+shared/schemas.ts";
import { SiteForm, timeZoneNames } from "./+shared/site-form.tsx";
import { BackLink } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "New site · Administration · Ripplemark" }];

const CODE_TAKEN = "Another site already uses this code";

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  return { timeZones: timeZoneNames() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const submission = parseWithZod(await request.formData(), { schema: siteSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const taken = () => data({ result: submission.reply({ fieldErrors: { code: [CODE_TAKEN] } }) }, { status: 400 });
  const v = submission.value;
  if (await siteCodeTaken(v.code)) return taken();
  const site = await createSite(user.id, {
    code: v.code,
    name: v.name,
    kind: v.kind,
    latitude: v.latitude,
    longitude: v.longitude,
    time_zone: v.timeZone,
    notes: v.notes,
  });
  if (!site) return taken();
  throw redirect(`/admin/sites/${site.id}?saved=created`);
}

export default function NewSite({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="max-w-3xl space-y-4">
      <BackLink to="/admin/sites">All sites</BackLink>
      <h1>New site</h1>
      <p className="text-ink-700">
        Temperature compensation and the TDS factor start at the cooperative’s defaults; an environmental officer can
        change them on the site’s settings page.
      </p>
      <section className="card" aria-label="Site details">
        <SiteForm lastResult={actionData?.result} timeZones={loaderData.timeZones} defaultValue={{ kind: "river", timeZone: "Europe/London" }} submitLabel="Add the site" />
      </section>
    </div>
  );
}
