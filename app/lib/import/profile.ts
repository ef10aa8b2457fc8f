// The import profile: how to read one layout of logger file. Saved per logger model or
// site, edited in the profile editor, compiled into a row parser by the ingest job.

import { z } from "zod";
import { canonicalUnit, isMeasured, UNIT_CHOICES } from "./measurement-units.ts";

export type Parameter =
  | "timestamp"
  | "date"
  | "time"
  | "conductivity"
  | "specific-conductance"
  | "temperature"
  | "ph"
  | "depth"
  | "battery"
  | "ignore";
export type DateOrder = "iso" | "dmy" | "mdy" | "ymd";
export type ImportProfile = {
  delimiter: "," | ";" | "\t" | "|";
  decimalMark: "." | ",";
  /** 0-based index of the header line among the file's lines (lines before it are preamble); −1 when the file has no header line. */
  headerRow: number;
  /** 0-based index of the first data line (usually headerRow + 1; some files have a units line). */
  dataStartRow: number;
  timestamp:
    | { kind: "single"; column: number; order: DateOrder }
    | { kind: "split"; dateColumn: number; timeColumn: number; order: DateOrder }
    | { kind: "epoch"; column: number; unit: "s" | "ms" };
  /** The logger's fixed offset from UTC for timestamps written without one (60 for UTC+1); ISO values with Z or an offset ignore it. */
  utcOffsetMinutes: number;
  /** Sentinels meaning "no value", compared after trimming, case-insensitive. */
  missingValues: string[];
  columns: { index: number; header: string; parameter: Parameter; unit: string | null }[];
};

export const PARAMETERS = [
  "timestamp",
  "date",
  "time",
  "conductivity",
  "specific-conductance",
  "temperature",
  "ph",
  "depth",
  "battery",
  "ignore",
] as const satisfies readonly Parameter[];

export const DATE_ORDERS = ["iso", "dmy", "mdy", "ymd"] as const satisfies readonly DateOrder[];

export const PARAMETER_LABELS: Record<Parameter, string> = {
  timestamp: "date and time",
  date: "date",
  time: "time",
  conductivity: "conductivity",
  "specific-conductance": "specific conductance",
  temperature: "temperature",
  ph: "pH",
  depth: "depth",
  battery: "battery",
  ignore: "ignored",
};

/** Sentinels offered for a new profile: values loggers write for "no reading". */
export const DEFAULT_MISSING_VALUES = ["", "NaN", "N/A", "-9999", "ERR", "---"];

const columnSchema = z.object({
  index: z.number().int().min(0),
  header: z.string().max(200),
  parameter: z.enum(PARAMETERS),
  unit: z.string().max(40).nullable(),
});

const columnNumber = z.number().int().min(0, "Column numbers start at 0");

const timestampSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("single"), column: columnNumber, order: z.enum(DATE_ORDERS) }),
  z.object({
    kind: z.literal("split"),
    dateColumn: columnNumber,
    timeColumn: columnNumber,
    order: z.enum(DATE_ORDERS),
  }),
  z.object({ kind: z.literal("epoch"), column: columnNumber, unit: z.enum(["s", "ms"]) }),
]);

function columnName(column: { index: number; header: string }) {
  return column.header.trim() ? `Column ${column.index + 1} ("${column.header.trim()}")` : `Column ${column.index + 1}`;
}

/**
 * Validates a profile as the editor submits it and the ingest job loads it. Messages are
 * written for the person editing the profile; paths point at the field to fix.
 */
export const importProfileSchema: z.ZodType<ImportProfile> = z
  .object({
    delimiter: z.enum([",", ";", "\t", "|"], { error: "The delimiter must be a comma, semicolon, tab or pipe" }),
    decimalMark: z.enum([".", ","], { error: "The decimal mark must be a point or a comma" }),
    headerRow: z.number().int().min(-1, "The header line number cannot be below −1 (no header)"),
    dataStartRow: z.number().int().min(0, "The first data line cannot be before the start of the file"),
    timestamp: timestampSchema,
    utcOffsetMinutes: z
      .number()
      .int("The UTC offset must be a whole number of minutes")
      .min(-720, "UTC offsets run from −12:00 to +14:00")
      .max(840, "UTC offsets run from −12:00 to +14:00"),
    missingValues: z.array(z.string().max(40)).max(50),
    columns: z.array(columnSchema).min(1, "The profile has no columns"),
  })
  .superRefine((profile, ctx) => {
    if (profile.delimiter === profile.decimalMark) {
      ctx.addIssue({
        code: "custom",
        path: ["decimalMark"],
        message: "The decimal mark cannot be the same character as the delimiter",
      });
    }
    if (profile.dataStartRow <= profile.headerRow) {
      ctx.addIssue({
        code: "custom",
        path: ["dataStartRow"],
        message: "Data must start after the header line",
      });
    }

    const count = profile.columns.length;
    const seen = new Set<number>();
    profile.columns.forEach((column, i) => {
      if (column.index >= count || seen.has(column.index)) {
        ctx.addIssue({
          code: "custom",
          path: ["columns", i, "index"],
          message: `Columns must be numbered 0 to ${count - 1}, each once (found ${column.index} at position ${i})`,
        });
      }
      seen.add(column.index);
    });

    // Exactly one way to get the timestamp: the columns it names, and no others marked as time.
    const ts = profile.timestamp;
    const expected = new Map<number, "timestamp" | "date" | "time">();
    if (ts.kind === "split") {
      if (ts.dateColumn === ts.timeColumn) {
        ctx.addIssue({ code: "custom", path: ["timestamp", "timeColumn"], message: "The date and time must be in different columns" });
      }
      expected.set(ts.dateColumn, "date");
      expected.set(ts.timeColumn, "time");
    } else {
      expected.set(ts.column, "timestamp");
    }
    for (const [index, parameter] of expected) {
      const column = profile.columns.find((c) => c.index === index);
      const field = ts.kind === "split" ? (parameter === "date" ? "dateColumn" : "timeColumn") : "column";
      if (!column) {
        ctx.addIssue({
          code: "custom",
          path: ["timestamp", field],
          message: `The timestamp refers to column ${index + 1}, but the file has ${count} column${count === 1 ? "" : "s"}`,
        });
      } else if (column.parameter !== parameter) {
        ctx.addIssue({
          code: "custom",
          path: ["columns", profile.columns.indexOf(column), "parameter"],
          message: `${columnName(column)} is used for the ${PARAMETER_LABELS[parameter]} and must be marked as such`,
        });
      }
    }
    profile.columns.forEach((column, i) => {
      const isTime = column.parameter === "timestamp" || column.parameter === "date" || column.parameter === "time";
      if (isTime && !expected.has(column.index)) {
        ctx.addIssue({
          code: "custom",
          path: ["columns", i, "parameter"],
          message: `${columnName(column)} is marked as ${PARAMETER_LABELS[column.parameter]}, but the timestamp is read from ${
            ts.kind === "split" ? `columns ${ts.dateColumn + 1} and ${ts.timeColumn + 1}` : `column ${ts.column + 1}`
          }: the time can be read only one way`,
        });
      }
    });

    if (!profile.columns.some((c) => c.parameter === "conductivity" || c.parameter === "specific-conductance")) {
      ctx.addIssue({
        code: "custom",
        path: ["columns"],
        message: "Choose the column that holds conductivity or specific conductance",
      });
    }

    const used = new Map<string, number>();
    profile.columns.forEach((column, i) => {
      if (!isMeasured(column.parameter)) return;
      const earlier = used.get(column.parameter);
      if (earlier !== undefined) {
        ctx.addIssue({
          code: "custom",
          path: ["columns", i, "parameter"],
          message: `Only one column can hold ${PARAMETER_LABELS[column.parameter]} (also ${columnName(profile.columns[earlier])})`,
        });
      }
      used.set(column.parameter, i);
      if (canonicalUnit(column.parameter, column.unit) === undefined) {
        const choices = UNIT_CHOICES[column.parameter].filter((u) => u !== null);
        ctx.addIssue({
          code: "custom",
          path: ["columns", i, "unit"],
          message:
            column.parameter === "ph"
              ? `${columnName(column)}: pH has no unit, so leave the unit empty (found "${column.unit}")`
              : column.unit === null || column.unit.trim() === ""
              ? `Choose the unit of ${columnName(column)} (${choices.join(", ")})`
              : `${columnName(column)}: the unit "${column.unit}" is not one Ripplemark reads (${choices.join(", ")})`,
        });
      }
    });
  });

/** The issues of an invalid profile as one readable message per line (for logs and job errors). */
export function describeProfileIssues(error: z.ZodError): string {
  return error.issues.map((issue) => issue.message).join("\n");
}
