// The time range a chart page shows, read from its URL: a preset (`?range=week`) ending at the
// site's latest reading, or a custom `?from=…&to=…` given as wall-clock times at the site (what a
// datetime-local field sends) or as full ISO instants. Pure; shared by loaders and components.
import { toWallTime, wallTimeToInstant } from "#app/lib/zoned-time.ts";

export const RANGE_PRESETS = ["day", "week", "month", "year"] as const;
export type RangePreset = (typeof RANGE_PRESETS)[number];

const DAY_MS = 86_400_000;

/** Fixed lengths, so a preset means the same span everywhere: a "month" is 30 days, a "year" 365. */
export const PRESET_MS: Record<RangePreset, number> = { day: DAY_MS, week: 7 * DAY_MS, month: 30 * DAY_MS, year: 365 * DAY_MS };

export const PRESET_LABELS: Record<RangePreset, string> = {
  day: "Last day",
  week: "Last week",
  month: "Last 30 days",
  year: "Last year",
};

/** The longest custom range accepted (whole history of a long-running site). */
export const MAX_RANGE_MS = 20 * 365 * DAY_MS;

export type ResolvedRange = {
  fromMs: number;
  toMs: number;
  /** The preset in use, or "custom". */
  preset: RangePreset | "custom";
  /** Why the request's own values were not used, for a notice on the page. */
  problem?: string;
};

const ISO_INSTANT = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,3})?)?(Z|[+-]\d{2}:?\d{2})$/;

/** An ISO instant with a zone ("…Z", "…+01:00") or a wall time at `timeZone` ("2025-03-01T09:00"); null if neither. */
export function parseInstant(value: string | null | undefined, timeZone: string): number | null {
  if (!value) return null;
  const v = value.trim();
  if (ISO_INSTANT.test(v)) {
    const ms = Date.parse(v);
    return Number.isFinite(ms) ? ms : null;
  }
  const wall = /^\d{4}-\d{2}-\d{2}$/.test(v) ? `${v}T00:00` : v;
  const r = wallTimeToInstant(wall, timeZone);
  return r.ok ? r.instant.getTime() : null;
}

/**
 * The range asked for by `search`. Presets end at `anchorMs` (the latest reading, or now when there
 * is none), so a site whose data arrives after each field round still opens on its data. A custom
 * range that cannot be read, runs backwards or is longer than MAX_RANGE_MS falls back to
 * `fallback` with a problem message.
 */
export function resolveRange(search: URLSearchParams, anchorMs: number, timeZone: string, fallback: RangePreset = "week"): ResolvedRange {
  const preset = search.get("range");
  const fromText = search.get("from");
  const toText = search.get("to");
  if ((fromText || toText) && preset !== "day" && preset !== "week" && preset !== "month" && preset !== "year") {
    const fromMs = parseInstant(fromText, timeZone);
    const toMs = parseInstant(toText, timeZone);
    const back = (p: string): ResolvedRange => ({ ...presetRange(fallback, anchorMs), problem: p });
    if (fromMs === null || toMs === null) return back("The start or end of that range could not be read; showing the last week instead.");
    if (toMs <= fromMs) return back("That range ends before it starts; showing the last week instead.");
    if (toMs - fromMs > MAX_RANGE_MS) return back("That range is longer than 20 years; showing the last week instead.");
    return { fromMs, toMs, preset: "custom" };
  }
  const p = (RANGE_PRESETS as readonly string[]).includes(preset ?? "") ? (preset as RangePreset) : fallback;
  return presetRange(p, anchorMs);
}

export function presetRange(preset: RangePreset, anchorMs: number): ResolvedRange {
  return { fromMs: anchorMs - PRESET_MS[preset], toMs: anchorMs, preset };
}

/** The values a pair of datetime-local fields should show for a range, at the site's clock. */
export function rangeAsWallTimes(range: { fromMs: number; toMs: number }, timeZone: string) {
  return { from: toWallTime(new Date(range.fromMs), timeZone), to: toWallTime(new Date(range.toMs), timeZone) };
}

/**
 * The end a preset is anchored to: the latest reading rounded up to the next whole minute (so the
 * latest reading falls inside the half-open range), or now when the site has no readings.
 */
export function rangeAnchor(latestReadingMs: number | null, nowMs: number): number {
  if (latestReadingMs === null) return Math.ceil(nowMs / 60_000) * 60_000;
  return Math.floor(latestReadingMs / 60_000) * 60_000 + 60_000;
}
