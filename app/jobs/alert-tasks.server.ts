// The alert jobs as graphile-worker tasks, registered by app/worker.ts (tests run them with
// graphile-worker's runOnce too).
import type { Task } from "graphile-worker";
import { runSendAlertEmail, type AlertEmailPayload } from "./alert-email.server.ts";
import { evaluateRuleOverHistory } from "./detect-exceedances.server.ts";

export const ALERT_TASKS: Record<"send-alert-email" | "evaluate-alert-rule", Task> = {
  "send-alert-email": async (payload) => {
    await runSendAlertEmail(payload as AlertEmailPayload);
  },
  "evaluate-alert-rule": async (payload) => {
    await evaluateRuleOverHistory((payload as { ruleId: string }).ruleId);
  },
};
