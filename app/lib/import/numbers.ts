// Fast, strict number parsing for logger cells. Called once per measurement cell of
// files with millions of rows, so it scans characters by hand (no regex, no closures)
// and allocates only when a decimal comma has to be turned into a point.

const ZERO = 48;
const NINE = 57;
const PLUS = 43;
const MINUS = 45;
const POINT = 46;
const COMMA = 44;
const LOWER_E = 101;
const UPPER_E = 69;

const POWERS_OF_TEN = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15];

function isDigit(code: number) {
  return code >= ZERO && code <= NINE;
}

/**
 * Parse a trimmed cell as a decimal number written with the given decimal mark.
 * Accepts an optional sign, digits with at most one decimal mark, and an exponent
 * ("1.2E+03"). Thousands separators (the other mark) are accepted only when they
 * cannot be misread: groups of exactly three digits AND either a decimal mark after
 * them ("1.234,5" with a decimal comma) or two or more separators ("1.234.567").
 * "1.234" with a decimal comma is rejected: it could be 1.234 or 1234.
 * Returns NaN when the text is not such a number; numberProblem() says why.
 */
export function parseDecimal(text: string, decimalMark: "." | ","): number {
  const length = text.length;
  if (length === 0) return Number.NaN;
  const mark = decimalMark === "." ? POINT : COMMA;
  const other = mark === POINT ? COMMA : POINT;
  let i = 0;
  let code = text.charCodeAt(0);
  if (code === PLUS || code === MINUS) i = 1;
  let digits = 0;
  let markAt = -1;
  let otherCount = 0;
  let mantissa = 0;
  let fractionDigits = 0;
  for (; i < length; i++) {
    code = text.charCodeAt(i);
    if (isDigit(code)) {
      digits++;
      mantissa = mantissa * 10 + (code - ZERO);
      if (markAt !== -1) fractionDigits++;
    } else if (code === mark) {
      if (markAt !== -1) return Number.NaN;
      markAt = i;
    } else if (code === other) {
      otherCount++;
    } else {
      break;
    }
  }
  if (digits === 0) return Number.NaN;
  const plain = i === length; // no exponent
  if (!plain) {
    // Only an exponent may follow.
    code = text.charCodeAt(i);
    if ((code !== LOWER_E && code !== UPPER_E) || otherCount > 0) return Number.NaN;
    i++;
    if (i < length) {
      code = text.charCodeAt(i);
      if (code === PLUS || code === MINUS) i++;
    }
    const exponentStart = i;
    while (i < length && isDigit(text.charCodeAt(i))) i++;
    if (i === exponentStart || i < length) return Number.NaN;
  }
  if (otherCount > 0) {
    if (!isGroupedNumber(text, mark, other, markAt, otherCount)) return Number.NaN;
    return Number(stripGrouping(text, mark, other));
  }
  if (plain && digits <= 15) {
    // Exact fast path (Clinger 1990, "How to read floating point numbers accurately"):
    // a mantissa below 2^53 and a power of ten up to 10^22 are both exact doubles, so one
    // IEEE division is correctly rounded and equals what Number() returns.
    const value = mantissa / POWERS_OF_TEN[fractionDigits];
    return text.charCodeAt(0) === MINUS ? -value : value;
  }
  if (mark === POINT) return Number(text);
  return markAt === -1 ? Number(text) : Number(text.replace(",", "."));
}

function isGroupedNumber(text: string, mark: number, other: number, markAt: number, otherCount: number) {
  if (markAt === -1 && otherCount < 2) return false; // "1.234": ambiguous
  const end = markAt === -1 ? text.length : markAt;
  let start = 0;
  const first = text.charCodeAt(0);
  if (first === PLUS || first === MINUS) start = 1;
  // Walk the integer part: 1–3 digits, then (separator + exactly 3 digits) repeated.
  let run = 0;
  let sawSeparator = false;
  for (let i = start; i < end; i++) {
    const code = text.charCodeAt(i);
    if (code === other) {
      if (run === 0 || (sawSeparator ? run !== 3 : run > 3)) return false;
      sawSeparator = true;
      run = 0;
    } else if (code === mark) {
      return false;
    } else {
      run++;
    }
  }
  return sawSeparator && run === 3;
}

function stripGrouping(text: string, mark: number, other: number) {
  let result = "";
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code === other) continue;
    result += code === mark ? "." : text[i];
  }
  return result;
}

/** Why parseDecimal() refused a value (slow path, for error messages). */
export function numberProblem(text: string, decimalMark: "." | ","): string {
  const shown = quoteValue(text);
  const otherMark = decimalMark === "." ? "," : ".";
  if (/^[+-]?[\d.,]+$/.test(text) && text.includes(otherMark) && /\d/.test(text)) {
    if (/^[+-]?\d{1,3}([.,]\d{3})$/.test(text) && !text.includes(decimalMark)) {
      const otherName = otherMark === "," ? "comma" : "point";
      return `${shown} is ambiguous: the ${otherName} could be a decimal mark or a thousands separator (this profile's decimal mark is '${decimalMark}')`;
    }
    return `${shown} uses '${otherMark}' but this profile's decimal mark is '${decimalMark}'`;
  }
  return `${shown} is not a number`;
}

/** A value shown inside an error message: quoted, long values shortened. */
export function quoteValue(text: string): string {
  const short = text.length > 40 ? `${text.slice(0, 37)}…` : text;
  return `'${short}'`;
}

/**
 * Trim spaces and tabs and remove one pair of surrounding double quotes (a value such
 * as ` "12.5" ` that a CSV splitter left quoted because of the space before the quote).
 * Returns the input string itself when there is nothing to remove.
 */
export function cleanCell(raw: string): string {
  const length = raw.length;
  if (length === 0) return raw;
  const first = raw.charCodeAt(0);
  const last = raw.charCodeAt(length - 1);
  if (first > 34 && last > 34) return raw; // fast path: no space, tab, CR, LF or quote at either end
  let value = raw.trim();
  if (value.length >= 2 && value.charCodeAt(0) === 34 && value.charCodeAt(value.length - 1) === 34) {
    value = value.slice(1, -1).replace(/""/g, '"').trim();
  }
  return value;
}
