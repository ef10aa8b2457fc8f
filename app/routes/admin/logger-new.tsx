import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/logger-new";
import { createLogger, loggerSerialTaken } from "#app/models/logger.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { LoggerForm } from "./+shared/logger-form.tsx";
import { loggerSchema } from "./+shared/schemas.ts";
import { BackLink } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "New logger · Administration · Ripplemark" }];

const SERIAL_TAKEN = "Another logger already has this serial number";

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const submission = parseWithZod(await request.formData(), { schema: loggerSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const taken = () => data({ result: submission.reply({ fieldErrors: { serial: [SERIAL_TAKEN] } }) }, { status: 400 });
  const v = submission.value;
  if (await loggerSerialTaken(v.serial)) return taken();
  const logger = await createLogger(user.id, {
    serial: v.serial,
    model: v.model,
    logging_interval_s: Math.round(v.intervalMinutes * 60),
    notes: v.notes,
  });
  if (!logger) return taken();
  throw redirect(`/admin/loggers/${logger.id}?saved=created`);
}

export default function NewLogger({ actionData }: Route.ComponentProps) {
  return (
    <div className="max-w-3xl space-y-4">
      <BackLink to="/admin/loggers">All loggers</BackLink>
      <h1>New logger</h1>
      <section className="card" aria-label="Logger details">
        <LoggerForm lastResult={actionData?.result} defaultValue={{ intervalMinutes: "15" }} submitLabel="Add the logger" />
      </section>
      <p className="text-ink-700">After adding it, deploy it at a site from its page.</p>
    </div>
  );
}
