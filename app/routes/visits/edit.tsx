import { data, redirect } from "react-router";
import type { Route } from "./+types/edit";
import { lockedPeriodsOverlapping } from "#app/models/correction.server.ts";
import { canEditVisit, findVisit, updateVisit } from "#app/models/field-visit.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { db } from "#app/utils/db.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { BackLink } from "./+shared/ui.tsx";
import { formSites, handleVisitSubmit, visitDefaults, visitIdParam, visitNotFound } from "./+shared/helpers.server.ts";
import { VisitForm } from "./+shared/visit-form.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Change a field visit · Ripplemark" }];

async function editableVisit(request: Request, visitIdValue: string | undefined) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const id = visitIdParam(visitIdValue);
  const visit = await findVisit(id);
  if (!visit) visitNotFound();
  if (!canEditVisit(user, visit)) throw data("Only officers may change a visit someone else recorded.", { status: 403 });
  return { user, visit };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, visit } = await editableVisit(request, params.visitId);
  const locked = await lockedPeriodsOverlapping(db, visit.site_id, visit.logger_id, visit.visited_at, visit.visited_at, true);
  return {
    visit: { id: visit.id, siteCode: visit.site_code, siteName: visit.site_name },
    sites: (await formSites(user.id)).filter((s) => s.id === visit.site_id),
    defaults: visitDefaults(visit),
    locked: locked.length > 0,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, visit } = await editableVisit(request, params.visitId);
  const sites = (await formSites(user.id)).filter((s) => s.id === visit.site_id);
  const outcome = await handleVisitSubmit(await request.formData(), sites, async (input) => {
    const r = await updateVisit(user, visit.id, input);
    return r.changed ? r.id : `${r.id}?saved=unchanged`;
  });
  if (!outcome.ok) return outcome.response;
  throw redirect(outcome.id.includes("?") ? `/visits/${outcome.id}` : `/visits/${outcome.id}?saved=changed`);
}

export default function EditVisit({ loaderData, actionData }: Route.ComponentProps) {
  const { visit, sites, defaults, locked } = loaderData;
  return (
    <div className="mx-auto max-w-4xl space-y-5">
      <BackLink to={`/visits/${visit.id}`}>Back to the visit</BackLink>
      <header className="space-y-2">
        <h1>Change the visit · {visit.siteCode} {visit.siteName}</h1>
        {locked ? (
          <p className="caution">
            This visit bounds a period of record an officer has approved. Saving a change needs a reason, which stays in the
            record's history.
          </p>
        ) : null}
      </header>
      <VisitForm sites={sites} defaultValue={defaults} lastResult={actionData?.result} submitLabel="Save the changes" fixedSite askReason={locked} />
    </div>
  );
}
