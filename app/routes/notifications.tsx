import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/notifications";
import { CONDITION_LABELS, PARAMETER_NAMES } from "#app/lib/quality/alert-rules.ts";
import { formatDuration, formatPeak, OUTCOME_LABELS, STATUS_LABELS } from "#app/lib/quality/exceedance-words.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { listNotifications, markRead, markUnread, NOTIFICATION_PAGE, unreadCount } from "#app/models/notification.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";

export const meta: Route.MetaFunction = () => [{ title: "Notifications · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const url = new URL(request.url);
  const unreadOnly = url.searchParams.get("show") === "unread";
  const before = z.coerce.number().int().positive().optional().catch(undefined).parse(url.searchParams.get("before") ?? undefined);
  const [rows, unread] = await Promise.all([listNotifications(user.id, { unreadOnly, before }), unreadCount(user.id)]);
  const page = rows.slice(0, NOTIFICATION_PAGE);
  return {
    unreadOnly,
    unread,
    nextBefore: rows.length > NOTIFICATION_PAGE ? page[page.length - 1].id : null,
    items: page.map((n) => {
      const unit = (n.params as { unit?: string } | null)?.unit;
      return {
        id: n.id,
        read: n.read_at !== null,
        when: formatInZone(n.created_at, n.timeZone),
        exceedanceId: n.exceedanceId,
        site: `${n.siteCode} · ${n.siteName}`,
        what: `${PARAMETER_NAMES[n.parameter]}: ${CONDITION_LABELS[n.condition].toLowerCase()}`,
        ruleName: n.ruleName,
        peak: formatPeak(n.condition, n.parameter, n.peak_value, unit),
        started: formatInZone(n.started_at, n.timeZone),
        duration: n.ended_at ? formatDuration(n.duration_s) : `${formatDuration(n.duration_s)} so far`,
        state: `${STATUS_LABELS[n.status]}${n.outcome ? ` · ${OUTCOME_LABELS[n.outcome]}` : ""}`,
      };
    }),
  };
}

const actionSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("read"), id: z.coerce.number().int().positive() }),
  z.object({ intent: z.literal("unread"), id: z.coerce.number().int().positive() }),
  z.object({ intent: z.literal("read-all") }),
]);

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const parsed = actionSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) throw data("Unknown action.", { status: 400 });
  const a = parsed.data;
  // Every change is limited to the signed-in person's own notifications.
  if (a.intent === "read") await markRead(user.id, { id: a.id });
  if (a.intent === "unread") await markUnread(user.id, a.id);
  if (a.intent === "read-all") await markRead(user.id, { all: true });
  throw redirect(new URL(request.url).pathname + new URL(request.url).search);
}

export default function Notifications({ loaderData }: Route.ComponentProps) {
  const { items, unread, unreadOnly, nextBefore } = loaderData;
  return (
    <div className="max-w-4xl space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>Notifications</h1>
        {unread > 0 ? (
          <Form method="post">
            <input type="hidden" name="intent" value="read-all" />
            <button type="submit" className="btn-quiet">Mark all {unread} as read</button>
          </Form>
        ) : null}
      </div>
      <p className="text-ink-700" data-testid="unread-summary">
        {unread === 0 ? "Nothing unread." : `${unread} unread.`}{" "}
        {unreadOnly ? <Link to="/notifications" className="text-lake-700 underline">Show all</Link> : <Link to="?show=unread" className="text-lake-700 underline">Show unread only</Link>}
      </p>
      {items.length === 0 ? (
        <p className="card text-ink-700">No notifications{unreadOnly ? " unread" : " yet"}. Alert rules that name your role tell you about new events here.</p>
      ) : (
        <ul className="space-y-2" data-testid="notification-list">
          {items.map((n) => (
            <li key={n.id} className={`card flex flex-wrap items-start justify-between gap-3 ${n.read ? "" : "border-l-4 border-l-brick-600"}`} data-read={n.read}>
              <div>
                <p className="text-sm text-ink-500">
                  {n.read ? "Read" : <strong className="text-brick-700">New</strong>} · {n.when}
                </p>
                <p>
                  <Link to={`/exceedances/${n.exceedanceId}`} className="font-semibold text-lake-700 underline">{n.site}</Link>: {n.what}, {n.peak}
                </p>
                <p className="text-sm text-ink-700">
                  Started {n.started} · {n.duration} · {n.state} · Rule: {n.ruleName}
                </p>
              </div>
              <Form method="post">
                <input type="hidden" name="intent" value={n.read ? "unread" : "read"} />
                <input type="hidden" name="id" value={n.id} />
                <button type="submit" className="btn-quiet py-0.5 text-sm">{n.read ? "Mark as unread" : "Mark as read"}</button>
              </Form>
            </li>
          ))}
        </ul>
      )}
      {nextBefore ? (
        <Link to={`?${new URLSearchParams({ ...(unreadOnly ? { show: "unread" } : {}), before: String(nextBefore) })}`} className="btn-quiet">Older notifications</Link>
      ) : null}
    </div>
  );
}
