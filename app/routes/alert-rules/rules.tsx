import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/rules";
import { CONDITION_LABELS, PARAMETER_NAMES, describeCondition, describeScope, isSensorCheck, parseRuleCondition } from "#app/lib/quality/alert-rules.ts";
import { listRulesFor, setRuleEnabled, siteChoices } from "#app/models/alert-rule.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE, REVIEW_ROLES, roleAllowed } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { SavedNotice } from "#app/routes/admin/+shared/ui.tsx";
import { EnabledMark, RolesText, ScreeningCaution } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Alert rules · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const [rules, sites] = await Promise.all([listRulesFor(user.role), siteChoices()]);
  return {
    canEdit: roleAllowed(user.role, REVIEW_ROLES),
    role: user.role,
    rules: rules.map((r) => {
      const rc = parseRuleCondition(r.condition, r.params);
      return {
        id: r.id,
        name: r.name,
        parameter: PARAMETER_NAMES[r.parameter],
        condition: CONDITION_LABELS[r.condition],
        sensorCheck: isSensorCheck(r.condition),
        settings: rc ? describeCondition(r.parameter, rc) : "settings do not fit the condition: the rule is skipped",
        scope: describeScope({ siteIds: r.site_ids, siteKinds: r.site_kinds }, sites, SITE_KIND_LABELS),
        notifyRoles: r.notify_roles,
        email: r.email,
        enabled: r.enabled,
        guidelineSource: r.guideline_source,
      };
    }),
  };
}

const toggleSchema = z.object({ ruleId: z.uuid(), enabled: z.enum(["true", "false"]) });

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const form = Object.fromEntries(await request.formData());
  if (form.intent !== "toggle") throw data("Unknown action.", { status: 400 });
  const parsed = toggleSchema.safeParse(form);
  if (!parsed.success) throw data("Check the request.", { status: 400 });
  const changed = await setRuleEnabled(user.id, parsed.data.ruleId, parsed.data.enabled === "true");
  throw redirect(`/alert-rules?saved=${changed ? (parsed.data.enabled === "true" ? "enabled" : "disabled") : "unchanged"}`);
}

const SAVED = {
  enabled: "The rule is on: new readings are checked against it, and its history is being checked in the background.",
  disabled: "The rule is off: new readings are no longer checked against it. Its events stay listed.",
  unchanged: "Nothing changed.",
  created: "The rule is saved. Its history is being checked in the background.",
};

export default function AlertRules({ loaderData }: Route.ComponentProps) {
  const { rules, canEdit, role } = loaderData;
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>Alert rules</h1>
        {canEdit ? <Link to="/alert-rules/new" className="btn">New rule</Link> : null}
      </div>
      <SavedNotice messages={SAVED} />
      {canEdit ? null : (
        <p className="text-ink-700">
          {role === "technician"
            ? "The sensor checks that tell field technicians. Environmental officers and administrators set them."
            : "The rules that tell utility managers. Environmental officers and administrators set them."}
        </p>
      )}
      <ScreeningCaution />
      <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
        <table className="data-table" data-testid="rules-table">
          <caption className="px-3 pt-2 text-left text-sm text-ink-700">
            <span className="font-semibold text-ink-900">Alert rules</span>: {rules.length}
          </caption>
          <thead>
            <tr>
              <th scope="col">Rule</th>
              <th scope="col">Checks</th>
              <th scope="col">Where</th>
              <th scope="col">Tells</th>
              <th scope="col">State</th>
            </tr>
          </thead>
          <tbody>
            {rules.length === 0 ? (
              <tr>
                <td colSpan={5} className="py-6 text-center text-ink-500">No rules to show.</td>
              </tr>
            ) : (
              rules.map((r) => (
                <tr key={r.id} className="align-top hover:bg-ink-50">
                  <th scope="row" className="border-b border-ink-100 font-normal">
                    <Link to={`/alert-rules/${r.id}`} className="font-semibold text-lake-700 underline">{r.name}</Link>
                    {r.guidelineSource ? <p className="mt-1 max-w-md text-sm text-ink-500">{r.guidelineSource}</p> : null}
                  </th>
                  <td>
                    <span className="font-semibold">{r.parameter}</span>: {r.settings}
                    <p className="text-sm text-ink-500">{r.sensorCheck ? "Sensor check" : "Water check"} · {r.condition}</p>
                  </td>
                  <td>{r.scope}</td>
                  <td>
                    <RolesText roles={r.notifyRoles} />
                    {r.email ? <p className="text-sm text-ink-500">and by e-mail</p> : null}
                  </td>
                  <td>
                    <EnabledMark enabled={r.enabled} />
                    {canEdit ? (
                      <Form method="post" className="mt-1">
                        <input type="hidden" name="intent" value="toggle" />
                        <input type="hidden" name="ruleId" value={r.id} />
                        <input type="hidden" name="enabled" value={r.enabled ? "false" : "true"} />
                        <button type="submit" className="btn-quiet py-0.5 text-sm" aria-label={`${r.enabled ? "Turn off" : "Turn on"} ${r.name}`}>
                          {r.enabled ? "Turn off" : "Turn on"}
                        </button>
                      </Form>
                    ) : null}
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
    </div>
  );
}
