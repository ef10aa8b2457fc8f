import { existsSync } from "node:fs";
import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import nodemailer, { type Transporter } from "nodemailer";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { clearMessages, getMessage, listMessages, waitForMessage } from "#fakes/smtp/client.ts";
import { startSmtpFake, type SmtpFake } from "#fakes/smtp/server.ts";

let fake: SmtpFake;
let dir: string;
let mailer: Transporter;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "ripplemark-smtp-fake-test-"));
  fake = await startSmtpFake({ smtpPort: 0, httpPort: 0, dir, sizeLimit: 256 * 1024 });
  mailer = nodemailer.createTransport({ host: "127.0.0.1", port: fake.smtpPort, secure: false, ignoreTLS: true });
});

afterAll(async () => {
  mailer?.close();
  await fake?.close();
  await rm(dir, { recursive: true, force: true });
});

beforeEach(async () => {
  await clearMessages(fake.httpUrl);
});

const from = '"Ripplemark" <no-reply@ripplemark.test>';

describe("SMTP fake", () => {
  it("listens on loopback", () => {
    expect(fake.httpUrl).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(fake.smtpPort).toBeGreaterThan(0);
  });

  it("captures a message with text and html and serves it over the HTTP API", async () => {
    const info = await mailer.sendMail({
      from,
      to: "Field Officer <officer@river-watch.test>",
      subject: "Exceedance at Station 4: 1520 µS/cm",
      text: "Conductivity exceeded the site threshold.",
      html: "<p>Conductivity <strong>exceeded</strong> the site threshold.</p>",
      headers: { "X-Ripplemark-Kind": "exceedance" },
    });
    expect(info.accepted).toEqual(["officer@river-watch.test"]);

    const list = await listMessages(fake.httpUrl);
    expect(list).toHaveLength(1);
    expect(list[0]).toMatchObject({
      from: "Ripplemark <no-reply@ripplemark.test>",
      to: ["officer@river-watch.test"],
      subject: "Exceedance at Station 4: 1520 µS/cm",
    });
    expect(Date.parse(list[0].receivedAt)).toBeGreaterThan(Date.now() - 60_000);
    expect(Object.keys(list[0]).sort()).toEqual(["from", "id", "receivedAt", "subject", "to"]);

    const full = await getMessage(fake.httpUrl, list[0].id);
    expect(full?.text?.trim()).toBe("Conductivity exceeded the site threshold.");
    expect(full?.html).toContain("<strong>exceeded</strong>");
    expect(full?.envelope).toEqual({ from: "no-reply@ripplemark.test", to: ["officer@river-watch.test"] });
    expect(full?.headers["x-ripplemark-kind"]).toBe("exceedance");
    expect(full?.messageId).toBe(info.messageId);

    // Persisted as .eml and .json
    const files = (await readdir(dir)).sort();
    expect(files).toEqual([`${list[0].id}.eml`, `${list[0].id}.json`]);
    expect(await readFile(join(dir, `${list[0].id}.eml`), "utf8")).toContain(`Message-ID: ${info.messageId}`);
    const json = JSON.parse(await readFile(join(dir, `${list[0].id}.json`), "utf8"));
    expect(json.subject).toBe("Exceedance at Station 4: 1520 µS/cm");

    const raw = await fetch(`${fake.httpUrl}/messages/${list[0].id}/raw`);
    expect(raw.headers.get("content-type")).toBe("message/rfc822");
    expect(await raw.text()).toContain("X-Ripplemark-Kind: exceedance");
  });

  it("lists newest first and filters by recipient (To, Cc and Bcc via the envelope)", async () => {
    await mailer.sendMail({ from, to: "a@sites.test", subject: "first", text: "1" });
    await mailer.sendMail({ from, to: "b@sites.test", cc: "A@Sites.test", subject: "second", text: "2" });
    await mailer.sendMail({ from, to: "c@sites.test", bcc: "a@sites.test", subject: "third", text: "3" });
    await mailer.sendMail({ from, to: "d@sites.test", subject: "fourth", text: "4" });

    const all = await listMessages(fake.httpUrl);
    expect(all.map((m) => m.subject)).toEqual(["fourth", "third", "second", "first"]);

    const forA = await listMessages(fake.httpUrl, { to: "a@sites.test" });
    expect(forA.map((m) => m.subject)).toEqual(["third", "second", "first"]);
    const forD = await listMessages(fake.httpUrl, { to: "D@SITES.TEST" });
    expect(forD.map((m) => m.subject)).toEqual(["fourth"]);
    expect(await listMessages(fake.httpUrl, { to: "nobody@sites.test" })).toEqual([]);
  });

  it("DELETE /messages clears everything, files included", async () => {
    await mailer.sendMail({ from, to: "x@sites.test", subject: "to be cleared", text: "x" });
    expect(await listMessages(fake.httpUrl)).toHaveLength(1);
    const res = await fetch(`${fake.httpUrl}/messages`, { method: "DELETE" });
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ deleted: 1 });
    expect(await listMessages(fake.httpUrl)).toEqual([]);
    expect(await readdir(dir)).toEqual([]);
  });

  it("returns 404 JSON for an unknown message id", async () => {
    const res = await fetch(`${fake.httpUrl}/messages/20260101T000000000Z-00000000`);
    expect(res.status).toBe(404);
    expect(res.headers.get("content-type")).toContain("application/json");
    expect(await getMessage(fake.httpUrl, "20260101T000000000Z-00000000")).toBeNull();
  });

  it("waitForMessage resolves when a matching message arrives and times out otherwise", async () => {
    const waiting = waitForMessage(fake.httpUrl, (m) => m.subject === "Weekly summary", 3000, { intervalMs: 25 });
    setTimeout(() => {
      void mailer.sendMail({ from, to: "team@sites.test", subject: "Weekly summary", text: "All sites within range." });
    }, 100);
    const message = await waiting;
    expect(message.to).toEqual(["team@sites.test"]);
    expect(message.text?.trim()).toBe("All sites within range.");

    await expect(waitForMessage(fake.httpUrl, (m) => m.subject === "never sent", 200, { intervalMs: 25 })).rejects.toThrow(
      /no matching message/,
    );
  });

  it("accepts AUTH with any credentials", async () => {
    const authed = nodemailer.createTransport({
      host: "127.0.0.1",
      port: fake.smtpPort,
      secure: false,
      ignoreTLS: true,
      auth: { user: "app", pass: "anything" },
    });
    try {
      await authed.sendMail({ from, to: "auth@sites.test", subject: "with auth", text: "ok" });
    } finally {
      authed.close();
    }
    expect((await listMessages(fake.httpUrl, { to: "auth@sites.test" })).map((m) => m.subject)).toEqual(["with auth"]);
  });

  it("refuses a message over the size limit and stores nothing", async () => {
    await expect(
      mailer.sendMail({ from, to: "big@sites.test", subject: "too big", text: "x".repeat(300 * 1024) }),
    ).rejects.toMatchObject({ responseCode: 552 });
    expect(await listMessages(fake.httpUrl)).toEqual([]);
  });

  it("keeps messages across a restart on the same folder", async () => {
    await mailer.sendMail({ from, to: "persist@sites.test", subject: "survives restart", text: "p" });
    const again = await startSmtpFake({ smtpPort: 0, httpPort: 0, dir });
    try {
      const list = await listMessages(again.httpUrl);
      expect(list.map((m) => m.subject)).toEqual(["survives restart"]);
      expect((await getMessage(again.httpUrl, list[0].id))?.text?.trim()).toBe("p");
    } finally {
      await again.close();
    }
    expect(existsSync(dir)).toBe(true);
  });
});
