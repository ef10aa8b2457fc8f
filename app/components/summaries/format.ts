// Number and change formatting for the summary pages (browser and server alike).
import { formatNumber } from "#app/lib/number-format.ts";

export function num(value: number | null | undefined, digits = 0): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  return formatNumber(value, digits);
}

export type ChangeLike = { absolute: number; percent: number | null } | null;

/** "+12 (+1.5 %)", "−3 (−0.4 %)", "—". */
export function changeShort(c: ChangeLike): string {
  if (!c) return "—";
  const sign = c.absolute > 0 ? "+" : c.absolute < 0 ? "−" : "±";
  const pct = c.percent === null ? "" : ` (${sign}${num(Math.abs(c.percent), 1)} %)`;
  return `${sign}${num(Math.abs(c.absolute))}${pct}`;
}

/** Words for a change, for screen readers and titles: "up 12 µS/cm (1.5 %) from …". */
export function changeWords(c: ChangeLike, from: string): string {
  if (!c) return `no figure for ${from}`;
  const dir = c.absolute > 0 ? "up" : c.absolute < 0 ? "down" : "unchanged";
  return `${dir} ${num(Math.abs(c.absolute))} µS/cm${c.percent === null ? "" : ` (${num(Math.abs(c.percent), 1)} %)`} from ${from}`;
}

export function approvalText(a: boolean | null | undefined): string {
  return a === true ? "Approved" : a === false ? "Not yet" : "—";
}

export function eventsSummary(events: Record<string, number>, total: number): string {
  if (!total) return "0";
  return `${total} (${Object.entries(events)
    .sort()
    .map(([k, v]) => `${k.replaceAll("-", " ")} ${v}`)
    .join(", ")})`;
}
