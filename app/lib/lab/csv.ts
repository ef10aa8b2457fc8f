// The CSV layout for importing laboratory analyses, its template, and the parser that checks every
// row before anything is saved (the import is all-or-nothing). Pure: no I/O.
import Papa from "papaparse";
import { wallTimeToInstant } from "#app/lib/zoned-time.ts";
import {
  analysisSchema,
  EXTRA_IONS,
  FORM_IONS,
  ION_LABELS,
  ionFormula,
  MAIN_IONS,
  sampledAtProblem,
  type AnalysisValues,
  type FormIon,
} from "./analysis-input.ts";

export const LAB_CSV_MAX_BYTES = 1_000_000;
export const LAB_CSV_MAX_ROWS = 500;
/** More problems than this are counted, not listed. */
export const LAB_CSV_MAX_ERRORS_LISTED = 200;

type Field = "siteCode" | "sampledAt" | "labReference" | "notes" | "measuredEc" | "measuredTds" | "pH" | "silica" | FormIon;

export type LabCsvColumn = { name: string; field: Field; required: boolean; meaning: string };

/** Every column the import understands, in template order. Names are matched ignoring case. */
export const LAB_CSV_COLUMNS: LabCsvColumn[] = [
  { name: "site_code", field: "siteCode", required: true, meaning: "The site's code, such as QF2" },
  {
    name: "sampled_at",
    field: "sampledAt",
    required: true,
    meaning: "When the sample was taken: 2025-03-14 09:30 in the site's local time, or with a UTC offset (2025-03-14T09:30+01:00, …Z)",
  },
  { name: "lab_reference", field: "labReference", required: false, meaning: "The laboratory's sample number (optional)" },
  ...MAIN_IONS.map((ion) => ({ name: ion, field: ion, required: false, meaning: `${ION_LABELS[ion]} ${ionFormula(ion)}, mg/L` })),
  { name: "EC", field: "measuredEc", required: false, meaning: "Measured electrical conductivity, µS/cm at 25 °C" },
  { name: "TDS", field: "measuredTds", required: false, meaning: "Measured total dissolved solids (dried residue), mg/L" },
  { name: "pH", field: "pH", required: false, meaning: "Laboratory pH, 0–14" },
  { name: "SiO2", field: "silica", required: false, meaning: "Silica as SiO₂, mg/L (optional; enters the calculated TDS)" },
  ...EXTRA_IONS.map((ion) => ({ name: ion, field: ion, required: false, meaning: `${ION_LABELS[ion]} ${ionFormula(ion)}, mg/L (optional)` })),
  { name: "notes", field: "notes", required: false, meaning: "Free text (optional)" },
];

const COLUMN_BY_KEY = new Map(LAB_CSV_COLUMNS.map((c) => [c.name.toLowerCase(), c]));
const COLUMN_BY_FIELD = new Map(LAB_CSV_COLUMNS.map((c) => [c.field, c]));

/** The downloadable template: the header and one invented example row (Marrowby, site QF2). */
export function labCsvTemplate(): string {
  const header = LAB_CSV_COLUMNS.slice(0, 3 + MAIN_IONS.length + 4).map((c) => c.name);
  const example: Record<string, string> = {
    site_code: "QF2",
    sampled_at: "2025-03-14 09:30",
    lab_reference: "MWC-25-0412",
    Ca: "54", Mg: "6.6", Na: "20.5", K: "3.2", NH4: "0.05", Cl: "31", SO4: "30", HCO3: "146", CO3: "0", NO3: "12.4", F: "0.11",
    EC: "410", TDS: "262", pH: "7.8", SiO2: "9.5",
  };
  return [header.join(","), header.map((h) => example[h] ?? "").join(",")].join("\r\n") + "\r\n";
}

export type LabCsvSite = { id: string; code: string; timeZone: string };
export type LabCsvRowError = { row: number; column: string; value: string; reason: string };
export type LabCsvRow = { row: number; siteId: string; siteCode: string; sampledAt: Date; values: AnalysisValues };
export type LabCsvResult =
  | { ok: true; rows: LabCsvRow[] }
  | { ok: false; message: string; errors: LabCsvRowError[]; errorCount: number };

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const STAMP = /^(\d{4}-\d{2}-\d{2})[T ](\d{2}:\d{2}(?::\d{2})?)(?:\s*(Z|[+-]\d{2}:?\d{2}))?$/i;

/** "Ca (mg/L)" and "EC [µS/cm]" are read as "Ca" and "EC". */
function headerKey(raw: string) {
  return raw.replace(/^\uFEFF/, "").trim().replace(/\s*[([].*[)\]]\s*$/, "").toLowerCase();
}

function parseStamp(text: string, timeZone: string): { instant: Date } | { problem: string } {
  const m = STAMP.exec(text);
  if (!m) return { problem: "Write the time as 2025-03-14 09:30 (site time) or 2025-03-14T09:30+01:00" };
  const [, date, time, zone] = m;
  if (zone) {
    const offset = zone.toUpperCase() === "Z" ? "Z" : zone.replace(/^([+-]\d{2})(\d{2})$/, "$1:$2");
    const instant = new Date(`${date}T${time.length === 5 ? `${time}:00` : time}${offset}`);
    // Date accepts 2025-02-30 by rolling over; the wall-time check below refuses it.
    if (Number.isNaN(instant.getTime()) || !wallTimeToInstant(`${date}T${time}`, "UTC").ok) return { problem: "That date does not exist" };
    return { instant };
  }
  const wall = wallTimeToInstant(`${date}T${time}`, timeZone);
  if (!wall.ok) {
    return { problem: wall.reason === "nonexistent" ? `That time did not exist in ${timeZone} (the clocks went forward)` : "That date does not exist" };
  }
  return { instant: wall.instant };
}

/**
 * Reads a CSV of analyses (first line: column names from LAB_CSV_COLUMNS) and checks every row with
 * the entry form's rules. Row numbers count the header as row 1, as a spreadsheet shows them.
 * Either every row is good (`ok: true`) or the problems are listed by row, column and reason.
 */
export function parseLabCsv(text: string, sites: readonly LabCsvSite[], now: Date = new Date()): LabCsvResult {
  const errors: LabCsvRowError[] = [];
  let errorCount = 0;
  const fail = (row: number, column: string, value: string, reason: string) => {
    errorCount += 1;
    if (errors.length < LAB_CSV_MAX_ERRORS_LISTED) errors.push({ row, column, value: value.slice(0, 80), reason });
  };
  const refuse = (message: string): LabCsvResult => ({ ok: false, message, errors, errorCount });

  if (text.trim() === "") return refuse("The file is empty. Nothing was saved.");
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ""), { header: false, skipEmptyLines: false });
  const lines = parsed.data;
  for (const e of parsed.errors) {
    if (e.type === "Delimiter") continue; // one-column files: reported below as missing columns
    fail((e.row ?? 0) + 1, "", "", `The file could not be read here: ${e.message}`);
  }
  if (errorCount) return refuse("The file is not valid CSV. Nothing was saved.");

  const header = lines[0] ?? [];
  const columns: (LabCsvColumn | null)[] = [];
  const seen = new Set<Field>();
  header.forEach((raw) => {
    const key = headerKey(raw);
    const column = COLUMN_BY_KEY.get(key) ?? null;
    if (!key) fail(1, raw, raw, "A column has no name");
    else if (!column) fail(1, raw, raw, "Not a column Ripplemark knows; see the layout on this page");
    else if (seen.has(column.field)) fail(1, raw, raw, "This column appears twice");
    if (column) seen.add(column.field);
    columns.push(column);
  });
  for (const c of LAB_CSV_COLUMNS) {
    if (c.required && !seen.has(c.field)) fail(1, c.name, "", "This column is required");
  }
  if (errorCount) return refuse("The first row must name the columns. Nothing was saved.");

  const body = lines
    .map((cells, index) => ({ cells, row: index + 1 }))
    .slice(1)
    .filter(({ cells }) => cells.some((c) => c.trim() !== ""));
  if (body.length === 0) return refuse("The file has column names but no rows of analyses. Nothing was saved.");
  if (body.length > LAB_CSV_MAX_ROWS) {
    return refuse(`The file has ${body.length} analyses; import at most ${LAB_CSV_MAX_ROWS} at a time. Nothing was saved.`);
  }

  const siteByCode = new Map(sites.map((s) => [s.code.toUpperCase(), s]));
  const rows: LabCsvRow[] = [];
  for (const { cells, row } of body) {
    const before = errorCount;
    if (cells.length > header.length) fail(row, "", cells.slice(header.length).join(","), "This row has more cells than the first row has column names");
    const cell = new Map<Field, string>();
    columns.forEach((column, i) => {
      if (column) cell.set(column.field, (cells[i] ?? "").trim());
    });
    const name = (field: Field) => COLUMN_BY_FIELD.get(field)!.name;
    const numberOf = (field: Field) => {
      const raw = cell.get(field) ?? "";
      if (raw === "") return undefined;
      if (!NUMBER.test(raw)) {
        fail(row, name(field), raw, raw.includes(",")
          ? "Not a number: use a decimal point, without thousands separators"
          : "Not a number: enter the value (0 for below the detection limit) or leave the cell empty");
        return undefined;
      }
      return Number(raw);
    };

    const code = cell.get("siteCode") ?? "";
    const site = siteByCode.get(code.toUpperCase());
    if (!code) fail(row, "site_code", "", "Enter the site's code");
    else if (!site) fail(row, "site_code", code, "No site has this code");

    const stampText = cell.get("sampledAt") ?? "";
    let sampledAt: Date | undefined;
    if (!stampText) fail(row, "sampled_at", "", "Enter when the sample was taken");
    else if (site || /(Z|[+-]\d{2}:?\d{2})$/i.test(stampText)) {
      const stamp = parseStamp(stampText, site?.timeZone ?? "UTC");
      const problem = "problem" in stamp ? stamp.problem : sampledAtProblem(stamp.instant, now);
      if (problem) fail(row, "sampled_at", stampText, problem);
      else if ("instant" in stamp) sampledAt = stamp.instant;
    }

    const beforeIons = errorCount;
    const ions: Partial<Record<FormIon, number>> = {};
    for (const ion of FORM_IONS) {
      const v = numberOf(ion);
      if (v !== undefined) ions[ion] = v;
    }
    const unreadableIon = errorCount > beforeIons;
    const input = {
      labReference: cell.get("labReference") || undefined,
      ions,
      measuredEc: numberOf("measuredEc"),
      measuredTds: numberOf("measuredTds"),
      pH: numberOf("pH"),
      silica: numberOf("silica"),
      notes: cell.get("notes") ?? "",
    };
    const checked = analysisSchema.safeParse(input);
    if (!checked.success) {
      for (const issue of checked.error.issues) {
        const [first, second] = issue.path as string[];
        // "Two cations and two anions" follows from an unreadable ion cell already reported.
        if (first === "ions" && !second && unreadableIon) continue;
        const field = (first === "ions" && second ? second : first) as Field;
        const column = first === "ions" && !second ? "ions" : (COLUMN_BY_FIELD.get(field)?.name ?? String(first));
        const raw = first === "ions" && !second ? "" : (cell.get(field) ?? "");
        fail(row, column, raw, issue.message);
      }
    }
    if (errorCount === before && site && sampledAt && checked.success) {
      rows.push({ row, siteId: site.id, siteCode: site.code, sampledAt, values: checked.data as AnalysisValues });
    }
  }
  if (errorCount) {
    const bad = new Set(errors.map((e) => e.row)).size;
    return refuse(
      `${errorCount} ${errorCount === 1 ? "problem" : "problems"} in ${bad}${errorCount > errors.length ? "+" : ""} ${bad === 1 ? "row" : "rows"}. Nothing was saved: correct the file and upload it again.`,
    );
  }
  return { ok: true, rows };
}
