// Sniffing: from the first ~64 KB of an unknown logger file, work out its layout and
// propose a draft import profile. Anything that cannot be told from the sample (a date
// order no sample proves, a unit no header names, the logger's UTC offset) becomes a
// question for the person; nothing ambiguous is guessed silently.

import Papa from "papaparse";
import { parseConductivityUnit, parseTemperatureUnit } from "#app/lib/water/units.ts";
import { canonicalUnit, isMeasured, UNIT_CHOICES, type MeasuredParameter } from "./measurement-units.ts";
import {
  DEFAULT_MISSING_VALUES,
  importProfileSchema,
  PARAMETER_LABELS,
  type DateOrder,
  type ImportProfile,
  type Parameter,
} from "./profile.ts";

export type SniffOptions = {
  /** The uploaded file's name: may carry the logger serial ("RQ-4102_march.csv"). */
  fileName?: string;
  /** True when sampleText is the start of a longer file: its last, possibly cut, line is ignored. */
  truncated?: boolean;
  /** The logger's known UTC offset (from its record), used when the file does not say. */
  utcOffsetMinutes?: number;
};

export type Confidence = "high" | "medium" | "low";
export type ColumnGuess = { parameter: Parameter; unit: string | null; confidence: Confidence };
export type SniffedColumn = {
  index: number;
  header: string;
  /** Text of the units line under the header, if the file has one. */
  unitText: string | null;
  /** A few distinct values from the data lines, trimmed. */
  samples: string[];
  guess: ColumnGuess;
};

export type TimestampGuess =
  | { kind: "single"; column: number; order: DateOrder | null; hasOffset: boolean }
  | { kind: "split"; dateColumn: number; timeColumn: number; order: DateOrder | null }
  | { kind: "epoch"; column: number; unit: "s" | "ms" };

export type DraftTimestamp =
  | { kind: "single"; column: number; order: DateOrder | null }
  | { kind: "split"; dateColumn: number; timeColumn: number; order: DateOrder | null }
  | { kind: "epoch"; column: number; unit: "s" | "ms" };

/** An ImportProfile with the parts the sniffer could not decide left null. */
export type DraftProfile = Omit<ImportProfile, "timestamp" | "utcOffsetMinutes"> & {
  timestamp: DraftTimestamp | null;
  utcOffsetMinutes: number | null;
};

export type SniffQuestion =
  | { kind: "timestamp-column"; message: string }
  | { kind: "date-order"; message: string; example: string; options: DateOrder[] }
  | { kind: "utc-offset"; message: string }
  | { kind: "conductivity-column"; message: string }
  | { kind: "unit"; column: number; parameter: MeasuredParameter; message: string; options: string[]; suggestion: string | null }
  | { kind: "decimal-mark"; message: string; example: string };

export type SniffProblem = {
  kind: "empty" | "binary" | "no-data" | "single-column";
  message: string;
};

export type SniffResult = {
  bom: boolean;
  lineEnding: "CRLF" | "LF" | "CR";
  delimiter: ImportProfile["delimiter"];
  decimalMark: ImportProfile["decimalMark"];
  /** 0-based line index of the header; −1 when the file has none. */
  headerRow: number;
  /** 0-based line index of a units line under the header, or null. */
  unitsRow: number | null;
  dataStartRow: number;
  /** The lines before the header (metadata such as "Serial: RQ-4102"). */
  preamble: string[];
  /** Every data line ends with a delimiter (an empty extra field, ignored). */
  trailingDelimiter: boolean;
  columns: SniffedColumn[];
  /** Data lines seen in the sample. */
  dataRowCount: number;
  timestamp: TimestampGuess | null;
  ambiguousDates: boolean;
  /** Why the date order needs a person, when it does. */
  dateMessage: string | null;
  serialHint: string | null;
  headerSignature: string;
  draftProfile: DraftProfile;
  /** What the person must answer before draftProfile is a valid ImportProfile. Empty when it already is. */
  questions: SniffQuestion[];
  /** The draft as a checked ImportProfile when no questions remain, else null. */
  profile: ImportProfile | null;
  warnings: string[];
  /** A problem that stops the import (empty or binary file, no data lines). */
  problem: SniffProblem | null;
};

const DELIMITERS: ImportProfile["delimiter"][] = [",", ";", "\t", "|"];
const MONTHS = [
  "January", "February", "March", "April", "May", "June",
  "July", "August", "September", "October", "November", "December",
];

// ---------------------------------------------------------------------------
// Header signature

/**
 * A normalised form of a header line for matching saved profiles: each field NFKC-
 * normalised (so µ typed as micro sign or Greek mu match), trimmed, lowercased, inner
 * whitespace collapsed, joined with "|". Trailing empty fields (left by a trailing
 * delimiter) are dropped.
 */
export function headerSignature(headerFields: readonly string[]): string {
  const fields = headerFields.map((f) => f.normalize("NFKC").trim().toLowerCase().replace(/\s+/g, " "));
  while (fields.length > 0 && fields[fields.length - 1] === "") fields.pop();
  return fields.join("|");
}

// ---------------------------------------------------------------------------
// Classifying cells

type CellKind = "empty" | "missing" | "iso-datetime" | "datetime" | "date" | "time" | "number" | "text";

const ISO_DATETIME = /^\d{4}-\d{2}-\d{2}[Tt ]\d{2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*(?:[Zz]|[+\-−]\d{2}(?::?\d{2})?)?$/;
const OTHER_DATETIME = /^\d{1,4}([/.-])\d{1,2}\1\d{1,4}[Tt ]+\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*(?:[AaPp]\.?[Mm]\.?)?$/;
const DATE_ONLY = /^\d{1,4}([/.-])\d{1,2}\1\d{1,4}$/;
const TIME_ONLY = /^\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*(?:[AaPp]\.?[Mm]\.?)?$/;
const NUMBER = /^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?$/;
const GROUPED_NUMBER = /^[+-]?\d{1,3}(?:([.,])\d{3})+(?:(?!\1)[.,]\d+)?$/;
const DATE_PARTS = /^(\d{1,4})([/.-])(\d{1,2})\2(\d{1,4})/;

// Values loggers write for "no reading" (lowercase), beyond DEFAULT_MISSING_VALUES.
const KNOWN_SENTINELS = new Set([
  "", "nan", "n/a", "na", "null", "none", "err", "error", "---", "--", "-", "*", "#n/a", "inf", "-inf",
  "ovf", "over", "-999", "-9999", "-99999",
]);

function classify(value: string): CellKind {
  if (value === "") return "empty";
  if (KNOWN_SENTINELS.has(value.toLowerCase())) return "missing";
  if (ISO_DATETIME.test(value)) return "iso-datetime";
  if (OTHER_DATETIME.test(value)) return "datetime";
  if (DATE_ONLY.test(value)) return "date";
  if (TIME_ONLY.test(value)) return "time";
  if (NUMBER.test(value) || GROUPED_NUMBER.test(value)) return "number";
  return "text";
}

function clean(value: string | undefined): string {
  if (value === undefined) return "";
  let v = value.trim();
  if (v.length >= 2 && v.startsWith('"') && v.endsWith('"')) v = v.slice(1, -1).trim();
  return v;
}

function isBlank(fields: readonly string[]) {
  return fields.every((f) => f.trim() === "");
}

function isHeaderLike(fields: readonly string[]) {
  const kinds = fields.map((f) => classify(clean(f))).filter((k) => k !== "empty");
  if (kinds.length === 0) return false;
  const text = kinds.filter((k) => k === "text").length;
  const timeLike = kinds.filter((k) => k === "iso-datetime" || k === "datetime" || k === "date" || k === "time").length;
  return timeLike === 0 && text > kinds.length / 2;
}

function isDataLike(fields: readonly string[]) {
  const kinds = fields.map((f) => classify(clean(f)));
  const valued = kinds.filter((k) => k !== "empty" && k !== "missing" && k !== "text").length;
  const text = kinds.filter((k) => k === "text").length;
  return valued >= 1 && valued >= text;
}

function unitLike(text: string) {
  const t = text.replace(/^[([{]\s*|\s*[)\]}]$/g, "").trim();
  if (t === "") return false;
  return (
    parseConductivityUnit(t) !== null ||
    parseTemperatureUnit(t) !== null ||
    /^(m|cm|mm|ft|v|mv|ph|%|s|ms|psu|ppt|mg\/l|utc|local)$/i.test(t) ||
    /^[ymdhs]{1,4}([/.:\- ][ymdhs]{1,4})+$/i.test(t)
  );
}

function isUnitsLine(fields: readonly string[]) {
  const values = fields.map(clean).filter((f) => f !== "");
  if (values.length === 0) return false;
  return values.every(unitLike) && values.some((v) => unitLike(v) && !/^[ymdhs:/.\- ]+$/i.test(v));
}

// ---------------------------------------------------------------------------
// Delimiter choice

type Split = { delimiter: ImportProfile["delimiter"]; records: string[][]; modal: number; score: number };

function splitWith(text: string, delimiter: ImportProfile["delimiter"], truncated: boolean): Split {
  const parsed = Papa.parse<string[]>(text, { delimiter, skipEmptyLines: false, quoteChar: '"' });
  let records = parsed.data;
  if (truncated && records.length > 1) records = records.slice(0, -1);
  const nonBlank = records.filter((r) => !isBlank(r));
  if (nonBlank.length === 0) return { delimiter, records, modal: 0, score: 0 };
  // Data lines sit at the bottom, preamble at the top: judge on the lower half.
  const bottom = nonBlank.slice(Math.floor(nonBlank.length / 2)).slice(-200);
  const counts = new Map<number, number>();
  for (const r of bottom) counts.set(r.length, (counts.get(r.length) ?? 0) + 1);
  // Ties (a few ragged lines in a short file) are broken by the count over all lines.
  const overall = new Map<number, number>();
  for (const r of nonBlank) overall.set(r.length, (overall.get(r.length) ?? 0) + 1);
  const [modal] = [...counts.entries()].sort(
    (a, b) => b[1] - a[1] || (overall.get(b[0]) ?? 0) - (overall.get(a[0]) ?? 0) || a[0] - b[0],
  )[0];
  if (modal < 2) return { delimiter, records, modal, score: 0 };
  // A line with one extra, empty field (a trailing delimiter) is consistent too.
  const consistent = bottom.filter((r) => r.length === modal || (r.length === modal + 1 && r[modal].trim() === "")).length;
  const consistency = consistent / bottom.length;
  // Cells that read as numbers, dates or sentinels: a wrong split leaves fragments such as "5;8".
  let cells = 0;
  let clean_ = 0;
  for (const r of bottom) {
    if (r.length !== modal) continue;
    for (const f of r) {
      cells++;
      const k = classify(clean(f));
      if (k !== "text") clean_++;
      else if (!DELIMITERS.some((d) => d !== delimiter && f.includes(d))) clean_ += 0.5;
    }
  }
  const cleanliness = cells > 0 ? clean_ / cells : 0;
  const header = nonBlank.some((r) => (r.length === modal || r.length === modal - 1) && isHeaderLike(r));
  return { delimiter, records, modal, score: consistency * (0.5 + 0.5 * cleanliness) + (header ? 0.2 : 0) };
}

// ---------------------------------------------------------------------------
// Column guesses

type ValueKind = "iso-datetime" | "datetime" | "date" | "time" | "epoch-s" | "epoch-ms" | "number" | "text" | "none";

function valueKind(values: readonly string[]): ValueKind {
  const present = values.filter((v) => {
    const k = classify(v);
    return k !== "empty" && k !== "missing";
  });
  if (present.length === 0) return "none";
  const kinds = present.map(classify);
  // "Mostly": a few bad cells (the rows the importer will reject) do not change what a column is.
  const mostly = (...wanted: CellKind[]) => kinds.filter((x) => wanted.includes(x)).length >= 0.8 * kinds.length;
  if (mostly("iso-datetime")) return "iso-datetime";
  if (mostly("datetime", "iso-datetime")) return "datetime";
  if (mostly("date")) return "date";
  if (mostly("time")) return "time";
  const numbers = present.filter((_, i) => kinds[i] === "number");
  if (numbers.length >= 0.5 * present.length) {
    // Unix seconds 1e9–2.2e9 are 2001–2039; milliseconds the same range × 1000.
    if (numbers.every((v) => /^\d{10}$/.test(v) && Number(v) >= 1e9 && Number(v) <= 2.2e9)) return "epoch-s";
    if (numbers.every((v) => /^\d{13}$/.test(v) && Number(v) >= 1e12 && Number(v) <= 2.2e12)) return "epoch-ms";
    return "number";
  }
  return "text";
}

type HeaderGuess = { parameter: Parameter; unit: string | null; epoch: boolean; utc: boolean };

function guessFromHeader(header: string, unitText: string | null): HeaderGuess | null {
  const full = `${header} ${unitText ?? ""}`.normalize("NFKC");
  const lower = full.toLowerCase();
  const tokens = lower.split(/[^a-z0-9]+/).filter(Boolean);
  const has = (...words: string[]) => tokens.some((t) => words.includes(t));
  const utc = /\b(utc|gmt)\b|\(z\)/.test(lower);
  const measured = (parameter: MeasuredParameter): HeaderGuess => ({
    parameter,
    unit: canonicalUnit(parameter, full) ?? null,
    epoch: false,
    utc: false,
  });

  if (/\b(unix|epoch|posix)\b/.test(lower)) return { parameter: "timestamp", unit: null, epoch: true, utc: true };
  if (/date\s*[/_&+-]?\s*time|datetime|time\s*stamp|timestamp/.test(lower)) {
    return { parameter: "timestamp", unit: null, epoch: false, utc };
  }
  if (
    /sp\.?\s*_?cond|specific\s*cond|\bspc\b|\b(sc|ec|cond)\s*_?25\b|@\s*25|\bat\s*25|\bref\w*\s*25|\b25\s*°?\s*c\b/.test(lower) &&
    !/\b(temp|temperature)\b/.test(lower)
  ) {
    return measured("specific-conductance");
  }
  if (tokens.some((t) => t.startsWith("cond")) || has("ec", "econd")) return measured("conductivity");
  if (has("temp", "temperature", "wtemp", "watertemp", "tw") || (has("t") && parseTemperatureUnit(full) !== null)) {
    return measured("temperature");
  }
  if (has("ph")) return measured("ph");
  if (has("depth", "level", "lvl", "stage", "wl")) return measured("depth");
  if (has("batt", "battery", "bat", "vbat", "volt", "voltage", "vbatt")) return measured("battery");
  if (has("date", "day")) return { parameter: "date", unit: null, epoch: false, utc };
  if (has("time", "hour", "clock")) return { parameter: "time", unit: null, epoch: false, utc };
  // A bare unit as header ("µS/cm", "°C") still says what the column is.
  if (parseConductivityUnit(full) !== null) return measured("conductivity");
  if (/°|\bdeg/.test(lower) && parseTemperatureUnit(full) !== null) return measured("temperature");
  return null;
}

function combineGuess(fromHeader: HeaderGuess | null, kind: ValueKind): ColumnGuess {
  const timeKind = kind === "iso-datetime" || kind === "datetime";
  if (timeKind) {
    const agrees = fromHeader && (fromHeader.parameter === "timestamp" || fromHeader.parameter === "date" || fromHeader.parameter === "time");
    return { parameter: "timestamp", unit: null, confidence: agrees ? "high" : fromHeader ? "low" : "medium" };
  }
  if (kind === "epoch-s" || kind === "epoch-ms") {
    if (!fromHeader || fromHeader.parameter === "timestamp" || fromHeader.parameter === "time") {
      return { parameter: "timestamp", unit: null, confidence: fromHeader?.epoch ? "high" : "medium" };
    }
  }
  if (kind === "date") {
    return { parameter: "date", unit: null, confidence: fromHeader?.parameter === "date" ? "high" : "medium" };
  }
  if (kind === "time") {
    return { parameter: "time", unit: null, confidence: fromHeader?.parameter === "time" ? "high" : "medium" };
  }
  if (!fromHeader) return { parameter: "ignore", unit: null, confidence: "low" };
  if (kind === "none") {
    // No values to check against (a header-only file, an always-empty column).
    return { parameter: fromHeader.parameter, unit: fromHeader.unit, confidence: "medium" };
  }
  if (isMeasured(fromHeader.parameter)) {
    const unitNeeded = fromHeader.parameter !== "ph";
    const valuesFit = kind === "number";
    const confidence: Confidence = !valuesFit ? "low" : unitNeeded && fromHeader.unit === null ? "medium" : "high";
    return { parameter: fromHeader.parameter, unit: fromHeader.unit, confidence };
  }
  // Header says date/time/timestamp but the values are not.
  return { parameter: fromHeader.parameter, unit: null, confidence: "low" };
}

/**
 * Guess what a column holds from its header text, the units line under it (if any) and
 * some of its values. Used by sniffFile for every column; exported for the editor.
 */
export function guessColumn(header: string, unitText: string | null = null, values: readonly string[] = []): ColumnGuess {
  return combineGuess(guessFromHeader(header, unitText), valueKind(values));
}

// ---------------------------------------------------------------------------
// Date order

type OrderEvidence = { order: DateOrder | null; conflict: boolean; dayFirst: string | null; monthFirst: string | null; example: string | null };

function dateOrderOf(values: readonly string[]): OrderEvidence {
  let dayFirst: string | null = null;
  let monthFirst: string | null = null;
  let yearFirst: DateOrder | null = null;
  let example: string | null = null;
  let equalExample: string | null = null;
  for (const value of values) {
    const m = DATE_PARTS.exec(value);
    if (!m) continue;
    if (m[1].length === 4) {
      const iso = /^\d{4}-\d{2}-\d{2}(?:$|[Tt ])/.test(value);
      yearFirst = iso && yearFirst !== "ymd" ? "iso" : "ymd";
      continue;
    }
    const a = Number(m[1]);
    const b = Number(m[3]);
    if (a > 12 && !dayFirst) dayFirst = m[0];
    if (b > 12 && !monthFirst) monthFirst = m[0];
    if (a <= 12 && b <= 12) {
      if (a !== b && !example) example = m[0];
      if (a === b && !equalExample) equalExample = m[0];
    }
  }
  if (yearFirst) return { order: yearFirst, conflict: false, dayFirst, monthFirst, example: null };
  if (dayFirst && monthFirst) return { order: null, conflict: true, dayFirst, monthFirst, example: null };
  if (dayFirst) return { order: "dmy", conflict: false, dayFirst, monthFirst, example: null };
  if (monthFirst) return { order: "mdy", conflict: false, dayFirst, monthFirst, example: null };
  return { order: null, conflict: false, dayFirst, monthFirst, example: example ?? equalExample };
}

function ambiguityMessage(example: string): string {
  const m = DATE_PARTS.exec(example);
  if (!m) return "The dates do not show whether the day or the month comes first: choose day-first or month-first.";
  const a = Number(m[1]);
  const b = Number(m[3]);
  if (a === b) {
    return `Dates like ${example} do not show whether the day or the month comes first: choose day-first or month-first.`;
  }
  return `Dates like ${example} could be ${a} ${MONTHS[b - 1]} or ${b} ${MONTHS[a - 1]}: choose day-first or month-first.`;
}

// ---------------------------------------------------------------------------
// UTC offset and serial

/** "UTC", "UTC+1", "GMT+01:00", "UTC-05:30" in a header → offset in minutes. */
function offsetFromHeader(header: string): number | null {
  const m = /\b(?:utc|gmt)\s*(?:([+\-−])\s*(\d{1,2})(?::?(\d{2}))?)?/i.exec(header);
  if (!m) return /\(z\)/i.test(header) ? 0 : null;
  if (!m[1]) return 0;
  const minutes = Number(m[2]) * 60 + Number(m[3] ?? 0);
  return m[1] === "+" ? minutes : -minutes;
}

const SERIAL_LABELLED = /\b(?:serial(?:\s*(?:no\.?|number|nr\.?|#))?|s\/n)\s*[:=#]?\s*([A-Za-z0-9][A-Za-z0-9._/-]{1,30}[A-Za-z0-9])/i;
const SERIAL_SHAPE = /(?:^|[^A-Za-z0-9])([A-Z]{2,4}-\d{3,6})(?![A-Za-z0-9])/;

function findSerial(preamble: readonly string[], fileName: string | undefined): string | null {
  for (const line of preamble) {
    const m = SERIAL_LABELLED.exec(line);
    if (m) return m[1];
  }
  for (const line of preamble) {
    const m = SERIAL_SHAPE.exec(line);
    if (m) return m[1];
  }
  if (fileName) {
    const base = fileName.replace(/^.*[\\/]/, "");
    const shaped = SERIAL_SHAPE.exec(base);
    if (shaped) return shaped[1];
    const labelled = /(?:serial|sn)[_ -]?([A-Za-z0-9]{3,20})/i.exec(base);
    if (labelled) return labelled[1];
  }
  return null;
}

// ---------------------------------------------------------------------------
// The sniffer

function lineEndingOf(text: string): SniffResult["lineEnding"] {
  let crlf = 0;
  let lf = 0;
  let cr = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 13) {
      if (text.charCodeAt(i + 1) === 10) {
        crlf++;
        i++;
      } else cr++;
    } else if (c === 10) lf++;
  }
  if (crlf >= lf && crlf >= cr && crlf > 0) return "CRLF";
  if (cr > lf) return "CR";
  return "LF";
}

function looksBinary(text: string) {
  const head = text.slice(0, 8192);
  if (head.includes("\u0000")) return true;
  let odd = 0;
  for (let i = 0; i < head.length; i++) {
    const c = head.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 12) || c === 0xfffd) odd++;
  }
  return odd / head.length > 0.02;
}

function emptyDraft(): DraftProfile {
  return {
    delimiter: ",",
    decimalMark: ".",
    headerRow: 0,
    dataStartRow: 1,
    timestamp: null,
    utcOffsetMinutes: null,
    missingValues: [...DEFAULT_MISSING_VALUES],
    columns: [],
  };
}

function stopped(bom: boolean, lineEnding: SniffResult["lineEnding"], problem: SniffProblem): SniffResult {
  return {
    bom,
    lineEnding,
    delimiter: ",",
    decimalMark: ".",
    headerRow: -1,
    unitsRow: null,
    dataStartRow: 0,
    preamble: [],
    trailingDelimiter: false,
    columns: [],
    dataRowCount: 0,
    timestamp: null,
    ambiguousDates: false,
    dateMessage: null,
    serialHint: null,
    headerSignature: "",
    draftProfile: emptyDraft(),
    questions: [],
    profile: null,
    warnings: [],
    problem,
  };
}

/**
 * Work out the layout of a logger file from its first ~64 KB (decoded text) and draft
 * an import profile. Pure and synchronous: runs in the browser for the profile editor
 * and on the server.
 */
export function sniffFile(sampleText: string, options: SniffOptions = {}): SniffResult {
  const bom = sampleText.charCodeAt(0) === 0xfeff;
  const text = bom ? sampleText.slice(1) : sampleText;
  const lineEnding = lineEndingOf(text);
  if (text.trim() === "") return stopped(bom, lineEnding, { kind: "empty", message: "The file is empty." });
  if (looksBinary(text)) {
    return stopped(bom, lineEnding, {
      kind: "binary",
      message: "This is not a text file (it contains binary data). Export the logger data as CSV or text and upload that.",
    });
  }

  const warnings: string[] = [];
  const splits = DELIMITERS.map((d) => splitWith(text, d, options.truncated ?? false));
  // Highest score wins; on a tie the earlier delimiter in DELIMITERS (comma first).
  const best = splits.reduce((a, b) => (b.score > a.score + 1e-9 ? b : a));
  if (best.score === 0) {
    const result = stopped(bom, lineEnding, {
      kind: "single-column",
      message: "Every line has one field: no comma, semicolon, tab or pipe separates the values. Is this a logger data file?",
    });
    return result;
  }
  const { delimiter, records, modal } = best;

  // Header: the first line with the data's field count, mostly text, followed (after an
  // optional units line) by a line of data.
  const fits = (r: string[] | undefined) => r !== undefined && (r.length === modal || r.length === modal - 1 || r.length === modal + 1);
  const nextNonBlank = (i: number) => {
    let j = i + 1;
    while (j < records.length && isBlank(records[j])) j++;
    return j;
  };
  let headerRow = -1;
  let unitsRow: number | null = null;
  let dataStartRow = -1;
  for (let i = 0; i < records.length; i++) {
    const r = records[i];
    if (isBlank(r) || !fits(r) || !isHeaderLike(r)) continue;
    let j = nextNonBlank(i);
    let units: number | null = null;
    if (fits(records[j]) && isUnitsLine(records[j])) {
      units = j;
      j = nextNonBlank(j);
    }
    // j past the end: a header with no data lines (reported below as a problem).
    if (j >= records.length || (fits(records[j]) && isDataLike(records[j]))) {
      headerRow = i;
      unitsRow = units;
      dataStartRow = j < records.length ? j : (units ?? i) + 1;
      break;
    }
  }
  if (headerRow === -1) {
    dataStartRow = records.findIndex((r) => r.length === modal && isDataLike(r));
    if (dataStartRow === -1) dataStartRow = records.length;
    warnings.push("No header line was found: columns are numbered instead of named.");
  }

  const dataRows: string[][] = [];
  for (let i = dataStartRow; i < records.length; i++) if (!isBlank(records[i])) dataRows.push(records[i]);
  const modalRows = dataRows.filter((r) => r.length === modal);
  const header = headerRow >= 0 ? records[headerRow] : [];

  // A trailing delimiter on every data line leaves an empty last field: not a column.
  const trailingDelimiter =
    modal > 1 &&
    modalRows.length > 0 &&
    modalRows.every((r) => r[modal - 1].trim() === "") &&
    (headerRow === -1 || header.length === modal - 1 || (header[modal - 1] ?? "").trim() === "");
  const columnCount = trailingDelimiter ? modal - 1 : Math.max(modal, header.length);

  const irregular = dataRows.filter((r) => {
    const n = r.length > columnCount && r[r.length - 1].trim() === "" ? r.length - 1 : r.length;
    return n !== columnCount;
  }).length;
  if (irregular > 0) {
    warnings.push(`${irregular} of ${dataRows.length} data lines do not have ${columnCount} fields; they will be rejected.`);
  }
  const regularRows = dataRows.filter((r) => r.length === columnCount || (r.length === columnCount + 1 && r[columnCount].trim() === ""));

  const preamble = records.slice(0, Math.max(headerRow, headerRow === -1 ? dataStartRow : 0)).filter((r) => !isBlank(r)).map((r) => r.join(delimiter));

  // Decimal mark: numbers written 12,5 (not three digits after the comma, which could be
  // thousands) prove a decimal comma; 12.5 proves a point.
  let commaEvidence = 0;
  let pointEvidence = 0;
  let ambiguousComma: string | null = null;
  for (const r of regularRows) {
    for (const f of r) {
      const v = clean(f);
      if (classify(v) !== "number") continue;
      if (/^[+-]?\d+,\d+$/.test(v)) {
        if (/^[+-]?[1-9]\d{0,2},\d{3}$/.test(v)) ambiguousComma ??= v;
        else commaEvidence++;
      } else if (/^[+-]?\d{1,3}(\.\d{3})+,\d+$/.test(v)) commaEvidence++;
      else if (/^[+-]?\d*\.\d+$/.test(v) && !/^[+-]?[1-9]\d{0,2}\.\d{3}$/.test(v)) pointEvidence++;
      else if (/^[+-]?\d{1,3}(,\d{3})+\.\d+$/.test(v)) pointEvidence++;
    }
  }
  let decimalMark: "." | "," = commaEvidence > pointEvidence ? "," : ".";
  const questions: SniffQuestion[] = [];
  if (delimiter !== "," && commaEvidence === 0 && pointEvidence === 0 && ambiguousComma) {
    decimalMark = ",";
    questions.push({
      kind: "decimal-mark",
      example: ambiguousComma,
      message: `Values like ${ambiguousComma} could use a decimal comma (${ambiguousComma.replace(",", ".")}) or a thousands separator: choose the decimal mark.`,
    });
  }
  if (decimalMark === delimiter) decimalMark = ".";

  // Columns.
  const columns: SniffedColumn[] = [];
  const kinds: ValueKind[] = [];
  for (let c = 0; c < columnCount; c++) {
    const headerText = headerRow >= 0 ? clean(header[c]) : `Column ${c + 1}`;
    const unitText = unitsRow !== null ? clean(records[unitsRow][c]) || null : null;
    const values = regularRows.map((r) => clean(r[c]));
    const samples: string[] = [];
    for (const v of values) {
      if (v !== "" && !samples.includes(v)) samples.push(v);
      if (samples.length === 5) break;
    }
    const kind = valueKind(values);
    kinds.push(kind);
    const guess = combineGuess(guessFromHeader(headerText, unitText), kind);
    columns.push({ index: c, header: headerText, unitText, samples, guess });
  }
  for (const column of columns) {
    if (column.guess.confidence === "low" && column.guess.parameter !== "ignore") {
      warnings.push(`Column ${column.index + 1} ("${column.header}") was guessed as ${PARAMETER_LABELS[column.guess.parameter]} although its header and values disagree: check it.`);
    }
  }

  // Timestamp.
  const valuesOf = (c: number) => regularRows.map((r) => clean(r[c])).filter((v) => v !== "" && classify(v) !== "missing");
  let timestamp: TimestampGuess | null = null;
  const single = columns.find((c) => c.guess.parameter === "timestamp" && (kinds[c.index] === "iso-datetime" || kinds[c.index] === "datetime"));
  const dateColumn = columns.find((c) => c.guess.parameter === "date" && kinds[c.index] === "date");
  const timeColumn = columns.find((c) => c.guess.parameter === "time" && kinds[c.index] === "time");
  const epochColumn = columns.find((c) => c.guess.parameter === "timestamp" && (kinds[c.index] === "epoch-s" || kinds[c.index] === "epoch-ms"));
  let orderEvidence: OrderEvidence | null = null;
  if (single) {
    const values = valuesOf(single.index);
    orderEvidence = dateOrderOf(values);
    const hasOffset = values.length > 0 && values.every((v) => /(?:[Zz]|[+\-−]\d{2}(?::?\d{2})?)$/.test(v) && ISO_DATETIME.test(v));
    timestamp = { kind: "single", column: single.index, order: orderEvidence.order, hasOffset };
  } else if (dateColumn && timeColumn) {
    orderEvidence = dateOrderOf(valuesOf(dateColumn.index));
    timestamp = { kind: "split", dateColumn: dateColumn.index, timeColumn: timeColumn.index, order: orderEvidence.order };
  } else if (epochColumn) {
    const unit = kinds[epochColumn.index] === "epoch-ms" ? "ms" : "s";
    timestamp = { kind: "epoch", column: epochColumn.index, unit };
  }

  let ambiguousDates = false;
  let dateMessage: string | null = null;
  if (!timestamp) {
    questions.unshift({
      kind: "timestamp-column",
      message: "No column with dates and times was recognised: choose the column (or the date and time columns) that say when each reading was taken.",
    });
  } else if (timestamp.kind !== "epoch" && timestamp.order === null && orderEvidence) {
    ambiguousDates = true;
    if (orderEvidence.conflict) {
      dateMessage = `The dates mix day-first (${orderEvidence.dayFirst}) and month-first (${orderEvidence.monthFirst}) forms: check the file, then choose day-first or month-first.`;
    } else {
      dateMessage = ambiguityMessage(orderEvidence.example ?? "");
    }
    questions.push({
      kind: "date-order",
      message: dateMessage,
      example: orderEvidence.example ?? orderEvidence.dayFirst ?? "",
      options: ["dmy", "mdy"],
    });
  }

  // UTC offset: from the values (Z/±hh:mm), the header ("UTC", "UTC+1"), the logger record, or a question.
  let utcOffsetMinutes: number | null = null;
  if (timestamp) {
    const timeHeaders = timestamp.kind === "split" ? [timestamp.dateColumn, timestamp.timeColumn] : [timestamp.column];
    const fromHeader = timeHeaders
      .map((i) => offsetFromHeader(`${columns[i].header} ${columns[i].unitText ?? ""}`))
      .find((o) => o !== null);
    if (timestamp.kind === "epoch") utcOffsetMinutes = 0; // Unix time is UTC by definition
    else if (fromHeader !== undefined && fromHeader !== null) utcOffsetMinutes = fromHeader;
    else if (options.utcOffsetMinutes !== undefined) utcOffsetMinutes = options.utcOffsetMinutes;
    else if (timestamp.kind === "single" && timestamp.hasOffset) utcOffsetMinutes = 0; // every value carries its own offset
    else {
      questions.push({
        kind: "utc-offset",
        message: "The timestamps carry no time zone. What is the logger clock's fixed offset from UTC (for example +01:00 for a logger kept on UTC+1 all year)?",
      });
    }
  }

  // Draft columns: only the chosen timestamp columns keep a time parameter.
  const timeIndexes = new Set<number>(
    !timestamp ? [] : timestamp.kind === "split" ? [timestamp.dateColumn, timestamp.timeColumn] : [timestamp.column],
  );
  const usedMeasures = new Set<Parameter>();
  const draftColumns: ImportProfile["columns"] = columns.map((c) => {
    let parameter = c.guess.parameter;
    if ((parameter === "timestamp" || parameter === "date" || parameter === "time") && !timeIndexes.has(c.index)) parameter = "ignore";
    if (timeIndexes.has(c.index) && timestamp) {
      parameter = timestamp.kind === "split" ? (c.index === timestamp.dateColumn ? "date" : "time") : "timestamp";
    }
    if (isMeasured(parameter)) {
      if (usedMeasures.has(parameter)) {
        warnings.push(`Column ${c.index + 1} ("${c.header}") also looks like ${PARAMETER_LABELS[parameter]}; it is ignored until you choose.`);
        parameter = "ignore";
      } else usedMeasures.add(parameter);
    }
    return { index: c.index, header: c.header, parameter, unit: isMeasured(parameter) ? c.guess.unit : null };
  });

  if (!usedMeasures.has("conductivity") && !usedMeasures.has("specific-conductance")) {
    questions.push({
      kind: "conductivity-column",
      message: "No conductivity column was recognised: choose the column that holds conductivity or specific conductance.",
    });
  }
  for (const column of draftColumns) {
    if (!isMeasured(column.parameter) || column.parameter === "ph" || column.unit !== null) continue;
    const parameter = column.parameter;
    questions.push({
      kind: "unit",
      column: column.index,
      parameter,
      options: UNIT_CHOICES[parameter].filter((u): u is string => u !== null),
      suggestion: suggestUnit(parameter, valuesOf(column.index), decimalMark),
      message: `Column ${column.index + 1} ("${column.header}") holds ${PARAMETER_LABELS[parameter]} but does not say in which unit: choose it.`,
    });
  }

  // Sentinels: the defaults plus any "no reading" spelling seen in measurement columns.
  const missingValues = [...DEFAULT_MISSING_VALUES];
  for (const column of draftColumns) {
    if (!isMeasured(column.parameter)) continue;
    for (const v of regularRows.map((r) => clean(r[column.index]))) {
      if (KNOWN_SENTINELS.has(v.toLowerCase()) && !missingValues.some((m) => m.toLowerCase() === v.toLowerCase())) {
        missingValues.push(v);
      }
    }
  }

  const draftProfile: DraftProfile = {
    delimiter,
    decimalMark,
    headerRow,
    dataStartRow: Math.max(dataStartRow, headerRow + 1),
    timestamp: timestamp
      ? timestamp.kind === "single"
        ? { kind: "single", column: timestamp.column, order: timestamp.order }
        : timestamp
      : null,
    utcOffsetMinutes,
    missingValues,
    columns: draftColumns,
  };

  let problem: SniffProblem | null = null;
  if (dataRows.length === 0) {
    problem = { kind: "no-data", message: "The file has a header line but no data lines." };
  }

  let profile: ImportProfile | null = null;
  if (questions.length === 0 && !problem) {
    const checked = importProfileSchema.safeParse(draftProfile);
    if (checked.success) profile = checked.data;
    else warnings.push(...checked.error.issues.map((i) => i.message));
  }

  return {
    bom,
    lineEnding,
    delimiter,
    decimalMark,
    headerRow,
    unitsRow,
    dataStartRow: draftProfile.dataStartRow,
    preamble,
    trailingDelimiter,
    columns,
    dataRowCount: dataRows.length,
    timestamp,
    ambiguousDates,
    dateMessage,
    serialHint: findSerial(preamble, options.fileName),
    headerSignature: headerRow >= 0 ? headerSignature(columns.map((c) => c.header)) : "",
    draftProfile,
    questions,
    profile,
    warnings,
    problem,
  };
}

// A hint only, shown beside the unit question; never applied without the person.
function suggestUnit(parameter: MeasuredParameter, values: readonly string[], decimalMark: "." | ","): string | null {
  const numbers = values
    .map((v) => Number(decimalMark === "," ? v.replace(",", ".") : v))
    .filter((n) => Number.isFinite(n));
  if (numbers.length === 0) return null;
  const median = [...numbers].sort((a, b) => a - b)[Math.floor(numbers.length / 2)];
  if (parameter === "temperature") return median > 32 && median < 120 ? "°F" : median > 250 ? "K" : "°C";
  if (parameter === "conductivity" || parameter === "specific-conductance") return median < 20 && numbers.some((n) => !Number.isInteger(n)) ? "mS/cm" : "µS/cm";
  if (parameter === "depth") return "m";
  if (parameter === "battery") return median > 100 ? "mV" : "V";
  return null;
}

// ---------------------------------------------------------------------------
// Answering the questions

export type DraftAnswers = {
  dateOrder?: DateOrder;
  utcOffsetMinutes?: number;
  decimalMark?: "." | ",";
  /** Unit per column index. */
  units?: Record<number, string>;
  /** Parameter per column index (to point at the conductivity column, say). */
  parameters?: Record<number, Parameter>;
  /** The whole timestamp spec, when no timestamp column was recognised. */
  timestamp?: ImportProfile["timestamp"];
};

/**
 * Apply a person's answers to a draft and check the result. Returns the profile, or the
 * remaining problems in the schema's words.
 */
export function resolveDraft(
  draft: DraftProfile,
  answers: DraftAnswers,
): { success: true; profile: ImportProfile } | { success: false; problems: string[] } {
  let timestamp: DraftTimestamp | null = answers.timestamp ?? draft.timestamp;
  if (timestamp && timestamp.kind !== "epoch" && timestamp.order === null && answers.dateOrder) {
    timestamp = { ...timestamp, order: answers.dateOrder };
  }
  const candidate = {
    ...draft,
    decimalMark: answers.decimalMark ?? draft.decimalMark,
    utcOffsetMinutes: answers.utcOffsetMinutes ?? draft.utcOffsetMinutes,
    timestamp,
    columns: draft.columns.map((c) => {
      const parameter = answers.parameters?.[c.index] ?? c.parameter;
      const unit = answers.units?.[c.index] ?? (parameter === c.parameter ? c.unit : null);
      return { ...c, parameter, unit };
    }),
  };
  const problems: string[] = [];
  if (!candidate.timestamp) problems.push("Choose the column that holds the date and time.");
  else if (candidate.timestamp.kind !== "epoch" && candidate.timestamp.order === null) {
    problems.push("Choose whether dates are day-first or month-first.");
  }
  if (candidate.utcOffsetMinutes === null) problems.push("Choose the logger clock's offset from UTC.");
  if (problems.length > 0) return { success: false, problems };
  const checked = importProfileSchema.safeParse(candidate);
  if (!checked.success) return { success: false, problems: checked.error.issues.map((i) => i.message) };
  return { success: true, profile: checked.data };
}
