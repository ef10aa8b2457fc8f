// The profile editor's form: its values, the schema shared by browser and server, and the
// conversion between the form and an ImportProfile. Pure (no React, no I/O).
//
// The form speaks the person's terms (1-based line numbers, "comma", "+01:00", one choice for
// how dates are written); buildProfile turns that into an ImportProfile and checks it with
// importProfileSchema, moving each problem onto the field that can fix it.

import { z } from "zod";
import { isMeasured, UNIT_CHOICES } from "#app/lib/import/measurement-units.ts";
import {
  DEFAULT_MISSING_VALUES,
  importProfileSchema,
  PARAMETER_LABELS,
  PARAMETERS,
  type DateOrder,
  type ImportProfile,
  type Parameter,
} from "#app/lib/import/profile.ts";
import { headerSignature, type SniffResult } from "#app/lib/import/sniff.ts";

export const DELIMITERS = {
  comma: { char: ",", label: "Comma ( , )" },
  semicolon: { char: ";", label: "Semicolon ( ; )" },
  tab: { char: "\t", label: "Tab" },
  pipe: { char: "|", label: "Vertical bar ( | )" },
} as const satisfies Record<string, { char: ImportProfile["delimiter"]; label: string }>;
export type DelimiterName = keyof typeof DELIMITERS;
const DELIMITER_NAMES = Object.keys(DELIMITERS) as [DelimiterName, ...DelimiterName[]];

export const DECIMAL_MARKS = {
  point: { char: ".", label: "Point (12.5)" },
  comma: { char: ",", label: "Comma (12,5)" },
} as const satisfies Record<string, { char: ImportProfile["decimalMark"]; label: string }>;
export type DecimalName = keyof typeof DECIMAL_MARKS;

/** How the timestamp is written: a date order for text dates, or Unix time. */
export const TIME_FORMATS = ["iso", "dmy", "mdy", "ymd", "epoch-s", "epoch-ms"] as const;
export type TimeFormat = (typeof TIME_FORMATS)[number];
export const TIME_FORMAT_LABELS: Record<TimeFormat, string> = {
  iso: "ISO 8601, year first (2025-03-01 14:00)",
  dmy: "Day first (01/03/2025 14:00)",
  mdy: "Month first (03/01/2025 14:00)",
  ymd: "Year first with slashes or dots (2025/03/01 14:00)",
  "epoch-s": "Unix time in seconds (1740837600)",
  "epoch-ms": "Unix time in milliseconds (1740837600000)",
};

/** −12:00 to +14:00 in quarter hours: every offset in use today is one of these. */
export const UTC_OFFSETS_MINUTES = Array.from({ length: (840 + 720) / 15 + 1 }, (_, i) => -720 + i * 15);

export function formatUtcOffset(minutes: number) {
  const sign = minutes < 0 ? "−" : "+";
  const abs = Math.abs(minutes);
  return `${sign}${String(Math.floor(abs / 60)).padStart(2, "0")}:${String(abs % 60).padStart(2, "0")}`;
}

export type EditorColumn = { index: number; header: string; parameter: Parameter; unit: string | null };

/** The editor's state; every field has an input of the same name in the form. */
export type EditorValues = {
  name: string;
  delimiter: DelimiterName;
  decimalMark: DecimalName;
  /** 1-based line of the header; 0 when the file has none. */
  headerLine: number;
  /** 1-based line of the first data row. */
  dataStartLine: number;
  utcOffset: number;
  /** "" until the person (or an unambiguous sample) decides. */
  timeFormat: TimeFormat | "";
  /** The sample's dates read either way: only day-first or month-first will do. */
  ambiguousDates: boolean;
  missingValues: string[];
  columns: EditorColumn[];
};

export function delimiterName(char: string): DelimiterName {
  return DELIMITER_NAMES.find((n) => DELIMITERS[n].char === char) ?? "comma";
}

function timeFormatOf(timestamp: ImportProfile["timestamp"] | SniffResult["draftProfile"]["timestamp"]): TimeFormat | "" {
  if (!timestamp) return "";
  if (timestamp.kind === "epoch") return timestamp.unit === "ms" ? "epoch-ms" : "epoch-s";
  return timestamp.order ?? "";
}

/** Missing-value sentinels as the editor lists them: the empty cell is always missing, so not listed. */
function listedSentinels(values: readonly string[]) {
  return values.filter((v) => v.trim() !== "");
}

/** The editor's starting point for a sniffed sample. Nothing ambiguous is pre-filled. */
export function valuesFromSniff(sniff: SniffResult, name = ""): EditorValues {
  const draft = sniff.draftProfile;
  return {
    name,
    delimiter: delimiterName(draft.delimiter),
    decimalMark: draft.decimalMark === "," ? "comma" : "point",
    headerLine: draft.headerRow + 1,
    dataStartLine: draft.dataStartRow + 1,
    utcOffset: draft.utcOffsetMinutes ?? 0,
    timeFormat: sniff.ambiguousDates ? "" : timeFormatOf(draft.timestamp),
    ambiguousDates: sniff.ambiguousDates,
    missingValues: listedSentinels(draft.missingValues.length ? draft.missingValues : DEFAULT_MISSING_VALUES),
    columns: draft.columns.map((c) => ({ index: c.index, header: c.header, parameter: c.parameter, unit: c.unit })),
  };
}

export function valuesFromProfile(profile: ImportProfile, name: string): EditorValues {
  return {
    name,
    delimiter: delimiterName(profile.delimiter),
    decimalMark: profile.decimalMark === "," ? "comma" : "point",
    headerLine: profile.headerRow + 1,
    dataStartLine: profile.dataStartRow + 1,
    utcOffset: profile.utcOffsetMinutes,
    timeFormat: timeFormatOf(profile.timestamp),
    ambiguousDates: false,
    missingValues: listedSentinels(profile.missingValues),
    columns: profile.columns.map((c) => ({ ...c })),
  };
}

export function emptyValues(name = ""): EditorValues {
  return {
    name,
    delimiter: "comma",
    decimalMark: "point",
    headerLine: 1,
    dataStartLine: 2,
    utcOffset: 0,
    timeFormat: "",
    ambiguousDates: false,
    missingValues: listedSentinels(DEFAULT_MISSING_VALUES),
    columns: [],
  };
}

/** A unit that fits a parameter: the current one when it is offered, else none (the person chooses). */
export function unitFor(parameter: Parameter, unit: string | null): string | null {
  if (!isMeasured(parameter)) return null;
  const choices = UNIT_CHOICES[parameter];
  return unit !== null && choices.includes(unit) ? unit : null;
}

export type FormIssue = { path: (string | number)[]; message: string };

/** Where an ImportProfile problem is fixed in the form. */
function formPath(path: readonly PropertyKey[]): (string | number)[] {
  const [head, ...rest] = path as (string | number)[];
  switch (head) {
    case "headerRow":
      return ["headerLine"];
    case "dataStartRow":
      return ["dataStartLine"];
    case "utcOffsetMinutes":
      return ["utcOffset"];
    case "delimiter":
    case "decimalMark":
    case "missingValues":
      return [head, ...rest];
    case "columns":
      return ["columns", ...rest];
    case "timestamp":
      return ["columns"];
    default:
      return [];
  }
}

function columnName(c: { index: number; header: string }) {
  return c.header.trim() ? `Column ${c.index + 1} (“${c.header.trim()}”)` : `Column ${c.index + 1}`;
}

/** The loosely typed form input (after conform's coercion), as the schema below receives it. */
type LooseValues = {
  name?: string;
  delimiter?: DelimiterName;
  decimalMark?: DecimalName;
  headerLine?: number;
  dataStartLine?: number;
  utcOffset?: number;
  timeFormat?: TimeFormat | "";
  ambiguousDates?: boolean;
  missingValues?: (string | undefined)[];
  columns?: { index: number; header?: string; parameter?: Parameter; unit?: string | null }[];
};

/**
 * Turns editor values into a checked ImportProfile, or lists the problems by form field.
 * Used by the schema (save) and by the live preview.
 */
export function buildProfile(v: LooseValues): { profile: ImportProfile; issues: [] } | { profile: null; issues: FormIssue[] } {
  const issues: FormIssue[] = [];
  const add = (path: (string | number)[], message: string) => issues.push({ path, message });

  if (!v.delimiter) add(["delimiter"], "Choose the character that separates the values");
  if (!v.decimalMark) add(["decimalMark"], "Choose the decimal mark");
  if (v.headerLine === undefined || Number.isNaN(v.headerLine)) add(["headerLine"], "Enter the header line (0 when the file has none)");
  if (v.dataStartLine === undefined || Number.isNaN(v.dataStartLine)) add(["dataStartLine"], "Enter the line where the data starts");
  if (v.utcOffset === undefined || Number.isNaN(v.utcOffset)) add(["utcOffset"], "Choose the logger clock's offset from UTC");

  if (v.ambiguousDates && v.timeFormat !== "dmy" && v.timeFormat !== "mdy") {
    add(["timeFormat"], "The dates in this file read either way: choose day-first or month-first");
  } else if (!v.timeFormat) {
    add(["timeFormat"], "Choose how the dates are written");
  }

  const columns = (v.columns ?? []).map((c) => ({
    index: c.index,
    header: c.header ?? "",
    parameter: c.parameter,
    unit: c.unit ?? null,
  }));
  if (columns.length === 0) add(["columns"], "The profile has no columns yet: choose a sample file");
  columns.forEach((c, i) => {
    if (!c.parameter) add(["columns", i, "parameter"], `Choose what ${columnName(c)} holds`);
  });

  // The timestamp follows from the columns marked as time: one "date and time" column, or a
  // "date" and a "time" column.
  const marked = (p: Parameter) => columns.filter((c) => c.parameter === p);
  const whole = marked("timestamp");
  const dates = marked("date");
  const times = marked("time");
  let timestamp: ImportProfile["timestamp"] | null = null;
  const format = v.timeFormat;
  if (whole.length === 1 && dates.length === 0 && times.length === 0) {
    if (format === "epoch-s" || format === "epoch-ms") timestamp = { kind: "epoch", column: whole[0].index, unit: format === "epoch-ms" ? "ms" : "s" };
    else if (format) timestamp = { kind: "single", column: whole[0].index, order: format as DateOrder };
  } else if (whole.length === 0 && dates.length === 1 && times.length === 1) {
    if (format === "epoch-s" || format === "epoch-ms") {
      add(["timeFormat"], "Unix time is one number: mark a single column as “date and time”");
    } else if (format) {
      timestamp = { kind: "split", dateColumn: dates[0].index, timeColumn: times[0].index, order: format as DateOrder };
    }
  } else if (columns.length > 0) {
    add(["columns"], `Mark one column as “${PARAMETER_LABELS.timestamp}”, or one as “${PARAMETER_LABELS.date}” and one as “${PARAMETER_LABELS.time}”`);
  }

  if (issues.length > 0 || !timestamp) return { profile: null, issues };

  const missing = ["", ...(v.missingValues ?? []).map((m) => (m ?? "").trim()).filter((m) => m !== "")];
  const candidate: ImportProfile = {
    delimiter: DELIMITERS[v.delimiter!].char,
    decimalMark: DECIMAL_MARKS[v.decimalMark!].char,
    headerRow: v.headerLine! - 1,
    dataStartRow: v.dataStartLine! - 1,
    timestamp,
    utcOffsetMinutes: v.utcOffset!,
    missingValues: [...new Set(missing)],
    columns: columns.map((c) => ({
      index: c.index,
      header: c.header,
      parameter: c.parameter!,
      unit: isMeasured(c.parameter!) && c.unit ? c.unit : null,
    })),
  };
  const checked = importProfileSchema.safeParse(candidate);
  if (!checked.success) {
    return { profile: null, issues: checked.error.issues.map((i) => ({ path: formPath(i.path), message: i.message })) };
  }
  return { profile: checked.data, issues: [] };
}

/** The header signature saved with a profile (what uploads are matched on). */
export function profileSignature(profile: ImportProfile) {
  return profile.headerRow >= 0 ? headerSignature(profile.columns.map((c) => c.header)) : "";
}

/**
 * The editor's schema, shared by browser (conform's onValidate) and server (the save action).
 * Fields are loose so every problem is reported at once, each on its own field; the output is
 * the name and the checked ImportProfile.
 */
export const profileFormSchema = z
  .object({
    name: z.string().trim().max(80, "Keep the name under 80 characters").optional(),
    delimiter: z.enum(DELIMITER_NAMES).optional(),
    decimalMark: z.enum(["point", "comma"]).optional(),
    headerLine: z.number().int("Enter a whole line number").min(0, "Enter 0 when the file has no header line").max(10_000).optional(),
    dataStartLine: z.number().int("Enter a whole line number").min(1, "Lines are counted from 1").max(10_000).optional(),
    utcOffset: z.number().int().min(-720).max(840).optional(),
    timeFormat: z.enum(TIME_FORMATS).optional(),
    ambiguousDates: z.boolean().optional(),
    missingValues: z.array(z.string().max(40, "Keep each value under 40 characters").optional()).max(50).optional(),
    columns: z
      .array(
        z.object({
          index: z.number().int().min(0),
          header: z.string().max(200).optional(),
          parameter: z.enum(PARAMETERS).optional(),
          unit: z.string().max(40).optional(),
        }),
      )
      .max(500)
      .optional(),
  })
  .transform((v, ctx) => {
    if (!v.name) ctx.addIssue({ code: "custom", path: ["name"], message: "Give the profile a name" });
    const built = buildProfile(v);
    for (const issue of built.issues) ctx.addIssue({ code: "custom", path: issue.path, message: issue.message });
    if (!v.name || !built.profile) return z.NEVER;
    return { name: v.name, profile: built.profile, headerSignature: profileSignature(built.profile) };
  });

/** A short description of a profile's columns for lists: "date and time · conductivity (mS/cm) · …". */
export function columnsSummary(profile: ImportProfile) {
  return profile.columns
    .filter((c) => c.parameter !== "ignore")
    .map((c) => `${PARAMETER_LABELS[c.parameter]}${c.unit ? ` (${c.unit})` : ""}`)
    .join(" · ");
}
