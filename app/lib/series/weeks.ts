// ISO 8601 weeks (Monday to Sunday) named by the local date of their Monday, "YYYY-MM-DD", or by
// their ISO year and number, "2025-W10". Calendar arithmetic only (UTC dates, no clock), so it is the
// same in the browser and on the server; which instants a week covers depends on the site's zone and
// is worked out in SQL (`(week_start::timestamp) at time zone site.time_zone`). Pure.
import { toWallTime } from "#app/lib/zoned-time.ts";

const DAY_MS = 86_400_000;
const DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const WEEK_KEY = /^(\d{4})-W(\d{2})$/;

function pad(n: number, width = 2) {
  return String(n).padStart(width, "0");
}

/** Milliseconds of a calendar date at 00:00 UTC, or null for a malformed or impossible date. */
export function dateToUtcMs(date: string): number | null {
  const m = DATE.exec(date);
  if (!m) return null;
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  const ms = Date.UTC(y, mo - 1, d);
  const check = new Date(ms);
  if (check.getUTCFullYear() !== y || check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d) return null;
  return ms;
}

export function utcMsToDate(ms: number): string {
  const d = new Date(ms);
  return `${pad(d.getUTCFullYear(), 4)}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}`;
}

/** The Monday of the ISO week containing `date`. */
export function mondayOf(date: string): string {
  const ms = dateToUtcMs(date);
  if (ms === null) throw new RangeError(`not a date: ${date}`);
  const dow = (new Date(ms).getUTCDay() + 6) % 7; // Monday 0 … Sunday 6
  return utcMsToDate(ms - dow * DAY_MS);
}

export function addDays(date: string, days: number): string {
  const ms = dateToUtcMs(date);
  if (ms === null) throw new RangeError(`not a date: ${date}`);
  return utcMsToDate(ms + days * DAY_MS);
}

export function addWeeks(weekStart: string, weeks: number): string {
  return addDays(weekStart, 7 * weeks);
}

/** Whole weeks from `a` to `b` (both Mondays). */
export function weeksBetween(a: string, b: string): number {
  return Math.round(((dateToUtcMs(b) ?? 0) - (dateToUtcMs(a) ?? 0)) / (7 * DAY_MS));
}

/**
 * ISO 8601 year and week number of a date: the week belongs to the year of its Thursday, and week 1
 * is the week holding 4 January (ISO 8601).
 */
export function isoWeekOf(date: string): { year: number; week: number } {
  const monday = dateToUtcMs(mondayOf(date))!;
  const thursday = new Date(monday + 3 * DAY_MS);
  const year = thursday.getUTCFullYear();
  const week1Monday = dateToUtcMs(mondayOf(`${pad(year, 4)}-01-04`))!;
  return { year, week: 1 + Math.round((monday - week1Monday) / (7 * DAY_MS)) };
}

/** The Monday of ISO week `week` of ISO year `year` (null when the year has no such week). */
export function isoWeekStart(year: number, week: number): string | null {
  if (!Number.isInteger(year) || !Number.isInteger(week) || week < 1 || week > 53) return null;
  const week1Monday = dateToUtcMs(mondayOf(`${pad(year, 4)}-01-04`))!;
  const start = utcMsToDate(week1Monday + (week - 1) * 7 * DAY_MS);
  return isoWeekOf(start).year === year ? start : null;
}

/** "2025-W10" for the week starting on `weekStart`. */
export function weekKey(weekStart: string): string {
  const { year, week } = isoWeekOf(weekStart);
  return `${pad(year, 4)}-W${pad(week)}`;
}

/** The Monday named by "2025-W10" (or by any date "YYYY-MM-DD" in the week); null when malformed. */
export function parseWeekKey(value: string | null | undefined): string | null {
  if (!value) return null;
  const m = WEEK_KEY.exec(value.trim());
  if (m) return isoWeekStart(Number(m[1]), Number(m[2]));
  if (dateToUtcMs(value.trim()) !== null) return mondayOf(value.trim());
  return null;
}

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

/** "Week 10 of 2025 · 3–9 Mar 2025", "Week 18 of 2025 · 28 Apr–4 May 2025", "Week 1 of 2026 · 29 Dec 2025–4 Jan 2026". */
export function weekLabel(weekStart: string): string {
  const { year, week } = isoWeekOf(weekStart);
  return `Week ${week} of ${year} · ${dateSpan(weekStart, addDays(weekStart, 6))}`;
}

/** "3–9 Mar 2025" for two dates, naming the month and year only where they change. */
export function dateSpan(from: string, to: string): string {
  const [y1, m1, d1] = from.split("-").map(Number);
  const [y2, m2, d2] = to.split("-").map(Number);
  if (y1 !== y2) return `${d1} ${MONTHS[m1 - 1]} ${y1}–${d2} ${MONTHS[m2 - 1]} ${y2}`;
  if (m1 !== m2) return `${d1} ${MONTHS[m1 - 1]}–${d2} ${MONTHS[m2 - 1]} ${y2}`;
  return `${d1}–${d2} ${MONTHS[m2 - 1]} ${y2}`;
}

/** "3–9 Mar 2025" (for tooltips and headers). */
export function weekSpan(weekStart: string): string {
  return dateSpan(weekStart, addDays(weekStart, 6));
}

/** The Monday of the week in which `instant` falls at the clock of `timeZone`. */
export function weekStartAt(instant: Date, timeZone: string): string {
  return mondayOf(toWallTime(instant, timeZone).slice(0, 10));
}

/** The last week that has ended at `timeZone`'s clock by `instant`: the Monday before this week's. */
export function lastCompleteWeek(instant: Date, timeZone: string): string {
  return addWeeks(weekStartAt(instant, timeZone), -1);
}

/** The Monday of the same ISO week number a year earlier; null for week 53 when that year had none. */
export function sameWeekLastYear(weekStart: string): string | null {
  const { year, week } = isoWeekOf(weekStart);
  return isoWeekStart(year - 1, week);
}
