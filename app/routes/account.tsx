import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { newPasswordFields, PASSWORD_MIN_LENGTH } from "#app/utils/auth-schemas.ts";
import type { Route } from "./+types/account";
import { Field, FormErrors } from "#app/components/forms.tsx";
import { findPersonById } from "#app/models/person.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { db } from "#app/utils/db.server.ts";
import { hashPassword, verifyPassword } from "#app/utils/password.server.ts";
import { ANY_ROLE, ROLE_LABELS } from "#app/utils/permissions.ts";
import { createSession, revokeAllSessions, sessionCookie } from "#app/utils/session.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Ripplemark" }];

const passwordSchema = z
  .object({
    intent: z.literal("password"),
    current: z.string({ error: "Enter your current password" }),
    ...newPasswordFields,
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ" });

const digestSchema = z.object({ intent: z.literal("digest"), weeklyDigest: z.stringbool().default(false) });

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const person = await findPersonById(user.id);
  if (!person) throw redirect("/sign-in");
  return { name: person.name, email: person.email, role: person.role, weeklyDigest: person.weekly_digest };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "digest": {
      const submission = parseWithZod(formData, { schema: digestSchema });
      if (submission.status !== "success") return data({ intent: "digest", result: submission.reply() }, { status: 400 });
      await db.updateTable("person").set({ weekly_digest: submission.value.weeklyDigest, updated_at: new Date() }).where("id", "=", user.id).execute();
      return { intent: "digest", result: submission.reply(), saved: "Your e-mail preference is saved." };
    }
    case "password": {
      const submission = parseWithZod(formData, { schema: passwordSchema });
      if (submission.status !== "success") {
        return data({ intent: "password", result: submission.reply({ hideFields: ["current", "password", "confirm"] }) }, { status: 400 });
      }
      const row = await db.selectFrom("person").select("password_hash").where("id", "=", user.id).executeTakeFirstOrThrow();
      if (!(await verifyPassword(submission.value.current, row.password_hash))) {
        return data(
          { intent: "password", result: submission.reply({ fieldErrors: { current: ["That is not your current password"] }, hideFields: ["current", "password", "confirm"] }) },
          { status: 400 },
        );
      }
      await db.updateTable("person").set({ password_hash: await hashPassword(submission.value.password), updated_at: new Date() }).where("id", "=", user.id).execute();
      await revokeAllSessions(user.id);
      throw redirect("/account?changed=1", { headers: { "Set-Cookie": await createSession(user.id, request) } });
    }
    case "sign-out-everywhere": {
      await revokeAllSessions(user.id);
      throw redirect("/sign-in", { headers: { "Set-Cookie": await sessionCookie().serialize("", { maxAge: 0 }) } });
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const [pwForm, pw] = useForm({
    id: "password-form",
    lastResult: actionData?.intent === "password" ? actionData.result : undefined,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: passwordSchema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <div className="max-w-2xl space-y-6">
      <h1>Your account</h1>
      <section className="card" aria-labelledby="who">
        <h2 id="who">{loaderData.name}</h2>
        <p className="text-ink-700">{loaderData.email} · {ROLE_LABELS[loaderData.role]}</p>
      </section>
      <section className="card" aria-labelledby="mail-prefs">
        <h2 id="mail-prefs">E-mail</h2>
        <Form method="post" className="mt-2 space-y-3">
          <input type="hidden" name="intent" value="digest" />
          <label className="flex items-center gap-2">
            <input type="checkbox" name="weeklyDigest" value="true" defaultChecked={loaderData.weeklyDigest} />
            Send me the weekly site digest every Monday morning
          </label>
          <button className="btn-quiet" type="submit" disabled={busy}>Save preference</button>
          {actionData && "saved" in actionData ? <p role="status" className="text-reed-700">{actionData.saved}</p> : null}
        </Form>
      </section>
      <section className="card" aria-labelledby="pw-title">
        <h2 id="pw-title">Change password</h2>
        <Form method="post" className="mt-2 space-y-3" {...getFormProps(pwForm)}>
          <input type="hidden" name="intent" value="password" />
          <FormErrors errors={pwForm.errors} />
          <Field label="Current password" meta={pw.current} type="password" autoComplete="current-password" />
          <Field label="New password" meta={pw.password} type="password" autoComplete="new-password" hint={`At least ${PASSWORD_MIN_LENGTH} characters. Changing it signs you out everywhere else.`} />
          <Field label="New password again" meta={pw.confirm} type="password" autoComplete="new-password" />
          <button className="btn" type="submit" disabled={busy}>Change password</button>
        </Form>
      </section>
      <section className="card" aria-labelledby="sessions-title">
        <h2 id="sessions-title">Sessions</h2>
        <Form method="post" className="mt-2">
          <input type="hidden" name="intent" value="sign-out-everywhere" />
          <button className="btn-quiet" type="submit" disabled={busy}>Sign out on every device</button>
        </Form>
      </section>
    </div>
  );
}
