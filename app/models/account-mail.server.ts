import { escapeHtml, sendMail } from "#app/utils/mail.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { INVITE_TTL_DAYS, RESET_TTL_MINUTES } from "./password-token.server.ts";

function link(token: string) {
  return `${getEnv().APP_ORIGIN}/reset-password/${token}`;
}

export async function sendResetMail(to: { email: string; name: string }, token: string) {
  const url = link(token);
  await sendMail({
    to: to.email,
    subject: "Reset your Ripplemark password",
    text: `Hello ${to.name},\n\nSomeone (we hope you) asked to reset the password of your Ripplemark account.\nOpen this link within ${RESET_TTL_MINUTES} minutes to choose a new password; it works once:\n\n${url}\n\nIf you did not ask for this, ignore this message: your password stays as it is.\n`,
    html: `<p>Hello ${escapeHtml(to.name)},</p><p>Someone (we hope you) asked to reset the password of your Ripplemark account. Open this link within ${RESET_TTL_MINUTES} minutes to choose a new password; it works once:</p><p><a href="${escapeHtml(url)}">Choose a new password</a></p><p>If you did not ask for this, ignore this message: your password stays as it is.</p>`,
  });
}

export async function sendInviteMail(to: { email: string; name: string }, token: string, invitedBy: string) {
  const url = link(token);
  await sendMail({
    to: to.email,
    subject: "You have been invited to Ripplemark",
    text: `Hello ${to.name},\n\n${invitedBy} has invited you to Ripplemark, where the cooperative keeps its conductivity records.\nOpen this link within ${INVITE_TTL_DAYS} days to choose your password:\n\n${url}\n`,
    html: `<p>Hello ${escapeHtml(to.name)},</p><p>${escapeHtml(invitedBy)} has invited you to Ripplemark, where the cooperative keeps its conductivity records. Open this link within ${INVITE_TTL_DAYS} days to choose your password:</p><p><a href="${escapeHtml(url)}">Choose your password</a></p>`,
  });
}
