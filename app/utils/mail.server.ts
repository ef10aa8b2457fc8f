import nodemailer, { type Transporter } from "nodemailer";
import { getEnv } from "./env.server.ts";

let transporter: Transporter | undefined;

function getTransporter(): Transporter {
  if (transporter) return transporter;
  const env = getEnv();
  transporter = nodemailer.createTransport({
    host: env.SMTP_HOST,
    port: env.SMTP_PORT,
    secure: env.SMTP_SECURE,
    // Locally the SMTP fake speaks plain SMTP on loopback; production uses TLS from the env.
    ignoreTLS: env.NODE_ENV !== "production" && !env.SMTP_SECURE,
    auth: env.SMTP_USER ? { user: env.SMTP_USER, pass: env.SMTP_PASSWORD ?? "" } : undefined,
  });
  return transporter;
}

export type MailMessage = { to: string | string[]; subject: string; text: string; html?: string };

export async function sendMail(message: MailMessage) {
  const info = await getTransporter().sendMail({ from: getEnv().MAIL_FROM, ...message });
  return { messageId: info.messageId as string };
}

/** Escapes text for HTML e-mail bodies; every interpolated value in a mail template goes through it. */
export function escapeHtml(value: unknown): string {
  return String(value ?? "")
    .replaceAll("&", "&amp;")
    .replaceAll("<", "&lt;")
    .replaceAll(">", "&gt;")
    .replaceAll('"', "&quot;")
    .replaceAll("'", "&#39;");
}
