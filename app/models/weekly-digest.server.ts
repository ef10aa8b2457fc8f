import { sql } from "kysely";
import { formatPValue, formatSlope, TREND_LABELS } from "#app/lib/series/trend.ts";
import { gradeText, percentText, WEEK_STATUS_LABELS, WEEK_STATUS_RANK } from "#app/lib/series/week-status.ts";
import { db } from "#app/utils/db.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { escapeHtml, sendMail } from "#app/utils/mail.server.ts";
import { loadWeekTable, resolveWeek, type Change, type SiteWeekRow, type WeekTable } from "./summary-read.server.ts";
import { summariseWeeks } from "./weekly-summary.server.ts";
import { formatNumber } from "#app/lib/number-format.ts";

// The weekly e-mail digest: every manager and everyone who opted in (person.weekly_digest) gets the
// week's table from the summary cache, the sites that need a look first, and links into Ripplemark.
// One weekly_digest_delivery row per person and week is claimed before sending, so a rerun of the
// job (or a second "send now") never mails anyone twice for the same week.

export const SCREENING_CAUTION =
  "TDS figures are screening estimates calculated from specific conductance, not laboratory measurements. Local regulations and accredited laboratories govern compliance decisions.";

function n(value: number | null | undefined, digits = 0): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  return formatNumber(value, digits);
}

export function changeText(c: Change, unit = "µS/cm"): string {
  if (!c) return "—";
  const sign = c.absolute > 0 ? "+" : c.absolute < 0 ? "−" : "±";
  const pct = c.percent === null ? "" : ` (${sign}${n(Math.abs(c.percent), 1)} %)`;
  return `${sign}${n(Math.abs(c.absolute))} ${unit}${pct}`;
}

function eventsText(row: SiteWeekRow): string {
  const f = row.figures;
  if (!f || f.eventsTotal === 0) return "0";
  return `${f.eventsTotal} (${Object.entries(f.events)
    .sort()
    .map(([k, v]) => `${k.replaceAll("-", " ")} ${v}`)
    .join(", ")})`;
}

function approvedText(row: SiteWeekRow): string {
  const a = row.figures?.approved;
  return a === true ? "Approved" : a === false ? "Not yet approved" : "No period of record";
}

/** Sites in the order the digest lists them: those needing a look first, then by code. */
export function attentionOrder(rows: readonly SiteWeekRow[]): SiteWeekRow[] {
  return [...rows].sort((a, b) => WEEK_STATUS_RANK[a.status] - WEEK_STATUS_RANK[b.status] || a.code.localeCompare(b.code));
}

export type DigestMail = { subject: string; text: string; html: string };

/** The digest for one week, as plain text and HTML. Every interpolated value is escaped. */
export function renderDigest(table: WeekTable, options: { orgName: string; origin: string; recipientName: string }): DigestMail {
  const origin = options.origin.replace(/\/+$/, "");
  const weekUrl = `${origin}/summaries?week=${encodeURIComponent(table.key)}`;
  const printUrl = `${origin}/summaries/${encodeURIComponent(table.key)}/print`;
  const siteUrl = (code: string) => `${origin}/summaries/sites/${encodeURIComponent(code)}?week=${encodeURIComponent(table.key)}`;
  const ordered = attentionOrder(table.rows);
  const needing = ordered.filter((r) => r.status === "act" || r.status === "watch" || r.status === "silent");
  const subject = `Weekly site digest: ${table.label} · ${options.orgName}`.replace(/[\r\n]+/g, " ");

  const columns = [
    "Site",
    "Status",
    "Median SC (µS/cm)",
    "Change from last week",
    "Change from a year ago",
    "95th percentile SC (µS/cm)",
    "Highest SC (µS/cm)",
    "Median TDS estimate (mg/L)",
    "Completeness",
    "Exceedance events",
    "Grade",
    "Approval",
    "Long-term trend",
  ];
  const cells = (r: SiteWeekRow) => [
    `${r.code} ${r.name}`,
    WEEK_STATUS_LABELS[r.status],
    n(r.figures?.sc25.median),
    changeText(r.changeFromPrevious.sc25Median),
    changeText(r.changeFromLastYear.sc25Median),
    n(r.figures?.sc25.p95),
    n(r.figures?.sc25.max),
    n(r.figures?.tds.median),
    percentText(r.figures?.completeness ?? null, 0),
    eventsText(r),
    gradeText(r.figures?.grade ?? null),
    approvedText(r),
    r.trend.direction === "too-few" ? TREND_LABELS[r.trend.direction] : `${TREND_LABELS[r.trend.direction]}, ${formatSlope(r.trend.slopePerYear)} (${formatPValue(r.trend.pValue)})`,
  ];

  // ---- plain text ----
  const lines: string[] = [];
  lines.push(`${options.orgName} — weekly site digest`, table.label, "", `Hello ${options.recipientName},`, "");
  if (needing.length) {
    lines.push("Sites that need a look first:");
    for (const r of needing) {
      lines.push(`* ${r.code} ${r.name}: ${WEEK_STATUS_LABELS[r.status]}`);
      for (const reason of r.reasons) lines.push(`    - ${reason}`);
      lines.push(`    ${siteUrl(r.code)}`);
    }
  } else {
    lines.push("No site needs a look this week.");
  }
  lines.push("", "The week at every site:");
  for (const r of ordered) {
    const c = cells(r);
    lines.push("", `${c[0]} — ${c[1]}`);
    for (let i = 2; i < columns.length; i++) lines.push(`  ${columns[i]}: ${c[i]}`);
  }
  lines.push(
    "",
    `The week in Ripplemark: ${weekUrl}`,
    `Printable report: ${printUrl}`,
    "",
    SCREENING_CAUTION,
    "Weeks run Monday 00:00 to Sunday 24:00 at each site's clock. Long-term trends: Mann–Kendall test (α = 0.05) and Sen's slope of weekly medians over up to three years; weekly medians are serially correlated, so read a trend as a screening indication.",
    "",
    `You receive this digest as a manager or because you asked for it. Change that in your account: ${origin}/account`,
  );
  const text = lines.join("\n");

  // ---- HTML ----
  const e = escapeHtml;
  const th = (s: string) => `<th scope="col" style="text-align:left;border-bottom:2px solid #c5d1db;padding:4px 6px;font-size:13px">${e(s)}</th>`;
  const td = (s: string, first = false) =>
    first
      ? `<th scope="row" style="text-align:left;border-bottom:1px solid #e3e9ee;padding:4px 6px;font-size:13px">${s}</th>`
      : `<td style="border-bottom:1px solid #e3e9ee;padding:4px 6px;font-size:13px">${e(s)}</td>`;
  const attention = needing.length
    ? `<ul style="padding-left:18px">${needing
        .map(
          (r) =>
            `<li style="margin-bottom:6px"><a href="${e(siteUrl(r.code))}"><strong>${e(r.code)} ${e(r.name)}</strong></a> — ${e(WEEK_STATUS_LABELS[r.status])}<ul>${r.reasons
              .map((reason) => `<li>${e(reason)}</li>`)
              .join("")}</ul></li>`,
        )
        .join("")}</ul>`
    : `<p>No site needs a look this week.</p>`;
  const rowsHtml = ordered
    .map((r) => {
      const c = cells(r);
      return `<tr>${td(`<a href="${e(siteUrl(r.code))}">${e(c[0])}</a>`, true)}${c
        .slice(1)
        .map((x) => td(x))
        .join("")}</tr>`;
    })
    .join("");
  const html = `<!doctype html><html lang="en-GB"><head><meta charset="utf-8"><title>${e(subject)}</title></head>
<body style="font-family:Arial,Helvetica,sans-serif;color:#152431;max-width:960px">
<p style="font-size:13px;color:#2f4556;margin:0">${e(options.orgName)} · Ripplemark</p>
<h1 style="font-size:20px;margin:4px 0 12px">Weekly site digest — ${e(table.label)}</h1>
<p>Hello ${e(options.recipientName)},</p>
<h2 style="font-size:16px">Sites that need a look first</h2>
${attention}
<h2 style="font-size:16px">The week at every site</h2>
<table style="border-collapse:collapse" role="table">
<thead><tr>${columns.map(th).join("")}</tr></thead>
<tbody>${rowsHtml}</tbody>
</table>
<p><a href="${e(weekUrl)}">Open the week in Ripplemark</a> · <a href="${e(printUrl)}">Printable report</a></p>
<p style="border-left:4px solid #8a5a00;background:#fbefd5;padding:6px 10px;font-size:13px">${e(SCREENING_CAUTION)}</p>
<p style="font-size:12px;color:#2f4556">Weeks run Monday 00:00 to Sunday 24:00 at each site's clock. Long-term trends: Mann–Kendall test (α = 0.05) and Sen's slope of weekly medians over up to three years; weekly medians are serially correlated, so read a trend as a screening indication.</p>
<p style="font-size:12px;color:#2f4556">You receive this digest as a manager or because you asked for it. <a href="${e(`${origin}/account`)}">Change that in your account</a>.</p>
</body></html>`;
  return { subject, text, html };
}

/** Everyone who gets the digest: managers, and anyone else who opted in; disabled accounts never. */
export async function digestRecipients() {
  return db
    .selectFrom("person")
    .select(["id", "email", "name", "role"])
    .where("disabled_at", "is", null)
    .where((eb) => eb.or([eb("role", "=", "manager"), eb("weekly_digest", "=", true)]))
    .orderBy("email")
    .execute();
}

export type DigestResult = { week: string; sent: number; skipped: number; failed: { email: string; error: string }[] };

/**
 * Sends the digest of `week` (default: the last complete week) to every recipient who has not had
 * it yet. A failed send releases that person's claim so a rerun tries again; the others stay sent.
 */
export async function sendWeeklyDigest(options: { week?: string | null; now?: Date } = {}): Promise<DigestResult> {
  const env = getEnv();
  // Bring the week's cache up to date first (a few milliseconds a site): events classified or
  // periods approved since the last readings change then show in the mail as they stand.
  const { week } = await resolveWeek(options.week ?? null, options.now);
  for (const site of await db.selectFrom("site").select("id").execute()) await summariseWeeks(site.id, week, week);
  const table = await loadWeekTable(week, options.now);
  const result: DigestResult = { week: table.week, sent: 0, skipped: 0, failed: [] };
  if (!table.rows.some((r) => r.figures)) return result; // nothing summarised for that week: nothing to say
  for (const person of await digestRecipients()) {
    const claim = await db
      .insertInto("weekly_digest_delivery")
      .values({ person_id: person.id, week_start: table.week })
      .onConflict((oc) => oc.columns(["person_id", "week_start"]).doNothing())
      .returning("person_id")
      .executeTakeFirst();
    if (!claim) {
      result.skipped++;
      continue;
    }
    try {
      const mail = renderDigest(table, { orgName: env.ORG_NAME, origin: env.APP_ORIGIN, recipientName: person.name });
      const { messageId } = await sendMail({ to: person.email, ...mail });
      await db
        .updateTable("weekly_digest_delivery")
        .set({ sent_at: new Date(), message_id: messageId })
        .where("person_id", "=", person.id)
        .where(sql`week_start`, "=", table.week)
        .execute();
      result.sent++;
    } catch (err) {
      await db.deleteFrom("weekly_digest_delivery").where("person_id", "=", person.id).where(sql`week_start`, "=", table.week).execute();
      result.failed.push({ email: person.email, error: (err as Error).message });
    }
  }
  return result;
}
