// When most rows of a file fail, one message about the likely cause helps more than
// thousands of row errors. The checks look at a sample of raw rows against the profile,
// most telling first: the wrong delimiter, then columns that hold the wrong kind of
// value, then the wrong decimal mark, date order or unit, then the commonest reason.

import { isMeasured } from "./measurement-units.ts";
import { cleanCell, parseDecimal } from "./numbers.ts";
import type { DateOrder, ImportProfile } from "./profile.ts";
import type { RowError } from "./rows.ts";
import { parseDateTime } from "./timestamps.ts";

const DELIMITERS = [",", ";", "\t", "|"] as const;
const DELIMITER_NAMES: Record<string, string> = { ",": "','", ";": "';'", "\t": "a tab", "|": "'|'" };

const DATE_LIKE = /^\d{1,4}[/.-]\d{1,2}[/.-]\d{1,4}(?:[T ]+\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*(?:[ap]\.?m\.?|Z|[+-]\d{2}:?\d{2})?)?$/i;
const TIME_LIKE = /^\d{1,2}:\d{2}(?::\d{2})?\s*(?:[ap]\.?m\.?)?$/i;
const COMMA_DECIMAL = /^[+-]?\d+,\d+$/;
const POINT_DECIMAL = /^[+-]?\d+\.\d+$/;
const INTEGER = /^\d+$/;

function meaningfulLength(fields: readonly string[]) {
  return fields.length > 1 && fields[fields.length - 1].trim() === "" ? fields.length - 1 : fields.length;
}

function columnName(profile: ImportProfile, index: number) {
  const header = profile.columns.find((c) => c.index === index)?.header.trim();
  return header ? `Column ${index + 1} ("${header}")` : `Column ${index + 1}`;
}

function most(count: number, total: number) {
  return total > 0 && count / total >= 0.5;
}

function everyOrMost(count: number, total: number) {
  return count === total ? "Every row" : "Most rows";
}

function plural(n: number, word: string) {
  return `${n} ${word}${n === 1 ? "" : "s"}`;
}

/**
 * One human message saying what most likely went wrong when most rows of a file are
 * rejected. `errors` are the row errors collected so far, `sampleRows` some raw data rows
 * (fields as split with the profile's delimiter).
 */
export function diagnoseMostlyFailing(
  errors: readonly RowError[],
  profile: ImportProfile,
  sampleRows: readonly (readonly string[])[],
): string {
  const rows = sampleRows.filter((r) => r.some((f) => f.trim() !== ""));
  const expected = profile.columns.length;

  // 1. Field counts: the wrong delimiter, or a different layout.
  const wrongCount = rows.filter((r) => meaningfulLength(r) !== expected);
  if (rows.length > 0 && most(wrongCount.length, rows.length)) {
    const counts = new Map<number, number>();
    for (const r of wrongCount) counts.set(meaningfulLength(r), (counts.get(meaningfulLength(r)) ?? 0) + 1);
    const [typical] = [...counts.entries()].sort((a, b) => b[1] - a[1])[0];
    const lines = rows.map((r) => r.join(profile.delimiter));
    for (const candidate of DELIMITERS) {
      if (candidate === profile.delimiter) continue;
      const fits = lines.filter((line) => meaningfulLength(line.split(candidate)) === expected).length;
      if (most(fits, rows.length)) {
        return `${everyOrMost(wrongCount.length, rows.length)} has ${plural(typical, "field")}: the delimiter is probably ${DELIMITER_NAMES[candidate]}, not ${DELIMITER_NAMES[profile.delimiter]}`;
      }
    }
    return `${everyOrMost(wrongCount.length, rows.length)} has ${plural(typical, "field")}, but the profile expects ${expected}: this file seems to have a different layout (columns added or removed?)`;
  }

  const fitting = rows.filter((r) => meaningfulLength(r) === expected);
  const valuesOf = (index: number) =>
    fitting
      .map((r) => cleanCell(r[index] ?? ""))
      .filter((v) => v !== "" && !profile.missingValues.some((m) => m.trim().toLowerCase() === v.toLowerCase()));

  // 2. Measurement columns holding dates, text, or numbers with the other decimal mark.
  for (const column of [...profile.columns].sort((a, b) => a.index - b.index)) {
    if (!isMeasured(column.parameter)) continue;
    const values = valuesOf(column.index);
    if (values.length === 0) continue;
    const name = columnName(profile, column.index);
    const dates = values.filter((v) => DATE_LIKE.test(v) || TIME_LIKE.test(v));
    if (most(dates.length, values.length)) {
      return `${name} holds dates, not numbers — is the profile right?`;
    }
    if (profile.decimalMark === ".") {
      const comma = values.filter((v) => COMMA_DECIMAL.test(v));
      if (most(comma.length, values.length)) {
        return `${name} values look like ${comma[0]}: the decimal mark is probably a comma`;
      }
    } else {
      const point = values.filter((v) => POINT_DECIMAL.test(v) && !/^\d{1,3}\.\d{3}$/.test(v));
      if (most(point.length, values.length)) {
        return `${name} values look like ${point[0]}: the decimal mark is probably a point`;
      }
    }
    const text = values.filter((v) => parseDecimal(v, profile.decimalMark) !== parseDecimal(v, profile.decimalMark) && !/\d/.test(v));
    if (most(text.length, values.length)) {
      return `${name} holds text such as '${text[0].slice(0, 30)}', not numbers — is the profile right?`;
    }
  }

  // 3. The timestamp column: numbers where dates are expected, or the other date order.
  const ts = profile.timestamp;
  const tsColumn = ts.kind === "split" ? ts.dateColumn : ts.column;
  const tsValues = valuesOf(tsColumn);
  const tsName = columnName(profile, tsColumn);
  if (tsValues.length > 0) {
    if (ts.kind === "epoch") {
      const dates = tsValues.filter((v) => DATE_LIKE.test(v));
      if (most(dates.length, tsValues.length)) {
        return `${tsName} holds dates such as ${dates[0]}, not Unix time: choose "one column with date and time"`;
      }
      if (ts.unit === "s" && most(tsValues.filter((v) => /^\d{13}$/.test(v)).length, tsValues.length)) {
        return `${tsName} holds 13-digit Unix times: they are milliseconds, not seconds`;
      }
    } else {
      const numbers = tsValues.filter((v) => INTEGER.test(v) || POINT_DECIMAL.test(v));
      if (most(numbers.length, tsValues.length)) {
        const epoch = numbers.some((v) => /^\d{10}(\.\d+)?$/.test(v) || /^\d{13}$/.test(v));
        return `${tsName} holds numbers such as ${numbers[0]}, not dates${epoch ? ": they look like Unix time" : " — is the profile right?"}`;
      }
      if (ts.kind === "single") {
        const failing = tsValues.filter((v) => Number.isNaN(parseDateTime(v, ts.order, 0)));
        if (most(failing.length, tsValues.length)) {
          const better = (["iso", "dmy", "mdy", "ymd"] as DateOrder[]).find(
            (order) => order !== ts.order && failing.every((v) => !Number.isNaN(parseDateTime(v, order, 0))),
          );
          const names: Record<DateOrder, string> = {
            iso: "ISO 8601 (year-month-day)",
            dmy: "day-first",
            mdy: "month-first",
            ymd: "year-first",
          };
          if (better) {
            return `Dates in ${tsName.replace(/^Column/, "column")} such as ${failing[0]} read as ${names[better]}, but the profile says ${names[ts.order]}: change the date order`;
          }
          if (failing.every((v) => /^\d{1,4}[/.-]\d{1,2}[/.-]\d{1,4}$/.test(v))) {
            return `${tsName} holds dates without a time of day: the time may be in another column`;
          }
        }
      }
    }
  }

  // 4. Patterns in the reasons themselves.
  const rowsWithErrors = new Set(errors.map((e) => e.row)).size;
  const future = errors.filter((e) => e.reason.startsWith("timestamp is in the future"));
  if (future.length > 0 && most(new Set(future.map((e) => e.row)).size, rowsWithErrors)) {
    return `Most timestamps are in the future (e.g. row ${future[0].row}: ${future[0].value}): check the logger's clock, the date order and the UTC offset`;
  }
  for (const column of profile.columns) {
    const outside = errors.filter((e) => e.column === (column.header.trim() || `Column ${column.index + 1}`) && e.reason.includes("plausible range"));
    if (outside.length === 0 || !most(new Set(outside.map((e) => e.row)).size, rowsWithErrors)) continue;
    const name = columnName(profile, column.index);
    const sample = cleanCell(outside[0].value);
    const value = parseDecimal(sample, profile.decimalMark);
    if (column.parameter === "temperature" && value > 60 && value < 140 && column.unit !== "°F") {
      return `${name} values such as ${sample} are too warm for ${column.unit ?? "°C"}: is the unit °F?`;
    }
    if (
      (column.parameter === "conductivity" || column.parameter === "specific-conductance") &&
      column.unit !== "µS/cm" &&
      value > 0
    ) {
      return `${name} values such as ${sample} are implausibly high in ${column.unit}: is the unit µS/cm?`;
    }
    return `${name}: most values are outside the plausible range (e.g. row ${outside[0].row}: ${outside[0].reason})`;
  }

  // 5. The commonest reason.
  if (errors.length === 0) return "Most rows were rejected, but no reason was recorded.";
  const byReason = new Map<string, { count: number; first: RowError }>();
  for (const e of errors) {
    const key = `${e.column}\u0000${e.reason.replace(/'[^']*'/g, "'…'")}`;
    const entry = byReason.get(key);
    if (entry) entry.count++;
    else byReason.set(key, { count: 1, first: e });
  }
  const top = [...byReason.values()].sort((a, b) => b.count - a.count)[0].first;
  const where = top.column === "(row)" ? "" : ` in ${top.column}`;
  return `Most rows were rejected; the commonest problem${where} is: ${top.reason} (first at row ${top.row})`;
}
