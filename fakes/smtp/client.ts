/**
 * Typed client for the SMTP fake's HTTP API (tests and the admin outbox page).
 * `baseUrl` is the fake's HTTP URL, e.g. http://127.0.0.1:54326
 */

export interface MessageSummary {
  id: string;
  /** ISO 8601, when the fake accepted the message. */
  receivedAt: string;
  /** The From header as written, e.g. `Ripplemark <no-reply@ripplemark.test>`. */
  from: string;
  /** Addresses in the To header (lower-cased). */
  to: string[];
  subject: string;
}

export interface StoredMessage extends MessageSummary {
  /** SMTP envelope: MAIL FROM and RCPT TO, which include Bcc recipients. */
  envelope: { from: string | null; to: string[] };
  fromAddress: string | null;
  cc: string[];
  replyTo: string | null;
  messageId: string | null;
  /** The Date header, ISO 8601. */
  date: string | null;
  text: string | null;
  html: string | null;
  /** Selected headers (lower-case names): message-id, date, reply-to, cc, content-type, list-*, x-*, … */
  headers: Record<string, string>;
  attachments: Array<{ filename: string | null; contentType: string; size: number }>;
  /** Size of the raw message in bytes. */
  size: number;
}

export interface ListOptions {
  /** Only messages addressed to this address (To, Cc or envelope recipient; case-insensitive). */
  to?: string;
}

async function asJson<T>(res: Response, what: string): Promise<T> {
  if (!res.ok) {
    const body = await res.text().catch(() => "");
    throw new Error(`${what}: HTTP ${res.status} ${body}`.trim());
  }
  return (await res.json()) as T;
}

function base(baseUrl: string): string {
  return baseUrl.replace(/\/+$/, "");
}

/** Newest first. */
export async function listMessages(baseUrl: string, options: ListOptions = {}): Promise<MessageSummary[]> {
  const params = new URLSearchParams();
  if (options.to) params.set("to", options.to);
  const qs = params.size ? `?${params}` : "";
  const body = await asJson<{ messages: MessageSummary[] }>(await fetch(`${base(baseUrl)}/messages${qs}`), "listMessages");
  return body.messages;
}

/** The full message, or null when there is no message with that id. */
export async function getMessage(baseUrl: string, id: string): Promise<StoredMessage | null> {
  const res = await fetch(`${base(baseUrl)}/messages/${encodeURIComponent(id)}`);
  if (res.status === 404) return null;
  return asJson<StoredMessage>(res, "getMessage");
}

/** Deletes every captured message; resolves to how many were removed. */
export async function clearMessages(baseUrl: string): Promise<number> {
  const body = await asJson<{ deleted: number }>(await fetch(`${base(baseUrl)}/messages`, { method: "DELETE" }), "clearMessages");
  return body.deleted;
}

/**
 * Polls until a message matching `predicate` arrives and returns it in full.
 * Rejects after `timeoutMs`.
 */
export async function waitForMessage(
  baseUrl: string,
  predicate: (message: MessageSummary) => boolean = () => true,
  timeoutMs = 5000,
  options: ListOptions & { intervalMs?: number } = {},
): Promise<StoredMessage> {
  const deadline = Date.now() + timeoutMs;
  const interval = options.intervalMs ?? 100;
  for (;;) {
    const match = (await listMessages(baseUrl, options)).find(predicate);
    if (match) {
      const full = await getMessage(baseUrl, match.id);
      if (full) return full;
    }
    if (Date.now() >= deadline) {
      throw new Error(`waitForMessage: no matching message within ${timeoutMs} ms`);
    }
    await new Promise((r) => setTimeout(r, Math.min(interval, Math.max(0, deadline - Date.now()))));
  }
}
