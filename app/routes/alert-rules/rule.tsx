import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/rule";
import { CONDITION_HELP, CONDITION_LABELS, PARAMETER_NAMES, describeCondition, describeScope, parseRuleCondition, ruleVisibleTo } from "#app/lib/quality/alert-rules.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { describeRuleChange, type RuleSnapshot } from "#app/lib/quality/rule-history.ts";
import { eventCountsOfRule, findRule, ruleHistory, setRuleEnabled, siteChoices, updateRule } from "#app/models/alert-rule.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE, REVIEW_ROLES, ROLE_LABELS, roleAllowed } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { BackLink, SavedNotice } from "#app/routes/admin/+shared/ui.tsx";
import { inputFromRule, ruleFromInput, ruleSchema } from "./+shared/rule-schema.ts";
import { RuleForm } from "./+shared/rule-form.tsx";
import { EnabledMark, RolesText, ScreeningCaution } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.rule.name ?? "Alert rule"} · Ripplemark` }];

async function ruleOr404(id: string) {
  if (!z.uuid().safeParse(id).success) throw data("No such rule.", { status: 404 });
  const rule = await findRule(id);
  if (!rule) throw data("No such rule.", { status: 404 });
  return rule;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const rule = await ruleOr404(params.ruleId);
  if (!ruleVisibleTo(user.role, rule)) throw data("This rule does not tell your role.", { status: 403 });
  const canEdit = roleAllowed(user.role, REVIEW_ROLES);
  const [sites, counts, versions] = await Promise.all([siteChoices(), eventCountsOfRule(rule.id), ruleHistory(rule.id)]);
  const labels = { sites, kinds: SITE_KIND_LABELS, roles: ROLE_LABELS };
  // Each saved version as what it changed, in words (no raw rows: ids and columns stay here).
  const history = versions.map((v) => ({
    id: String(v.id),
    at: formatInZone(v.at, "Europe/London"),
    by: v.personName ?? (v.action === "created" ? "Ripplemark (a rule it starts with)" : "someone no longer listed"),
    action: v.action,
    changes: describeRuleChange(v.before as RuleSnapshot | null, v.after as RuleSnapshot, labels),
  }));
  const rc = parseRuleCondition(rule.condition, rule.params);
  return {
    canEdit,
    rule: {
      id: rule.id,
      name: rule.name,
      parameter: PARAMETER_NAMES[rule.parameter],
      condition: CONDITION_LABELS[rule.condition],
      help: CONDITION_HELP[rule.condition],
      settings: rc ? describeCondition(rule.parameter, rc) : "The stored settings do not fit the condition: the rule is skipped until it is saved again.",
      scope: describeScope({ siteIds: rule.site_ids, siteKinds: rule.site_kinds }, sites, SITE_KIND_LABELS),
      notifyRoles: rule.notify_roles,
      email: rule.email,
      emailsPerHour: rule.emails_per_hour,
      enabled: rule.enabled,
      guidelineSource: rule.guideline_source,
      shipped: rule.default_key !== null,
      updated: `${formatInZone(rule.updated_at, "Europe/London")}${rule.updatedByName ? ` by ${rule.updatedByName}` : ""}`,
    },
    counts,
    history,
    // Only editors get the form's values and the site list.
    form: canEdit ? { defaultValue: inputFromRule(rule), sites } : null,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const rule = await ruleOr404(params.ruleId);
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "save": {
      const submission = parseWithZod(formData, { schema: ruleSchema });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const known = new Set((await siteChoices()).map((s) => s.id));
      if (submission.value.scope === "sites" && submission.value.siteIds?.some((id) => !known.has(id))) {
        return data({ result: submission.reply({ fieldErrors: { siteIds: ["A chosen site no longer exists"] } }) }, { status: 400 });
      }
      const outcome = await updateRule(user.id, rule.id, ruleFromInput(submission.value));
      throw redirect(`/alert-rules/${rule.id}?saved=${outcome}`);
    }
    case "toggle": {
      const enabled = formData.get("enabled") === "true";
      const changed = await setRuleEnabled(user.id, rule.id, enabled);
      throw redirect(`/alert-rules/${rule.id}?saved=${changed ? (enabled ? "enabled" : "disabled") : "unchanged"}`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

const SAVED = {
  created: "The rule is saved. Its history is being checked in the background; new readings are checked as they arrive.",
  saved: "The rule is saved. Its events are being brought in line with the new settings in the background.",
  unchanged: "Nothing to save: the rule was already like that.",
  enabled: "The rule is on.",
  disabled: "The rule is off: new readings are no longer checked against it. Its events stay listed.",
};

export default function AlertRule({ loaderData, actionData }: Route.ComponentProps) {
  const { rule, canEdit, counts, form, history } = loaderData;
  return (
    <div className="max-w-3xl space-y-5">
      <BackLink to="/alert-rules">Alert rules</BackLink>
      <h1>{rule.name}</h1>
      <SavedNotice messages={SAVED} />
      <section className="card space-y-2" aria-labelledby="rule-summary">
        <h2 id="rule-summary" className="text-base">What it checks</h2>
        <dl className="grid gap-x-4 gap-y-1 sm:grid-cols-[12rem_1fr]">
          <dt className="font-semibold">Parameter</dt>
          <dd>{rule.parameter}</dd>
          <dt className="font-semibold">Condition</dt>
          <dd>
            {rule.condition}: {rule.settings}
          </dd>
          <dt className="font-semibold">Where</dt>
          <dd>{rule.scope}</dd>
          <dt className="font-semibold">Tells</dt>
          <dd>
            <RolesText roles={rule.notifyRoles} />
            {rule.email ? `, and by e-mail (at most ${rule.emailsPerHour} an hour)` : ""}
          </dd>
          <dt className="font-semibold">State</dt>
          <dd>
            <EnabledMark enabled={rule.enabled} />
          </dd>
          <dt className="font-semibold">Events so far</dt>
          <dd>
            {counts.open ?? 0} open, {counts.closed ?? 0} closed{counts.withdrawn ? `, ${counts.withdrawn} no longer in the data` : ""}
            {canEdit ? (
              <>
                {" "}
                · <Link to="/exceedances" className="text-lake-700 underline">Exceedances</Link>
              </>
            ) : null}
          </dd>
          <dt className="font-semibold">Last changed</dt>
          <dd>{rule.updated}</dd>
        </dl>
        <p className="text-sm text-ink-700">{rule.help}</p>
        {rule.guidelineSource ? (
          <p className="text-sm">
            <span className="font-semibold">Source: </span>
            {rule.guidelineSource}
          </p>
        ) : null}
        {rule.shipped ? <p className="text-sm text-ink-500">One of the rules Ripplemark starts with; change it to fit your sites and permits.</p> : null}
      </section>
      <ScreeningCaution />
      <RuleHistory history={history} />
      {canEdit && form ? (
        <>
          <Form method="post">
            <input type="hidden" name="intent" value="toggle" />
            <input type="hidden" name="enabled" value={rule.enabled ? "false" : "true"} />
            <button type="submit" className="btn-quiet">{rule.enabled ? "Turn the rule off" : "Turn the rule on"}</button>
          </Form>
          <h2>Change the rule</h2>
          <RuleForm defaultValue={form.defaultValue} lastResult={actionData?.result} sites={form.sites} submitLabel="Save changes" />
        </>
      ) : (
        <p className="text-ink-700">Only environmental officers and administrators can change alert rules.</p>
      )}
    </div>
  );
}

function RuleHistory({ history }: { history: Route.ComponentProps["loaderData"]["history"] }) {
  return (
    <section className="card space-y-3" aria-labelledby="rule-history">
      <h2 id="rule-history" className="text-base">History of this rule</h2>
      {history.length === 0 ? (
        <p className="text-ink-700">No saved versions are recorded.</p>
      ) : (
        <ol className="space-y-3" data-testid="rule-history">
          {history.map((h) => (
            <li key={h.id} className="border-l-2 border-ink-200 pl-3">
              <p className="text-sm">
                <span className="font-semibold">{h.action === "created" ? "Created" : "Changed"}</span> {h.at} by {h.by}
              </p>
              {h.changes.length === 0 ? (
                <p className="text-sm text-ink-500">Saved with nothing that shows here changed.</p>
              ) : (
                <dl className="grid gap-x-3 text-sm sm:grid-cols-[8rem_1fr]">
                  {h.changes.map((c) => (
                    <div key={c.label} className="contents">
                      <dt className="text-ink-500">{c.label}</dt>
                      <dd>
                        {c.before !== null ? (
                          <>
                            <del className="text-ink-500">{c.before}</del>
                            <span aria-hidden="true"> → </span>
                            <span className="sr-only"> changed to </span>
                          </>
                        ) : null}
                        <ins className="no-underline">{c.after}</ins>
                      </dd>
                    </div>
                  ))}
                </dl>
              )}
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}
