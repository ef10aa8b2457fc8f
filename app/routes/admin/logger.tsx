import { parseWithZod } from "@conform-to/zod/v4";
import { data, redirect } from "react-router";
import type { Route } from "./+types/logger";
import { formatInZone, wallTimeToInstant } from "#app/lib/zoned-time.ts";
import { deployLogger, endDeployment, findLogger, listDeployments, loggerSerialTaken, saveLogger } from "#app/models/logger.server.ts";
import { findSite, listSiteOptions } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { DeployForm, EndDeploymentForm } from "./+shared/deployment-forms.tsx";
import { auditLines, idParam, notFound } from "./+shared/helpers.server.ts";
import { formatInterval, LoggerForm } from "./+shared/logger-form.tsx";
import { deploySchema, endDeploymentSchema, loggerSchema } from "./+shared/schemas.ts";
import { AuditTrail, BackLink, SavedNotice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Logger ${data?.logger.serial ?? ""} · Ripplemark` }];

const SERIAL_TAKEN = "Another logger already has this serial number";
/** Clocks on phones and laptops drift; a start a few minutes ahead is still "now". */
const FUTURE_SLACK_MS = 10 * 60_000;

const TIME_PROBLEMS = {
  format: "Enter a date and time, such as 2025-03-14 09:30",
  nonexistent: "That time does not exist at the site: the clocks went forward then",
  future: "That time is still to come; record the deployment once the logger is in place",
};

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.loggerId);
  const logger = await findLogger(id);
  if (!logger) notFound("logger");
  const [deployments, sites, history] = await Promise.all([listDeployments(id), listSiteOptions(), auditLines("logger", id)]);
  const open = deployments.find((d) => d.deployed_until === null);
  return {
    logger: {
      id: logger.id,
      serial: logger.serial,
      model: logger.model,
      intervalMinutes: String(logger.logging_interval_s / 60),
      interval: formatInterval(logger.logging_interval_s),
      notes: logger.notes,
    },
    current: open ? { siteLabel: `${open.siteCode} ${open.siteName}`, timeZone: open.siteTimeZone } : null,
    deployments: deployments.map((d) => ({
      id: d.id,
      siteId: d.siteId,
      site: `${d.siteCode} ${d.siteName}`,
      from: formatInZone(d.deployed_from, d.siteTimeZone),
      until: d.deployed_until ? formatInZone(d.deployed_until, d.siteTimeZone) : null,
    })),
    sites: sites.map((s) => ({ id: s.id, code: s.code, name: s.name, timeZone: s.time_zone })),
    history,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ADMIN_ONLY });
  const id = idParam(params.loggerId);
  if (!(await findLogger(id))) notFound("logger");
  const formData = await request.formData();
  const intent = formData.get("intent");
  const done = (key: string) => redirect(`/admin/loggers/${id}?saved=${key}`);
  switch (intent) {
    case "save": {
      const submission = parseWithZod(formData, { schema: loggerSchema });
      if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
      const taken = () => data({ intent, result: submission.reply({ fieldErrors: { serial: [SERIAL_TAKEN] } }) }, { status: 400 });
      const v = submission.value;
      if (await loggerSerialTaken(v.serial, id)) return taken();
      const outcome = await saveLogger(user.id, id, { serial: v.serial, model: v.model, logging_interval_s: Math.round(v.intervalMinutes * 60), notes: v.notes });
      if (outcome === "taken") return taken();
      throw done(outcome);
    }
    case "deploy": {
      const submission = parseWithZod(formData, { schema: deploySchema });
      if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
      const fail = (field: string, message: string) =>
        data({ intent, result: submission.reply({ fieldErrors: { [field]: [message] } }) }, { status: 400 });
      const site = await findSite(submission.value.siteId);
      if (!site) return fail("siteId", "Choose a site from the list");
      const from = wallTimeToInstant(submission.value.deployedFrom, site.time_zone);
      if (!from.ok) return fail("deployedFrom", TIME_PROBLEMS[from.reason]);
      if (from.instant.getTime() > Date.now() + FUTURE_SLACK_MS) return fail("deployedFrom", TIME_PROBLEMS.future);
      const outcome = await deployLogger(user.id, { loggerId: id, siteId: site.id, from: from.instant });
      if (!outcome.ok) return fail(outcome.problem.field, outcome.problem.message);
      throw done("deployed");
    }
    case "end-deployment": {
      const submission = parseWithZod(formData, { schema: endDeploymentSchema });
      if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
      const fail = (message: string) => data({ intent, result: submission.reply({ fieldErrors: { deployedUntil: [message] } }) }, { status: 400 });
      const open = (await listDeployments(id)).find((d) => d.deployed_until === null);
      if (!open) return fail("This logger is not deployed anywhere");
      const until = wallTimeToInstant(submission.value.deployedUntil, open.siteTimeZone);
      if (!until.ok) return fail(TIME_PROBLEMS[until.reason]);
      if (until.instant.getTime() > Date.now() + FUTURE_SLACK_MS) return fail("That time is still to come; end the deployment once the logger is out");
      const outcome = await endDeployment(user.id, { loggerId: id, until: until.instant });
      if (!outcome.ok) return fail(outcome.problem.message);
      throw done("ended");
    }
    default:
      throw data("Unknown action.", { status: 400 });
  }
}

const SAVED = {
  created: "Logger added. Deploy it at a site below.",
  saved: "Changes saved.",
  unchanged: "Nothing to save: the logger was already like that.",
  deployed: "Deployment recorded.",
  ended: "Deployment ended.",
};

export default function Logger({ loaderData, actionData }: Route.ComponentProps) {
  const { logger, current, deployments, sites, history } = loaderData;
  const result = (intent: string) => (actionData?.intent === intent ? actionData.result : undefined);
  return (
    <div className="max-w-3xl space-y-6">
      <BackLink to="/admin/loggers">All loggers</BackLink>
      <header>
        <h1>Logger {logger.serial}</h1>
        <p className="text-ink-700">
          {logger.model || "Model not recorded"} · records every {logger.interval} ·{" "}
          {current ? `deployed at ${current.siteLabel}` : "not deployed"}
        </p>
      </header>
      <SavedNotice messages={SAVED} />
      <section className="card" aria-labelledby="logger-details">
        <h2 id="logger-details" className="mb-3">Details</h2>
        <LoggerForm
          lastResult={result("save")}
          submitLabel="Save changes"
          defaultValue={{ serial: logger.serial, model: logger.model, intervalMinutes: logger.intervalMinutes, notes: logger.notes }}
        />
      </section>
      <section className="card" aria-labelledby="logger-deploy">
        <h2 id="logger-deploy">Deploy at a site</h2>
        <DeployForm sites={sites} lastResult={result("deploy")} current={current?.siteLabel ?? null} />
        {current ? (
          <div className="mt-4 border-t border-ink-100 pt-3">
            <h3 className="font-semibold">Taken out without a new site?</h3>
            <EndDeploymentForm siteLabel={current.siteLabel} timeZone={current.timeZone} lastResult={result("end-deployment")} />
          </div>
        ) : null}
      </section>
      <section className="card" aria-labelledby="logger-deployments">
        <h2 id="logger-deployments">Deployments</h2>
        {deployments.length === 0 ? (
          <p className="mt-2 text-ink-500">Never deployed.</p>
        ) : (
          <table className="data-table mt-2">
            <caption className="sr-only">Deployments of logger {logger.serial}, newest first, in each site’s local time</caption>
            <thead>
              <tr>
                <th scope="col">Site</th>
                <th scope="col">From</th>
                <th scope="col">Until</th>
              </tr>
            </thead>
            <tbody>
              {deployments.map((d) => (
                <tr key={d.id}>
                  <th scope="row" className="border-b border-ink-100 font-normal">{d.site}</th>
                  <td>{d.from}</td>
                  <td>{d.until ?? <span className="font-semibold">still there</span>}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <AuditTrail events={history} headingId="logger-history" />
      <p className="text-sm text-ink-500">Change history times are in UTC.</p>
    </div>
  );
}
