import { Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/outbox";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { listCapturedMail, mailboxUrl, OUTBOX_SORT_KEYS, readCapturedMail, sortCapturedMail } from "#app/models/outbox.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams, withParams } from "#app/utils/table-params.ts";
import { refusePost } from "./+shared/helpers.server.ts";
import { FilterForm } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Mail outbox · Administration · Ripplemark" }];

const filterSchema = z.object({
  to: z.string().trim().max(254).catch(""),
  message: z.string().regex(/^[A-Za-z0-9._-]{1,100}$/).optional().catch(undefined),
});

/**
 * The captured HTML goes into a sandboxed frame (no scripts, no forms, no same-origin access); this
 * policy also stops it fetching anything, so opening a mail does not call out to tracking pixels.
 */
const FRAME_POLICY = `<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">`;

export async function action({ request }: Route.ActionArgs) {
  return refusePost(request);
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const base = mailboxUrl();
  if (!base) return { capturing: false as const };
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: OUTBOX_SORT_KEYS, defaultSort: "received", defaultDir: "desc" });
  const filter = filterSchema.parse({ to: search.get("to") ?? "", message: search.get("message") || undefined });
  try {
    const all = sortCapturedMail(await listCapturedMail(base, filter.to || undefined), params.sort, params.dir);
    const { rows, table } = await loadPage(params, async () => all.length, async (q) => all.slice(q.offset, q.offset + q.limit));
    const open = filter.message ? await readCapturedMail(base, filter.message) : null;
    return {
      capturing: true as const,
      reachable: true as const,
      messages: rows.map((m) => ({ id: m.id, received: formatInZone(new Date(m.receivedAt), "UTC"), to: m.to.join(", "), subject: m.subject })),
      table,
      filter,
      open: open
        ? { ...open, received: formatInZone(new Date(open.receivedAt), "UTC"), html: open.html ? FRAME_POLICY + open.html : null }
        : null,
      missing: !!filter.message && !open,
    };
  } catch (error) {
    console.error("[outbox] mailbox not reachable:", error instanceof Error ? error.message : error);
    return { capturing: true as const, reachable: false as const };
  }
}

type Loaded = Extract<Route.ComponentProps["loaderData"], { reachable: true }>;
type MessageRow = Loaded["messages"][number];

export default function Outbox({ loaderData }: Route.ComponentProps) {
  if (!loaderData.capturing) {
    return (
      <div className="max-w-2xl space-y-3">
        <h1>Mail outbox</h1>
        <p className="card">
          Mail is sent to the SMTP server in this installation’s settings and is not captured here. This page lists mail
          only on development and test installations, where a local mail catcher receives it.
        </p>
      </div>
    );
  }
  if (!loaderData.reachable) {
    return (
      <div className="max-w-2xl space-y-3">
        <h1>Mail outbox</h1>
        <p role="alert" className="caution">
          The local mail catcher is not answering, so captured mail cannot be listed. Start the local services and reload this page.
        </p>
      </div>
    );
  }
  return <OutboxList data={loaderData} />;
}

function OutboxList({ data }: { data: Loaded }) {
  const { messages, table, filter, open, missing } = data;
  const columns: Column<MessageRow>[] = [
    { key: "received", header: "Received (UTC)", sortable: true, firstDir: "desc", render: (m) => m.received },
    { key: "to", header: "To", sortable: true, render: (m) => m.to },
    {
      key: "subject",
      header: "Subject",
      sortable: true,
      rowHeader: true,
      render: (m) => (
        <Link
          to={withParams(searchOf(table, filter), { message: m.id })}
          className="text-lake-700 underline"
          aria-current={open?.id === m.id ? "true" : undefined}
          preventScrollReset
        >
          {m.subject || "(no subject)"}
        </Link>
      ),
    },
  ];
  return (
    <div className="space-y-4">
      <h1>Mail outbox</h1>
      <p className="text-ink-700">Mail the app has sent, as captured by the local mail catcher. Nothing here reaches a real inbox.</p>
      <FilterForm label="Filter mail" clearTo="/admin/outbox" keep={{ sort: table.sort, dir: table.dir, size: table.pageSize }}>
        <div>
          <label htmlFor="outbox-to" className="field-label">Sent to</label>
          <input id="outbox-to" name="to" type="search" defaultValue={filter.to} className="field-input" placeholder="someone@example.org" />
        </div>
      </FilterForm>
      <DataTable columns={columns} rows={messages} rowKey={(m) => m.id} table={table} caption="Captured mail" captionDetail={filter.to ? `to ${filter.to}` : undefined} empty="No mail captured yet." />
      {missing ? <p role="alert" className="caution">That message is no longer in the mail catcher.</p> : null}
      {open ? <OpenMessage message={open} /> : null}
    </div>
  );
}

function searchOf(table: Loaded["table"], filter: Loaded["filter"]) {
  const p = new URLSearchParams({ sort: table.sort, dir: table.dir, page: String(table.page), size: String(table.pageSize) });
  if (filter.to) p.set("to", filter.to);
  return p.toString();
}

function OpenMessage({ message }: { message: NonNullable<Loaded["open"]> }) {
  return (
    <article className="card space-y-3" aria-labelledby="open-subject">
      <header>
        <h2 id="open-subject">{message.subject || "(no subject)"}</h2>
        <dl className="mt-1 grid grid-cols-[max-content_1fr] gap-x-4 text-sm">
          <dt className="font-semibold">From</dt>
          <dd>{message.from}</dd>
          <dt className="font-semibold">To</dt>
          <dd>{message.to.join(", ")}</dd>
          {message.cc.length ? (
            <>
              <dt className="font-semibold">Cc</dt>
              <dd>{message.cc.join(", ")}</dd>
            </>
          ) : null}
          <dt className="font-semibold">Received</dt>
          <dd>{message.received}</dd>
          {message.attachments.length ? (
            <>
              <dt className="font-semibold">Attachments</dt>
              <dd>{message.attachments.map((a) => `${a.filename ?? "unnamed"} (${a.contentType}, ${a.size} bytes)`).join("; ")}</dd>
            </>
          ) : null}
        </dl>
      </header>
      <section aria-labelledby="open-text">
        <h3 id="open-text" className="font-semibold">Plain text</h3>
        <pre className="mt-1 max-h-96 overflow-auto whitespace-pre-wrap break-words rounded bg-ink-50 p-3 text-sm">{message.text ?? "(no plain-text part)"}</pre>
      </section>
      {message.html ? (
        <section aria-labelledby="open-html">
          <h3 id="open-html" className="font-semibold">As HTML</h3>
          <iframe
            title={`HTML version of “${message.subject}”`}
            sandbox=""
            referrerPolicy="no-referrer"
            srcDoc={message.html}
            className="mt-1 h-96 w-full rounded border border-ink-200 bg-white"
          />
        </section>
      ) : null}
    </article>
  );
}
