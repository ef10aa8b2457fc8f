import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/sign-in";
import { AuthFrame } from "#app/components/auth-frame.tsx";
import { Field, FormErrors } from "#app/components/forms.tsx";
import { assertSameOrigin, authenticator, getOptionalUser, safeRedirect, SignInError } from "#app/utils/auth.server.ts";
import { signInSchema } from "#app/utils/auth-schemas.ts";
import { isDatabaseUnavailable } from "#app/utils/db-errors.server.ts";
import { createSession } from "#app/utils/session.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  // Public page; a signed-in person is sent on.
  if (await getOptionalUser(request)) throw redirect("/");
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const formData = await request.clone().formData();
  const submission = parseWithZod(formData, { schema: signInSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  }
  let user;
  try {
    user = await authenticator.authenticate("form", request);
  } catch (error) {
    if (error instanceof SignInError) {
      return data({ result: submission.reply({ formErrors: [error.message], hideFields: ["password"] }) }, { status: error.status });
    }
    if (isDatabaseUnavailable(error)) {
      const message = "Ripplemark cannot reach its database just now. Try again in a minute; tell an administrator if it goes on.";
      return data({ result: submission.reply({ formErrors: [message], hideFields: ["password"] }) }, { status: 503, headers: { "Retry-After": "30" } });
    }
    throw error;
  }
  const setCookie = await createSession(user.id, request);
  throw redirect(safeRedirect(submission.value.redirectTo), { headers: { "Set-Cookie": setCookie } });
}

export default function SignIn({ actionData }: Route.ComponentProps) {
  const [params] = useSearchParams();
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: signInSchema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <AuthFrame title="Sign in">
      <Form method="post" className="space-y-4" {...getFormProps(form)}>
        <FormErrors id={form.errorId} errors={form.errors} />
        <input type="hidden" name="redirectTo" value={params.get("redirectTo") ?? "/"} />
        <Field label="E-mail" meta={fields.email} type="email" autoComplete="username" autoFocus />
        <Field label="Password" meta={fields.password} type="password" autoComplete="current-password" />
        <div className="flex items-center justify-between">
          <button className="btn" type="submit" disabled={navigation.state !== "idle"}>
            {navigation.state !== "idle" ? "Signing in…" : "Sign in"}
          </button>
          <Link to="/forgot-password" className="text-lake-700 underline">Forgot your password?</Link>
        </div>
      </Form>
    </AuthFrame>
  );
}
