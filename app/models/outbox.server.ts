import { getMessage, listMessages, type MessageSummary } from "#fakes/smtp/client.ts";
import { getEnv } from "#app/utils/env.server.ts";
import type { SortDir } from "#app/utils/table-params.ts";

// Mail captured by the local SMTP fake, read over its HTTP API. In production MAILBOX_URL is unset:
// mail goes to the real SMTP server and nothing is captured.

export const OUTBOX_SORT_KEYS = ["received", "to", "subject"] as const;
export type OutboxSortKey = (typeof OUTBOX_SORT_KEYS)[number];

export function mailboxUrl(): string | null {
  return getEnv().MAILBOX_URL ?? null;
}

export async function listCapturedMail(baseUrl: string, to?: string): Promise<MessageSummary[]> {
  return listMessages(baseUrl, to ? { to } : {});
}

export function sortCapturedMail(messages: MessageSummary[], sort: OutboxSortKey, dir: SortDir) {
  const key = (m: MessageSummary) => (sort === "to" ? m.to.join(", ") : sort === "subject" ? m.subject.toLowerCase() : m.receivedAt);
  const sign = dir === "asc" ? 1 : -1;
  return [...messages].sort((a, b) => sign * key(a).localeCompare(key(b)) || b.receivedAt.localeCompare(a.receivedAt));
}

export async function readCapturedMail(baseUrl: string, id: string) {
  const m = await getMessage(baseUrl, id);
  if (!m) return null;
  // Only what the page shows.
  return {
    id: m.id,
    receivedAt: m.receivedAt,
    from: m.from,
    to: m.to,
    cc: m.cc,
    subject: m.subject,
    text: m.text,
    html: m.html,
    attachments: m.attachments.map((a) => ({ filename: a.filename, contentType: a.contentType, size: a.size })),
  };
}
