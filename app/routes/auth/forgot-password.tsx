import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/forgot-password";
import { AuthFrame } from "#app/components/auth-frame.tsx";
import { Field } from "#app/components/forms.tsx";
import { findPersonByEmail } from "#app/models/person.server.ts";
import { createPasswordToken } from "#app/models/password-token.server.ts";
import { sendResetMail } from "#app/models/account-mail.server.ts";
import { assertSameOrigin } from "#app/utils/auth.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Forgot password · Ripplemark" }];

const schema = z.object({
  email: z.string({ error: "Enter your e-mail address" }).trim().min(1, "Enter your e-mail address").email("Enter a valid e-mail address"),
});

export async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const submission = parseWithZod(await request.formData(), { schema });
  if (submission.status !== "success") return data({ result: submission.reply(), sent: false }, { status: 400 });
  const person = await findPersonByEmail(submission.value.email);
  if (person && !person.disabled_at && person.password_hash) {
    const token = await createPasswordToken(person.id, "reset");
    await sendResetMail(person, token);
  }
  // The same answer whether or not the account exists, so the page cannot be used to probe e-mails.
  return { result: submission.reply({ resetForm: true }), sent: true };
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <AuthFrame title="Forgot your password?">
      {actionData?.sent ? (
        <p role="status" className="mb-4 rounded bg-reed-100 px-3 py-2 text-reed-700">
          If that e-mail belongs to an active account, a reset link is on its way. It works once and expires in an hour.
        </p>
      ) : null}
      <Form method="post" className="space-y-4" {...getFormProps(form)}>
        <p className="text-ink-700">Enter the e-mail you sign in with and we will send you a link to choose a new password.</p>
        <Field label="E-mail" meta={fields.email} type="email" autoComplete="username" />
        <div className="flex items-center justify-between">
          <button className="btn" type="submit" disabled={navigation.state !== "idle"}>Send the link</button>
          <Link to="/sign-in" className="text-lake-700 underline">Back to sign in</Link>
        </div>
      </Form>
    </AuthFrame>
  );
}
