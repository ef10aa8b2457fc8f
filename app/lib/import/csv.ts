// Writing CSV reports (rejected rows, exports) safely.

// A cell starting with one of these is run as a formula by spreadsheet programs:
// "=", "+", "-", "@", tab, carriage return (OWASP, "CSV Injection"); NUL is added
// as OWASP ASVS 5.0 requirement 1.2.10 lists it too.
const FORMULA_STARTS = new Set(["=", "+", "-", "@", "\t", "\r", "\0"]);

// A plain number ("-12.5", "+3", "-1.2e-3") is data, not a formula: leave it readable.
const PLAIN_NUMBER = /^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Neutralise a value for a CSV cell that people will open in a spreadsheet: a value
 * that would be read as a formula (starts with =, +, -, @, tab, CR or NUL, also after
 * leading spaces) gets a leading apostrophe, which spreadsheets treat as "this is text"
 * (OWASP CSV Injection guidance). Plain numbers such as "-12.5" are left alone.
 * Idempotent: an already neutralised value starts with "'" and is returned unchanged.
 */
export function csvSafeCell(value: string): string {
  if (value.length === 0) return value;
  const first = value.trimStart()[0] ?? value[0];
  if (!FORMULA_STARTS.has(value[0]) && !FORMULA_STARTS.has(first)) return value;
  if (PLAIN_NUMBER.test(value)) return value;
  return `'${value}`;
}

/**
 * One CSV record per RFC 4180 §2: fields joined by commas; a field containing a comma,
 * double quote, CR or LF is enclosed in double quotes with inner quotes doubled (§2.6,
 * §2.7). Fields with leading or trailing spaces are quoted too, so readers that trim keep
 * them. No line break is appended: join records with "\r\n" (§2.1).
 * This only quotes; pass cells through csvSafeCell first when a spreadsheet may open the file.
 */
export function toCsvLine(fields: readonly string[]): string {
  let line = "";
  for (let i = 0; i < fields.length; i++) {
    if (i > 0) line += ",";
    const field = fields[i];
    if (/[",\r\n]/.test(field) || (field.length > 0 && (field[0] === " " || field[field.length - 1] === " "))) {
      line += `"${field.replace(/"/g, '""')}"`;
    } else {
      line += field;
    }
  }
  return line;
}
