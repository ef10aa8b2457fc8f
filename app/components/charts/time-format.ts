// Times on charts are shown at the site's clock (the API speaks UTC epoch milliseconds).

const cache = new Map<string, Intl.DateTimeFormat>();

function fmt(timeZone: string, options: Intl.DateTimeFormatOptions) {
  const key = `${timeZone}|${JSON.stringify(options)}`;
  let f = cache.get(key);
  if (!f) {
    f = new Intl.DateTimeFormat("en-GB", { timeZone, hourCycle: "h23", ...options });
    cache.set(key, f);
  }
  return f;
}

/** An axis label suited to the span shown: clock time for a day or two, dates beyond, months over a year. */
export function axisTimeLabel(ms: number, timeZone: string, spanMs: number): string {
  if (spanMs <= 2 * 86_400_000) return fmt(timeZone, { day: "numeric", month: "short", hour: "2-digit", minute: "2-digit" }).format(ms);
  if (spanMs <= 400 * 86_400_000) return fmt(timeZone, { day: "numeric", month: "short" }).format(ms);
  return fmt(timeZone, { month: "short", year: "numeric" }).format(ms);
}

/** "14 Mar 2025, 09:30 GMT" for tooltips and captions. */
export function fullTime(ms: number, timeZone: string): string {
  return fmt(timeZone, { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", timeZoneName: "short" }).format(ms);
}
