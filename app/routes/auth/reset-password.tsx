import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { newPasswordFields, PASSWORD_MIN_LENGTH } from "#app/utils/auth-schemas.ts";
import type { Route } from "./+types/reset-password";
import { AuthFrame } from "#app/components/auth-frame.tsx";
import { Field, FormErrors } from "#app/components/forms.tsx";
import { checkPasswordToken, consumePasswordToken, TOKEN_PROBLEMS } from "#app/models/password-token.server.ts";
import { setPassword } from "#app/models/person.server.ts";
import { assertSameOrigin } from "#app/utils/auth.server.ts";
import { hashPassword } from "#app/utils/password.server.ts";
import { createSession, revokeAllSessions } from "#app/utils/session.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Choose a password · Ripplemark" }];

const schema = z
  .object({
    ...newPasswordFields,
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ" });

export async function loader({ params }: Route.LoaderArgs) {
  const check = await checkPasswordToken(params.token);
  if (!check.ok) return { problem: TOKEN_PROBLEMS[check.reason], name: null, purpose: null };
  return { problem: null, name: check.name, purpose: check.purpose };
}

export async function action({ request, params }: Route.ActionArgs) {
  assertSameOrigin(request);
  const check = await checkPasswordToken(params.token);
  if (!check.ok) return data({ result: undefined, problem: TOKEN_PROBLEMS[check.reason] }, { status: 410 });
  const submission = parseWithZod(await request.formData(), { schema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password", "confirm"] }), problem: null }, { status: 400 });
  }
  if (!(await consumePasswordToken(params.token))) {
    return data({ result: undefined, problem: TOKEN_PROBLEMS.used }, { status: 410 });
  }
  await setPassword(check.personId, await hashPassword(submission.value.password));
  // A new password ends every other session of this person.
  await revokeAllSessions(check.personId);
  throw redirect("/", { headers: { "Set-Cookie": await createSession(check.personId, request) } });
}

export default function ResetPassword({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const problem = actionData?.problem ?? loaderData.problem;
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldRevalidate: "onBlur",
  });
  if (problem) {
    return (
      <AuthFrame title="This link cannot be used">
        <p role="alert" className="text-ink-800">{problem}</p>
        <p className="mt-4 flex gap-3">
          <Link className="btn" to="/forgot-password">Ask for a new link</Link>
          <Link className="btn-quiet" to="/sign-in">Sign in</Link>
        </p>
      </AuthFrame>
    );
  }
  return (
    <AuthFrame title={loaderData.purpose === "invite" ? `Welcome, ${loaderData.name}` : "Choose a new password"}>
      <Form method="post" className="space-y-4" {...getFormProps(form)}>
        <FormErrors id={form.errorId} errors={form.errors} />
        <Field label="New password" meta={fields.password} type="password" autoComplete="new-password" hint={`At least ${PASSWORD_MIN_LENGTH} characters.`} />
        <Field label="The same password again" meta={fields.confirm} type="password" autoComplete="new-password" />
        <button className="btn" type="submit" disabled={navigation.state !== "idle"}>Save the password and sign in</button>
      </Form>
    </AuthFrame>
  );
}
