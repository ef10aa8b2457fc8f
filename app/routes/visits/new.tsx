import { redirect } from "react-router";
import type { Route } from "./+types/new";
import { toWallTime } from "#app/lib/zoned-time.ts";
import { createVisit } from "#app/models/field-visit.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { BackLink } from "./+shared/ui.tsx";
import { formSites, handleVisitSubmit } from "./+shared/helpers.server.ts";
import { VisitForm } from "./+shared/visit-form.tsx";

export const meta: Route.MetaFunction = () => [{ title: "New field visit · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const sites = await formSites(user.id);
  const wanted = new URL(request.url).searchParams.get("site");
  const first = sites.find((s) => s.code === wanted) ?? sites[0];
  return {
    sites,
    defaults: {
      siteId: first?.id,
      loggerId: first?.currentLoggerId ?? undefined,
      // Now, at the site's clock; the technician corrects it when entering a visit later.
      visitedAt: first ? toWallTime(new Date(), first.timeZone) : undefined,
      checks: [{ standard: "1413" as const }],
    },
  };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const sites = await formSites(user.id);
  const outcome = await handleVisitSubmit(await request.formData(), sites, async (input) => (await createVisit(user, input)).id);
  if (!outcome.ok) return outcome.response;
  throw redirect(`/visits/${outcome.id}?saved=created`);
}

export default function NewVisit({ loaderData, actionData }: Route.ComponentProps) {
  const { sites, defaults } = loaderData;
  return (
    <div className="mx-auto max-w-4xl space-y-5">
      <BackLink to="/visits">All field visits</BackLink>
      <header className="space-y-2">
        <h1>New field visit</h1>
        <p className="text-ink-700">
          Record the sensor before and after cleaning, your field meter, and the cleaned sensor in a calibration standard.
          The results and a pass or fail show as you type, so you know before you leave whether to clean or recalibrate again.
        </p>
      </header>
      {sites.length === 0 ? (
        <p className="card">There are no sites yet. An administrator adds them first.</p>
      ) : (
        <VisitForm sites={sites} defaultValue={defaults} lastResult={actionData?.result} submitLabel="Save the visit" />
      )}
    </div>
  );
}
