import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/new";
import { createRule, siteChoices } from "#app/models/alert-rule.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { BackLink } from "#app/routes/admin/+shared/ui.tsx";
import { NEW_RULE_DEFAULTS, ruleFromInput, ruleSchema } from "./+shared/rule-schema.ts";
import { RuleForm } from "./+shared/rule-form.tsx";

export const meta: Route.MetaFunction = () => [{ title: "New alert rule · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  return { sites: await siteChoices() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const formData = await request.formData();
  if (formData.get("intent") !== "save") throw data("Unknown action.", { status: 400 });
  const submission = parseWithZod(formData, { schema: ruleSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const known = new Set((await siteChoices()).map((s) => s.id));
  if (submission.value.scope === "sites" && submission.value.siteIds?.some((id) => !known.has(id))) {
    return data({ result: submission.reply({ fieldErrors: { siteIds: ["A chosen site no longer exists"] } }) }, { status: 400 });
  }
  const id = await createRule(user.id, ruleFromInput(submission.value));
  throw redirect(`/alert-rules/${id}?saved=created`);
}

export default function NewAlertRule({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="max-w-3xl space-y-5">
      <BackLink to="/alert-rules">Alert rules</BackLink>
      <h1>New alert rule</h1>
      <RuleForm defaultValue={NEW_RULE_DEFAULTS} lastResult={actionData?.result} sites={loaderData.sites} submitLabel="Save the rule" />
    </div>
  );
}
