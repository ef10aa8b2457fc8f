// Fast date and time parsing for logger cells, by hand over character codes: it runs
// on every row of multi-million-row files. On failure a function returns NaN and
// leaves the reason in `timeFailure` (a module-level slot: JavaScript runs one row at
// a time, and building the message only on failure keeps the fast path allocation-free).

import type { DateOrder } from "./profile.ts";

const MS_PER_MINUTE = 60_000;
const MS_PER_HOUR = 3_600_000;
const MS_PER_DAY = 86_400_000;

const MONTH_NAMES = [
  "January", "February", "March", "April", "May", "June",
  "July", "August", "September", "October", "November", "December",
];

export let timeFailure = "";

/**
 * Days since 1970-01-01 for a proleptic Gregorian date. Algorithm `days_from_civil`
 * from Howard Hinnant, "chrono-Compatible Low-Level Date Algorithms" (2013).
 */
export function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yearOfEra = y - era * 400;
  const dayOfYear = Math.floor((153 * (month > 2 ? month - 3 : month + 9) + 2) / 5) + day - 1;
  const dayOfEra = yearOfEra * 365 + Math.floor(yearOfEra / 4) - Math.floor(yearOfEra / 100) + dayOfYear;
  return era * 146097 + dayOfEra - 719468;
}

function isLeapYear(year: number) {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

export function daysInMonth(year: number, month: number): number {
  if (month === 2) return isLeapYear(year) ? 29 : 28;
  return month === 4 || month === 6 || month === 9 || month === 11 ? 30 : 31;
}

// Scanner state shared by the helpers below (set by each top-level parse call).
let text = "";
let pos = 0;

function readDigits(min: number, max: number): number {
  let value = 0;
  let count = 0;
  while (pos < text.length && count < max) {
    const code = text.charCodeAt(pos);
    if (code < 48 || code > 57) break;
    value = value * 10 + (code - 48);
    pos++;
    count++;
  }
  return count >= min ? value : -1;
}

function isDateSeparator(code: number) {
  return code === 47 /* / */ || code === 46 /* . */ || code === 45 /* - */;
}

const ORDER_FORMS: Record<DateOrder, string> = {
  iso: "YYYY-MM-DD hh:mm[:ss]",
  dmy: "DD/MM/YYYY hh:mm[:ss]",
  mdy: "MM/DD/YYYY hh:mm[:ss]",
  ymd: "YYYY/MM/DD hh:mm[:ss]",
};

function fail(reason: string): number {
  timeFailure = reason;
  return Number.NaN;
}

// Two-digit years are read as 2000–2099: loggers in service wrote no 20th-century data
// we accept (anything before 1980 is rejected anyway).
function fullYear(year: number, digits: number) {
  return digits <= 2 ? 2000 + year : year;
}

/** Reads a date at `pos`; returns days since epoch or NaN (reason in timeFailure). */
function readDate(order: DateOrder, value: string): number {
  let year: number;
  let month: number;
  let day: number;
  const start = pos;
  if (order === "iso") {
    year = readDigits(4, 4);
    if (year < 0 || text.charCodeAt(pos) !== 45) return fail(`'${value}' is not a date in the form YYYY-MM-DD`);
    pos++;
    month = readDigits(2, 2);
    if (month < 0 || text.charCodeAt(pos) !== 45) return fail(`'${value}' is not a date in the form YYYY-MM-DD`);
    pos++;
    day = readDigits(2, 2);
    if (day < 0) return fail(`'${value}' is not a date in the form YYYY-MM-DD`);
  } else {
    const form = ORDER_FORMS[order].slice(0, 10);
    const a = readDigits(1, 4);
    const aDigits = pos - start;
    const separator = text.charCodeAt(pos);
    if (a < 0 || !isDateSeparator(separator)) return fail(`'${value}' is not a date in the form ${form}`);
    pos++;
    const b = readDigits(1, 2);
    if (b < 0 || text.charCodeAt(pos) !== separator) return fail(`'${value}' is not a date in the form ${form}`);
    pos++;
    const cStart = pos;
    const c = readDigits(1, 4);
    const cDigits = pos - cStart;
    if (c < 0) return fail(`'${value}' is not a date in the form ${form}`);
    if (order === "ymd") {
      if (aDigits !== 4 && aDigits !== 2) return fail(`'${value}' is not a date in the form ${form}`);
      if (cDigits > 2) return fail(`'${value}' is not a date in the form ${form}`);
      year = fullYear(a, aDigits);
      month = b;
      day = c;
    } else {
      if (aDigits > 2 || (cDigits !== 4 && cDigits !== 2)) return fail(`'${value}' is not a date in the form ${form}`);
      year = fullYear(c, cDigits);
      if (order === "dmy") {
        day = a;
        month = b;
      } else {
        month = a;
        day = b;
      }
    }
  }
  if (month < 1 || month > 12) return fail(`'${value}' is not a valid date: there is no month ${month}`);
  if (day < 1) return fail(`'${value}' is not a valid date: there is no day 0`);
  const monthDays = daysInMonth(year, month);
  if (day > monthDays) {
    return fail(`'${value}' is not a valid date: ${MONTH_NAMES[month - 1]} ${year} has ${monthDays} days`);
  }
  return daysFromCivil(year, month, day);
}

/**
 * Reads hh:mm[:ss[.fff]] and an optional AM/PM marker at `pos`; returns ms since
 * midnight or NaN. Hours are 0–23 (24-hour clock) or 1–12 with AM/PM.
 */
function readTime(value: string): number {
  const hourStart = pos;
  const hour = readDigits(1, 2);
  if (hour < 0 || text.charCodeAt(pos) !== 58) return fail(`'${value}' is not a time in the form hh:mm[:ss]`);
  const hourDigits = pos - hourStart;
  pos++;
  const minute = readDigits(2, 2);
  if (minute < 0) return fail(`'${value}' is not a time in the form hh:mm[:ss]`);
  let second = 0;
  let fractionMs = 0;
  if (text.charCodeAt(pos) === 58) {
    pos++;
    second = readDigits(2, 2);
    if (second < 0) return fail(`'${value}' is not a time in the form hh:mm[:ss]`);
    const mark = text.charCodeAt(pos);
    // ISO 8601 allows a point or a comma before the decimal fraction of a second.
    if (mark === 46 || mark === 44) {
      pos++;
      let scale = 100;
      const fractionStart = pos;
      while (pos < text.length) {
        const code = text.charCodeAt(pos);
        if (code < 48 || code > 57) break;
        fractionMs += (code - 48) * scale;
        scale /= 10;
        pos++;
      }
      if (pos === fractionStart) return fail(`'${value}' is not a time in the form hh:mm[:ss]`);
      fractionMs = Math.round(fractionMs * 1000) / 1000;
    }
  }
  // Optional AM/PM, with or without a space; also "a.m."/"p.m.".
  let meridiem = 0; // 0 none, 1 am, 2 pm
  let look = pos;
  while (look < text.length && text.charCodeAt(look) === 32) look++;
  const m0 = text.charCodeAt(look) | 32;
  if (m0 === 97 /* a */ || m0 === 112 /* p */) {
    let next = look + 1;
    if (text.charCodeAt(next) === 46) next++;
    if ((text.charCodeAt(next) | 32) === 109 /* m */) {
      next++;
      if (text.charCodeAt(next) === 46) next++;
      meridiem = m0 === 97 ? 1 : 2;
      pos = next;
    }
  }
  let hour24 = hour;
  if (meridiem !== 0) {
    if (hour < 1 || hour > 12) return fail(`'${value}' is not a valid time: hour ${hour} with AM/PM`);
    hour24 = hour % 12 + (meridiem === 2 ? 12 : 0);
  } else if (hour > 23 || hourDigits > 2) {
    return fail(`'${value}' is not a valid time: there is no hour ${hour}`);
  }
  if (minute > 59) return fail(`'${value}' is not a valid time: there is no minute ${minute}`);
  if (second > 59) return fail(`'${value}' is not a valid time: there is no second ${second}`);
  return hour24 * MS_PER_HOUR + minute * MS_PER_MINUTE + second * 1000 + fractionMs;
}

/** Reads "Z", "±hh", "±hhmm" or "±hh:mm" at `pos`; returns the offset in minutes, NaN if none/invalid. */
function readZone(): number {
  while (pos < text.length && text.charCodeAt(pos) === 32) pos++;
  if (pos >= text.length) return Number.NaN;
  const code = text.charCodeAt(pos);
  if (code === 90 || code === 122) {
    pos++;
    return 0;
  }
  if (code !== 43 && code !== 45 && code !== 0x2212 /* minus sign */) return Number.NaN;
  const sign = code === 43 ? 1 : -1;
  pos++;
  const hours = readDigits(2, 2);
  if (hours < 0) return Number.NaN;
  let minutes = 0;
  if (pos < text.length) {
    if (text.charCodeAt(pos) === 58) pos++;
    minutes = readDigits(2, 2);
    if (minutes < 0) return Number.NaN;
  }
  if (hours > 14 || minutes > 59) return Number.NaN;
  return sign * (hours * 60 + minutes);
}

/**
 * Parse one cell holding date and time. `order` "iso" reads ISO 8601 extended format
 * (ISO 8601-1:2019 §5.4): YYYY-MM-DD, "T" or a space, hh:mm[:ss[.fff]], then an
 * optional "Z" or ±hh:mm offset. Without an offset the value is local time at
 * `utcOffsetMinutes` (local = UTC + offset, so UTC = local − offset).
 * Other orders read D/M/Y, M/D/Y or Y/M/D with "/", "." or "-" and a 24-hour or
 * AM/PM time; offsets are only read for "iso".
 * Returns ms since the Unix epoch (UTC) or NaN with the reason in timeFailure.
 */
export function parseDateTime(value: string, order: DateOrder, utcOffsetMinutes: number): number {
  text = value;
  pos = 0;
  const days = readDate(order, value);
  if (days !== days) return days;
  const separator = text.charCodeAt(pos);
  if (separator === 84 /* T */ || separator === 116 /* t */ || separator === 32) {
    pos++;
    while (text.charCodeAt(pos) === 32) pos++;
  } else if (pos >= text.length) {
    return fail(`'${value}' has a date but no time of day`);
  } else {
    return fail(`'${value}' is not a date and time in the form ${ORDER_FORMS[order]}`);
  }
  const timeMs = readTime(value);
  if (timeMs !== timeMs) return timeMs;
  let offsetMinutes = utcOffsetMinutes;
  if (pos < text.length) {
    if (order === "iso") {
      const zone = readZone();
      if (zone !== zone || pos < text.length) {
        return fail(`'${value}' has an unreadable time zone: use Z or ±hh:mm`);
      }
      offsetMinutes = zone;
    } else {
      while (pos < text.length && text.charCodeAt(pos) === 32) pos++;
      if (pos < text.length) return fail(`'${value}' is not a date and time in the form ${ORDER_FORMS[order]}`);
    }
  }
  return days * MS_PER_DAY + timeMs - offsetMinutes * MS_PER_MINUTE;
}

/** Parse a date-only cell; returns days since epoch or NaN (reason in timeFailure). */
export function parseDateOnly(value: string, order: DateOrder): number {
  text = value;
  pos = 0;
  const days = readDate(order, value);
  if (days !== days) return days;
  while (pos < text.length && text.charCodeAt(pos) === 32) pos++;
  if (pos < text.length) return fail(`'${value}' is not a date in the form ${ORDER_FORMS[order].slice(0, 10)}`);
  return days;
}

/** Parse a time-of-day cell; returns ms since midnight or NaN (reason in timeFailure). */
export function parseTimeOfDay(value: string): number {
  text = value;
  pos = 0;
  const ms = readTime(value);
  if (ms !== ms) return ms;
  while (pos < text.length && text.charCodeAt(pos) === 32) pos++;
  if (pos < text.length) return fail(`'${value}' is not a time in the form hh:mm[:ss]`);
  return ms;
}

/** Combine a date (days since epoch) and a time of day into UTC ms. */
export function combineDateAndTime(days: number, timeOfDayMs: number, utcOffsetMinutes: number): number {
  return days * MS_PER_DAY + timeOfDayMs - utcOffsetMinutes * MS_PER_MINUTE;
}

/** Parse Unix epoch seconds or milliseconds (digits with an optional fraction). */
export function parseEpoch(value: string, unit: "s" | "ms"): number {
  let digits = 0;
  let points = 0;
  for (let i = 0; i < value.length; i++) {
    const code = value.charCodeAt(i);
    if (code >= 48 && code <= 57) digits++;
    else if (code === 46 && points === 0) points++;
    else return fail(`'${value}' is not a Unix time in ${unit === "s" ? "seconds" : "milliseconds"}`);
  }
  if (digits === 0) return fail(`'${value}' is not a Unix time in ${unit === "s" ? "seconds" : "milliseconds"}`);
  const number = Number(value);
  return unit === "s" ? Math.round(number * 1000) : Math.round(number);
}

export { ORDER_FORMS };
