import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/person";
import { ErrorList, FormErrors, SelectField } from "#app/components/forms.tsx";
import { sendInviteMail } from "#app/models/account-mail.server.ts";
import { createPasswordToken } from "#app/models/password-token.server.ts";
import {
  assignSites,
  changePersonRole,
  disablePerson,
  enablePerson,
  findPersonForAdmin,
  listAssignedSiteIds,
  recordInviteResent,
} from "#app/models/person.server.ts";
import { listSiteOptions } from "#app/models/site.server.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY, ROLE_LABELS, ROLES } from "#app/utils/permissions.ts";
import { auditLines, idParam, notFound } from "./+shared/helpers.server.ts";
import { roleSchema, sitesSchema } from "./+shared/schemas.ts";
import { AuditTrail, BackLink, PersonStatusBadge, ProblemNotice, SavedNotice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.person.name ?? "Person"} · People · Ripplemark` }];

const SELF_ROLE = "You cannot remove your own administrator role. Ask another administrator to do it.";
const SELF_DISABLE = "You cannot disable your own account. Ask another administrator to do it.";

const SAVED: Record<string, string> = {
  invited: "Invitation sent. They can choose a password with the link in the e-mail.",
  resent: "Invitation sent again. Earlier links no longer work.",
  role: "Role changed.",
  sites: "Site assignments saved.",
  disabled: "Account disabled. Every session of this person has ended.",
  enabled: "Account enabled again.",
  unchanged: "Nothing to change: that was already so.",
};
const PROBLEMS: Record<string, string> = {
  mail: "The account is created, but the invitation e-mail could not be sent. Try “Send the invitation again”.",
};

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.personId);
  const person = await findPersonForAdmin(id);
  if (!person) notFound("person");
  const [sites, assigned, history] = await Promise.all([listSiteOptions(), listAssignedSiteIds(id), auditLines("person", id)]);
  return {
    person: {
      id: person.id,
      name: person.name,
      email: person.email,
      role: person.role,
      status: person.status,
      since: formatInZone(person.created_at, "UTC"),
      disabledAt: person.disabled_at ? formatInZone(person.disabled_at, "UTC") : null,
    },
    isSelf: person.id === user.id,
    sites: sites.map((s) => ({ id: s.id, code: s.code, name: s.name })),
    assigned,
    history,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.personId);
  const person = await findPersonForAdmin(id);
  if (!person) notFound("person");
  const isSelf = id === user.id;
  const done = (key: string) => redirect(`/admin/people/${id}?saved=${key}`);
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "role": {
      const submission = parseWithZod(formData, { schema: roleSchema });
      if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
      if (isSelf && submission.value.role !== "admin") {
        return data({ intent, result: submission.reply({ fieldErrors: { role: [SELF_ROLE] } }) }, { status: 400 });
      }
      throw done((await changePersonRole(user.id, id, submission.value.role)) ? "role" : "unchanged");
    }
    case "sites": {
      const submission = parseWithZod(formData, { schema: sitesSchema });
      if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
      if (person.role !== "technician") {
        return data({ intent, result: submission.reply({ formErrors: ["Only field technicians have assigned sites."] }) }, { status: 400 });
      }
      const outcome = await assignSites(user.id, id, submission.value.siteIds);
      if (!outcome.ok) {
        return data({ intent, result: submission.reply({ fieldErrors: { siteIds: ["One of those sites no longer exists; reload the page"] } }) }, { status: 400 });
      }
      throw done(outcome.changed ? "sites" : "unchanged");
    }
    case "disable": {
      if (isSelf) return data({ intent, result: undefined, problem: SELF_DISABLE }, { status: 400 });
      throw done((await disablePerson(user.id, id)) ? "disabled" : "unchanged");
    }
    case "enable": {
      throw done((await enablePerson(user.id, id)) ? "enabled" : "unchanged");
    }
    case "resend": {
      if (person.status !== "invited") {
        const problem = person.status === "disabled"
          ? "This account is disabled; enable it before sending the invitation again."
          : "This person has already chosen a password; they can use “Forgot your password?” if needed.";
        return data({ intent, result: undefined, problem }, { status: 400 });
      }
      const token = await createPasswordToken(id, "invite");
      try {
        await sendInviteMail(person, token, user.name);
      } catch (error) {
        console.error("[admin] invitation mail failed:", error instanceof Error ? error.message : error);
        throw redirect(`/admin/people/${id}?problem=mail`);
      }
      await recordInviteResent(user.id, id);
      throw done("resent");
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

export default function Person({ loaderData, actionData }: Route.ComponentProps) {
  const { person, isSelf, sites, assigned, history } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const result = (intent: string) => (actionData?.intent === intent ? actionData.result : undefined);
  const [roleForm, roleFields] = useForm({
    id: "role-form",
    lastResult: result("role"),
    defaultValue: { role: person.role },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: roleSchema }),
  });
  const [sitesForm, sitesFields] = useForm({
    id: "sites-form",
    lastResult: result("sites"),
    onValidate: ({ formData }) => parseWithZod(formData, { schema: sitesSchema }),
  });
  const problem = actionData && "problem" in actionData ? actionData.problem : undefined;
  return (
    <div className="max-w-3xl space-y-6">
      <BackLink to="/admin/people">All people</BackLink>
      <header>
        <h1>{person.name}</h1>
        <p className="mt-1 flex flex-wrap items-center gap-2 text-ink-700">
          <span>{person.email}</span>·<span>{ROLE_LABELS[person.role]}</span>·<PersonStatusBadge status={person.status} />
          {isSelf ? <span className="text-ink-500">(this is you)</span> : null}
        </p>
        <p className="text-sm text-ink-500">
          Account created {person.since}
          {person.disabledAt ? `; disabled ${person.disabledAt}` : ""}.
        </p>
      </header>
      <SavedNotice messages={SAVED} />
      <ProblemNotice messages={PROBLEMS} />
      {problem ? <p role="alert" className="rounded border border-brick-600 bg-brick-100 px-3 py-2 text-brick-700">{problem}</p> : null}

      <section className="card" aria-labelledby="role-title">
        <h2 id="role-title">Role</h2>
        <Form method="post" className="mt-2 flex flex-wrap items-start gap-3" {...getFormProps(roleForm)}>
          <input type="hidden" name="intent" value="role" />
          <SelectField
            className="min-w-64"
            label="Role"
            meta={roleFields.role}
            options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))}
            hint={isSelf ? "You can change other people’s roles, not your own administrator role." : undefined}
          />
          <button type="submit" className="btn mt-7" disabled={busy}>Change role</button>
        </Form>
      </section>

      {person.role === "technician" ? (
        <section className="card" aria-labelledby="sites-title">
          <h2 id="sites-title">Assigned sites</h2>
          <p className="mt-1 text-ink-700">A field technician sees their assigned sites first and uploads files for them.</p>
          {sites.length === 0 ? (
            <p className="mt-2 text-ink-500">There are no sites yet.</p>
          ) : (
            <Form method="post" className="mt-2 space-y-3" {...getFormProps(sitesForm)}>
              <input type="hidden" name="intent" value="sites" />
              <FormErrors id={sitesForm.errorId} errors={sitesForm.errors} />
              <fieldset aria-describedby={sitesFields.siteIds.errors ? sitesFields.siteIds.errorId : undefined}>
                <legend className="field-label">Sites on this person’s round</legend>
                <div className="grid gap-1 sm:grid-cols-2">
                  {sites.map((s) => (
                    <label key={s.id} className="flex items-center gap-2">
                      <input type="checkbox" name="siteIds" value={s.id} defaultChecked={assigned.includes(s.id)} />
                      <span><span className="font-semibold">{s.code}</span> {s.name}</span>
                    </label>
                  ))}
                </div>
                <ErrorList id={sitesFields.siteIds.errorId} errors={sitesFields.siteIds.errors} />
              </fieldset>
              <button type="submit" className="btn" disabled={busy}>Save assignments</button>
            </Form>
          )}
        </section>
      ) : null}

      <section className="card space-y-3" aria-labelledby="access-title">
        <h2 id="access-title">Access</h2>
        {person.status === "invited" ? (
          <Form method="post" className="flex flex-wrap items-center gap-3">
            <input type="hidden" name="intent" value="resend" />
            <button type="submit" className="btn-quiet" disabled={busy}>Send the invitation again</button>
            <span className="text-sm text-ink-500">A new link is sent; the earlier one stops working.</span>
          </Form>
        ) : null}
        {person.status === "disabled" ? (
          <Form method="post" className="flex flex-wrap items-center gap-3">
            <input type="hidden" name="intent" value="enable" />
            <button type="submit" className="btn" disabled={busy}>Enable the account</button>
            <span className="text-sm text-ink-500">They can sign in again with their existing password.</span>
          </Form>
        ) : isSelf ? (
          <p className="text-ink-700">You cannot disable your own account.</p>
        ) : (
          <Form method="post" className="flex flex-wrap items-center gap-3">
            <input type="hidden" name="intent" value="disable" />
            <button type="submit" className="btn btn-danger" disabled={busy}>Disable the account</button>
            <span className="text-sm text-ink-500">Signs them out everywhere at once and stops sign-in. Their records stay.</span>
          </Form>
        )}
      </section>

      <AuditTrail events={history} headingId="person-history" />
      <p className="text-sm text-ink-500">Times are in UTC.</p>
    </div>
  );
}
