import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/people";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { Field, FormErrors, SelectField } from "#app/components/forms.tsx";
import { sendInviteMail } from "#app/models/account-mail.server.ts";
import { createPasswordToken } from "#app/models/password-token.server.ts";
import {
  countPeople,
  emailTaken,
  invitePerson,
  listPeoplePage,
  PEOPLE_SORT_KEYS,
} from "#app/models/person.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY, ROLE_LABELS, ROLES } from "#app/utils/permissions.ts";
import { PERSON_STATUS_LABELS, PERSON_STATUSES } from "#app/utils/person-status.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { inviteSchema } from "./+shared/schemas.ts";
import { FilterForm, PersonStatusBadge } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "People · Administration · Ripplemark" }];

const TAKEN = "Someone already has an account with this e-mail address";

// Filters from the URL; anything unknown is ignored rather than refused (old bookmarks keep working).
const filterSchema = z.object({
  q: z.string().trim().transform((s) => s.slice(0, 100)).catch(""),
  role: z.enum(ROLES).optional().catch(undefined),
  status: z.enum(PERSON_STATUSES).optional().catch(undefined),
});

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: PEOPLE_SORT_KEYS, defaultSort: "name" });
  const filter = filterSchema.parse({
    q: search.get("q") ?? "",
    role: search.get("role") || undefined,
    status: search.get("status") || undefined,
  });
  const where = { role: filter.role, status: filter.status, search: filter.q || undefined };
  const { rows, table } = await loadPage(params, () => countPeople(where), (q) => listPeoplePage(where, q));
  return { people: rows, table, filter };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "invite": {
      const submission = parseWithZod(formData, { schema: inviteSchema });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const taken = () => data({ result: submission.reply({ fieldErrors: { email: [TAKEN] } }) }, { status: 400 });
      if (await emailTaken(submission.value.email)) return taken();
      const person = await invitePerson(user.id, submission.value);
      if (!person) return taken();
      const token = await createPasswordToken(person.id, "invite");
      try {
        await sendInviteMail(person, token, user.name);
      } catch (error) {
        console.error("[admin] invitation mail failed:", error instanceof Error ? error.message : error);
        throw redirect(`/admin/people/${person.id}?problem=mail`);
      }
      throw redirect(`/admin/people/${person.id}?saved=invited`);
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

type PersonRow = Route.ComponentProps["loaderData"]["people"][number];

const columns: Column<PersonRow>[] = [
  {
    key: "name",
    header: "Name",
    sortable: true,
    rowHeader: true,
    render: (p) => (
      <Link to={`/admin/people/${p.id}`} className="font-semibold text-lake-700 underline">
        {p.name}
      </Link>
    ),
  },
  { key: "email", header: "E-mail", sortable: true, render: (p) => p.email },
  { key: "role", header: "Role", sortable: true, render: (p) => ROLE_LABELS[p.role] },
  { key: "status", header: "Status", sortable: true, render: (p) => <PersonStatusBadge status={p.status} /> },
];

export default function People({ loaderData, actionData }: Route.ComponentProps) {
  const { people, table, filter } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "invite-form",
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: inviteSchema }),
    shouldRevalidate: "onBlur",
    defaultValue: { role: "technician" },
  });
  const detail = [
    filter.role ? `with role ${ROLE_LABELS[filter.role]}` : "",
    filter.status ? `who are ${PERSON_STATUS_LABELS[filter.status].toLowerCase()}` : "",
    filter.q ? `matching “${filter.q}”` : "",
  ]
    .filter(Boolean)
    .join(", ");
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>People</h1>
        <a href="#invite-title" className="btn">Invite someone</a>
      </div>
      <section aria-labelledby="people-list" className="space-y-3">
        <h2 id="people-list" className="sr-only">Everyone with an account</h2>
        <FilterForm label="Filter people" clearTo="/admin/people" keep={{ sort: table.sort, dir: table.dir, size: table.pageSize }}>
          <div>
            <label htmlFor="people-q" className="field-label">Name or e-mail contains</label>
            <input id="people-q" name="q" type="search" defaultValue={filter.q} className="field-input" />
          </div>
          <div>
            <label htmlFor="people-role" className="field-label">Role</label>
            <select id="people-role" name="role" defaultValue={filter.role ?? ""} className="field-input">
              <option value="">Any role</option>
              {ROLES.map((r) => (
                <option key={r} value={r}>{ROLE_LABELS[r]}</option>
              ))}
            </select>
          </div>
          <div>
            <label htmlFor="people-status" className="field-label">Status</label>
            <select id="people-status" name="status" defaultValue={filter.status ?? ""} className="field-input">
              <option value="">Any status</option>
              {PERSON_STATUSES.map((s) => (
                <option key={s} value={s}>{PERSON_STATUS_LABELS[s]}</option>
              ))}
            </select>
          </div>
        </FilterForm>
        <DataTable
          columns={columns}
          rows={people}
          rowKey={(p) => p.id}
          table={table}
          caption="People"
          captionDetail={detail}
          empty={filter.q || filter.role || filter.status ? "Nobody matches these filters." : "Nobody has an account yet."}
        />
      </section>
      <section className="card max-w-2xl scroll-mt-4" aria-labelledby="invite-title">
        <h2 id="invite-title">Invite someone</h2>
        <p className="mt-1 text-ink-700">
          They get an e-mail with a link to choose their password. Until then their status is “Invitation pending”.
        </p>
        <Form method="post" className="mt-3 grid gap-3 sm:grid-cols-2" {...getFormProps(form)}>
          <input type="hidden" name="intent" value="invite" />
          <FormErrors id={form.errorId} errors={form.errors} />
          <Field label="Name" meta={fields.name} autoComplete="off" />
          <Field label="E-mail" meta={fields.email} type="email" autoComplete="off" />
          <SelectField label="Role" meta={fields.role} options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))} />
          <div className="flex items-end">
            <button type="submit" className="btn" disabled={navigation.state !== "idle"}>
              {navigation.state === "submitting" ? "Sending the invitation…" : "Send the invitation"}
            </button>
          </div>
        </Form>
      </section>
    </div>
  );
}
