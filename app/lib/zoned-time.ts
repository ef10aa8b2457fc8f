// Wall-clock times at a site. People enter "when the logger went in" in the site's local time (a
// `datetime-local` field has no zone); the database stores instants. These helpers convert between
// the two with the platform's time-zone data (Intl), no library needed. Pure: runs in browser and server.

const WALL = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?$/;

const formatters = new Map<string, Intl.DateTimeFormat>();

function partsFormatter(timeZone: string) {
  let f = formatters.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat("en-GB", {
      timeZone,
      hourCycle: "h23",
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
      second: "2-digit",
    });
    formatters.set(timeZone, f);
  }
  return f;
}

function wallParts(instant: Date, timeZone: string) {
  const parts = Object.fromEntries(partsFormatter(timeZone).formatToParts(instant).map((p) => [p.type, p.value]));
  return {
    year: Number(parts.year),
    month: Number(parts.month),
    day: Number(parts.day),
    hour: Number(parts.hour),
    minute: Number(parts.minute),
    second: Number(parts.second),
  };
}

/** The zone's offset from UTC at `instant`, in milliseconds (positive east of Greenwich). */
export function zoneOffsetMs(instant: Date, timeZone: string): number {
  const p = wallParts(instant, timeZone);
  const asUtc = Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second);
  return asUtc - Math.floor(instant.getTime() / 1000) * 1000;
}

/** Whether `timeZone` is a zone name the platform knows; returns its canonical spelling or null. */
export function canonicalTimeZone(timeZone: string): string | null {
  if (!/^[A-Za-z][A-Za-z0-9_+\-/]*$/.test(timeZone)) return null;
  try {
    return new Intl.DateTimeFormat("en", { timeZone }).resolvedOptions().timeZone;
  } catch {
    return null;
  }
}

export type WallTimeResult = { ok: true; instant: Date } | { ok: false; reason: "format" | "nonexistent" };

/**
 * The instant at which clocks in `timeZone` show `wall` ("2025-03-14T09:30"). A time skipped by a
 * clock change (spring forward) is refused; a repeated one (autumn) resolves to its first occurrence.
 */
export function wallTimeToInstant(wall: string, timeZone: string): WallTimeResult {
  const m = WALL.exec(wall.trim());
  if (!m) return { ok: false, reason: "format" };
  const [y, mo, d, h, mi, s] = m.slice(1).map((v) => Number(v ?? 0));
  const asUtc = Date.UTC(y, mo - 1, d, h, mi, s);
  const check = new Date(asUtc);
  if (check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d || h > 23 || mi > 59 || s > 59) {
    return { ok: false, reason: "format" };
  }
  // Try the offsets in force just before and just after; the earliest candidate that shows the
  // same wall time wins (first occurrence of a repeated hour).
  const candidates = [
    asUtc - zoneOffsetMs(new Date(asUtc - 86_400_000), timeZone),
    asUtc - zoneOffsetMs(new Date(asUtc), timeZone),
    asUtc - zoneOffsetMs(new Date(asUtc + 86_400_000), timeZone),
  ].sort((a, b) => a - b);
  for (const c of candidates) {
    if (toWallTime(new Date(c), timeZone, true) === toWallTime(new Date(asUtc), "UTC", true)) {
      return { ok: true, instant: new Date(c) };
    }
  }
  return { ok: false, reason: "nonexistent" };
}

function pad(n: number) {
  return String(n).padStart(2, "0");
}

/** "2025-03-14T09:30" as clocks in `timeZone` show `instant` (the value a datetime-local field takes). */
export function toWallTime(instant: Date, timeZone: string, withSeconds = false): string {
  const p = wallParts(instant, timeZone);
  const base = `${p.year}-${pad(p.month)}-${pad(p.day)}T${pad(p.hour)}:${pad(p.minute)}`;
  return withSeconds ? `${base}:${pad(p.second)}` : base;
}

/** "14 Mar 2025, 09:30 GMT" for reading; the zone's short name makes the clock change visible. */
export function formatInZone(instant: Date, timeZone: string): string {
  return new Intl.DateTimeFormat("en-GB", {
    timeZone,
    day: "numeric",
    month: "short",
    year: "numeric",
    hour: "2-digit",
    minute: "2-digit",
    hourCycle: "h23",
    timeZoneName: "short",
  }).format(instant);
}
