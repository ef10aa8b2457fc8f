/**
 * Local SMTP for development and tests. Accepts every message on loopback
 * (plain SMTP, no STARTTLS, any or no AUTH), keeps each one as a .eml file
 * plus a parsed .json record, and serves them over a small JSON API:
 *
 *   GET    /messages            newest first, summaries (?to=address filters)
 *   GET    /messages/:id        full message (text, html, headers, …)
 *   GET    /messages/:id/raw    the message as received (message/rfc822)
 *   DELETE /messages            remove all
 *   DELETE /messages/:id        remove one
 *
 * Run: npx tsx fakes/smtp/server.ts
 */
import { randomBytes } from "node:crypto";
import { mkdirSync } from "node:fs";
import { readFile, readdir, rename, rm, writeFile } from "node:fs/promises";
import http, { type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo, Server } from "node:net";
import { join, resolve } from "node:path";
import { simpleParser, type AddressObject, type ParsedMail } from "mailparser";
import { SMTPServer, type SMTPServerSession } from "smtp-server";
import { isMainModule } from "../shared/main.ts";
import type { MessageSummary, StoredMessage } from "./client.ts";

export type { MessageSummary, StoredMessage } from "./client.ts";

export interface SmtpFakeOptions {
  /** SMTP port. 0 = pick a free port. Default 54325. */
  smtpPort?: number;
  /** HTTP API port. 0 = pick a free port. Default 54326. */
  httpPort?: number;
  /** Where messages are kept (.eml + .json). Default `.data/mail`. */
  dir?: string;
  /** Largest accepted message in bytes. Default 20 MB. */
  sizeLimit?: number;
  /** Called with one line per accepted message. */
  log?: (line: string) => void;
}

export interface SmtpFake {
  smtpPort: number;
  /** Base URL of the JSON API, e.g. http://127.0.0.1:54326 */
  httpUrl: string;
  close(): Promise<void>;
}

export const SMTP_FAKE_DEFAULTS = {
  smtpPort: 54325,
  httpPort: 54326,
  dir: ".data/mail",
  sizeLimit: 20 * 1024 * 1024,
} as const;

export function smtpFakeOptionsFromEnv(env: NodeJS.ProcessEnv = process.env): SmtpFakeOptions {
  return {
    smtpPort: env.SMTP_FAKE_PORT ? Number(env.SMTP_FAKE_PORT) : SMTP_FAKE_DEFAULTS.smtpPort,
    httpPort: env.SMTP_FAKE_HTTP_PORT ? Number(env.SMTP_FAKE_HTTP_PORT) : SMTP_FAKE_DEFAULTS.httpPort,
    dir: env.SMTP_FAKE_DIR || SMTP_FAKE_DEFAULTS.dir,
    sizeLimit: env.SMTP_FAKE_SIZE_LIMIT ? Number(env.SMTP_FAKE_SIZE_LIMIT) : SMTP_FAKE_DEFAULTS.sizeLimit,
  };
}

const ID_FORMAT = /^\d{8}T\d{9}Z-[0-9a-f]{8}$/;
const KEPT_HEADERS = new Set([
  "message-id",
  "date",
  "reply-to",
  "cc",
  "in-reply-to",
  "references",
  "content-type",
  "mime-version",
  "auto-submitted",
  "precedence",
]);

function newId(at: Date): string {
  const stamp = at.toISOString().replace(/[-:.]/g, ""); // 20260102T030405678Z
  return `${stamp}-${randomBytes(4).toString("hex")}`;
}

function addresses(value: AddressObject | AddressObject[] | undefined): string[] {
  const list = value === undefined ? [] : Array.isArray(value) ? value : [value];
  const out: string[] = [];
  const walk = (entries: AddressObject["value"]) => {
    for (const entry of entries) {
      if (entry.address) out.push(entry.address.toLowerCase());
      if (entry.group) walk(entry.group);
    }
  };
  for (const obj of list) walk(obj.value);
  return out;
}

/** "Name <address>" for display (no RFC 5322 quoting), comma-separated. */
function display(value: AddressObject | AddressObject[] | undefined): string | null {
  if (value === undefined) return null;
  const list = Array.isArray(value) ? value : [value];
  const parts: string[] = [];
  for (const obj of list) {
    for (const entry of obj.value) {
      if (entry.group) parts.push(`${entry.name}: ${entry.group.map((g) => g.address ?? "").join(", ")};`);
      else if (entry.name && entry.address) parts.push(`${entry.name} <${entry.address}>`);
      else parts.push(entry.address ?? entry.name);
    }
  }
  return parts.join(", ");
}

function keptHeaders(parsed: ParsedMail): Record<string, string> {
  const out: Record<string, string> = {};
  for (const { key, line } of parsed.headerLines) {
    const name = key.toLowerCase();
    if (!KEPT_HEADERS.has(name) && !name.startsWith("x-") && !name.startsWith("list-")) continue;
    const colon = line.indexOf(":");
    const value = line.slice(colon + 1).replace(/\r?\n[ \t]+/g, " ").trim();
    out[name] = out[name] === undefined ? value : `${out[name]}, ${value}`;
  }
  return out;
}

function summarise(message: StoredMessage): MessageSummary {
  const { id, receivedAt, from, to, subject } = message;
  return { id, receivedAt, from, to, subject };
}

function sendJson(res: ServerResponse, status: number, body: unknown) {
  const text = JSON.stringify(body);
  res.writeHead(status, {
    "content-type": "application/json; charset=utf-8",
    "content-length": Buffer.byteLength(text),
    "cache-control": "no-store",
  });
  res.end(text);
}

export async function startSmtpFake(options: SmtpFakeOptions = {}): Promise<SmtpFake> {
  const dir = resolve(options.dir ?? SMTP_FAKE_DEFAULTS.dir);
  const sizeLimit = options.sizeLimit ?? SMTP_FAKE_DEFAULTS.sizeLimit;
  const log = options.log ?? (() => {});
  mkdirSync(dir, { recursive: true });

  // Messages in arrival order; the API lists them newest first.
  const messages: StoredMessage[] = [];
  for (const name of (await readdir(dir)).filter((n) => n.endsWith(".json")).sort()) {
    try {
      const stored = JSON.parse(await readFile(join(dir, name), "utf8")) as StoredMessage;
      if (ID_FORMAT.test(stored.id)) messages.push(stored);
    } catch {
      // A half-written or foreign file: skip it.
    }
  }
  messages.sort((a, b) => (a.receivedAt === b.receivedAt ? 0 : a.receivedAt < b.receivedAt ? -1 : 1));

  async function store(raw: Buffer, session: SMTPServerSession): Promise<StoredMessage> {
    const receivedAt = new Date();
    const id = newId(receivedAt);
    const parsed = await simpleParser(raw, { skipImageLinks: true });
    const message: StoredMessage = {
      id,
      receivedAt: receivedAt.toISOString(),
      envelope: {
        from: session.envelope.mailFrom ? session.envelope.mailFrom.address || null : null,
        to: session.envelope.rcptTo.map((r) => r.address.toLowerCase()),
      },
      from: display(parsed.from) ?? "",
      fromAddress: addresses(parsed.from)[0] ?? null,
      to: addresses(parsed.to),
      cc: addresses(parsed.cc),
      replyTo: display(parsed.replyTo),
      subject: parsed.subject ?? "",
      messageId: parsed.messageId ?? null,
      date: parsed.date ? parsed.date.toISOString() : null,
      text: parsed.text ?? null,
      html: typeof parsed.html === "string" ? parsed.html : null,
      headers: keptHeaders(parsed),
      attachments: parsed.attachments.map((a) => ({
        filename: a.filename ?? null,
        contentType: a.contentType,
        size: a.size,
      })),
      size: raw.length,
    };
    // Write to a temporary name first so a reader never sees half a file.
    await writeFile(join(dir, `${id}.eml.tmp`), raw);
    await rename(join(dir, `${id}.eml.tmp`), join(dir, `${id}.eml`));
    await writeFile(join(dir, `${id}.json.tmp`), JSON.stringify(message, null, 2));
    await rename(join(dir, `${id}.json.tmp`), join(dir, `${id}.json`));
    messages.push(message);
    log(`smtp fake: ${id} from ${message.envelope.from ?? "<>"} to ${message.envelope.to.join(", ")}: ${message.subject}`);
    return message;
  }

  async function removeFiles(id: string) {
    await Promise.all([rm(join(dir, `${id}.eml`), { force: true }), rm(join(dir, `${id}.json`), { force: true })]);
  }

  const smtp = new SMTPServer({
    secure: false,
    disabledCommands: ["STARTTLS"],
    authOptional: true,
    allowInsecureAuth: true,
    disableReverseLookup: true,
    size: sizeLimit,
    logger: false,
    banner: "Ripplemark local mail catcher",
    closeTimeout: 1000,
    onAuth(auth, _session, callback) {
      callback(null, { user: auth.username ?? "anonymous" });
    },
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      let length = 0;
      stream.on("data", (chunk: Buffer) => {
        length += chunk.length;
        if (length <= sizeLimit) chunks.push(chunk);
      });
      stream.on("error", (err) => callback(err));
      stream.on("end", () => {
        if ((stream as { sizeExceeded?: boolean }).sizeExceeded || length > sizeLimit) {
          const err = Object.assign(new Error(`Message exceeds the fixed maximum message size of ${sizeLimit} bytes`), {
            responseCode: 552,
          });
          callback(err);
          return;
        }
        store(Buffer.concat(chunks), session).then(
          (message) => callback(null, `Message queued as ${message.id}`),
          (err: unknown) => callback(Object.assign(new Error(`Could not store message: ${String(err)}`), { responseCode: 451 })),
        );
      });
    },
  });
  smtp.on("error", (err) => log(`smtp fake: ${err.message}`));

  async function handleHttp(req: IncomingMessage, res: ServerResponse) {
    const url = new URL(req.url ?? "/", "http://127.0.0.1");
    const parts = url.pathname.split("/").filter(Boolean).map(decodeURIComponent);
    if (parts[0] !== "messages" || parts.length > 3) {
      sendJson(res, 404, { error: "not found" });
      return;
    }
    if (parts.length === 1) {
      if (req.method === "GET") {
        const to = url.searchParams.get("to")?.trim().toLowerCase();
        const matching = to
          ? messages.filter((m) => m.to.includes(to) || m.cc.includes(to) || m.envelope.to.includes(to))
          : messages;
        sendJson(res, 200, { messages: matching.slice().reverse().map(summarise) });
        return;
      }
      if (req.method === "DELETE") {
        const removed = messages.splice(0, messages.length);
        await Promise.all(removed.map((m) => removeFiles(m.id)));
        sendJson(res, 200, { deleted: removed.length });
        return;
      }
      res.setHeader("allow", "GET, DELETE");
      sendJson(res, 405, { error: "method not allowed" });
      return;
    }
    const index = messages.findIndex((m) => m.id === parts[1]);
    const message = index === -1 ? undefined : messages[index];
    if (parts.length === 3 && parts[2] !== "raw") {
      sendJson(res, 404, { error: "not found" });
      return;
    }
    if (req.method === "DELETE" && parts.length === 2) {
      if (message) {
        messages.splice(index, 1);
        await removeFiles(message.id);
      }
      sendJson(res, message ? 200 : 404, message ? { deleted: 1 } : { error: "no such message" });
      return;
    }
    if (req.method !== "GET") {
      res.setHeader("allow", parts.length === 2 ? "GET, DELETE" : "GET");
      sendJson(res, 405, { error: "method not allowed" });
      return;
    }
    if (!message) {
      sendJson(res, 404, { error: "no such message" });
      return;
    }
    if (parts.length === 2) {
      sendJson(res, 200, message);
      return;
    }
    const raw = await readFile(join(dir, `${message.id}.eml`));
    res.writeHead(200, { "content-type": "message/rfc822", "content-length": raw.length, "cache-control": "no-store" });
    res.end(raw);
  }

  const api = http.createServer((req, res) => {
    handleHttp(req, res).catch((err: unknown) => {
      if (!res.headersSent) sendJson(res, 500, { error: String(err) });
      else res.destroy();
    });
  });

  const listen = (server: Server, port: number) =>
    new Promise<void>((ok, fail) => {
      server.once("error", fail);
      server.listen(port, "127.0.0.1", () => {
        server.off("error", fail);
        ok();
      });
    });

  await listen(smtp.server, options.smtpPort ?? SMTP_FAKE_DEFAULTS.smtpPort);
  try {
    await listen(api, options.httpPort ?? SMTP_FAKE_DEFAULTS.httpPort);
  } catch (err) {
    await new Promise<void>((done) => smtp.close(() => done()));
    throw err;
  }

  const smtpPort = (smtp.server.address() as AddressInfo).port;
  const httpPort = (api.address() as AddressInfo).port;
  let closed = false;
  return {
    smtpPort,
    httpUrl: `http://127.0.0.1:${httpPort}`,
    async close() {
      if (closed) return;
      closed = true;
      await Promise.all([
        new Promise<void>((done) => smtp.close(() => done())),
        new Promise<void>((done) => {
          api.close(() => done());
          api.closeAllConnections();
        }),
      ]);
    },
  };
}

if (isMainModule(import.meta.url)) {
  const fake = await startSmtpFake({ ...smtpFakeOptionsFromEnv(), log: (line) => console.log(line) });
  console.log(`smtp fake listening on smtp://127.0.0.1:${fake.smtpPort}, messages at ${fake.httpUrl}/messages`);
  const stop = async () => {
    await fake.close();
    process.exit(0);
  };
  process.once("SIGINT", stop);
  process.once("SIGTERM", stop);
}
