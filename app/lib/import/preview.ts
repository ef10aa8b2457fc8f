// Run a profile over a whole text in memory: the profile editor's live preview, and the
// unit tests. The ingest job streams instead, with the same parser.

import Papa from "papaparse";
import type { ImportProfile } from "./profile.ts";
import {
  compileProfile,
  createDuplicateChecker,
  createParsedRow,
  isBlankRow,
  type CompileOptions,
  type ParsedRow,
  type RowError,
} from "./rows.ts";

export type PreviewOptions = CompileOptions & {
  /** Stop after this many data lines (blank lines not counted). */
  maxRows?: number;
};

export type PreviewRow = ParsedRow & { row: number };

export type PreviewResult = {
  rows: PreviewRow[];
  errors: RowError[];
  dataRows: number;
  accepted: number;
  rejected: number;
  /** Rows rejected because an earlier row of the file has the same timestamp. */
  duplicates: number;
  /** The first raw data rows, for diagnoseMostlyFailing. */
  sampleRows: string[][];
};

/**
 * Split `text` with the profile's delimiter (papaparse, RFC 4180 quoting), skip the lines
 * before dataStartRow and blank lines, and parse each data line. Row numbers are 1-based
 * line numbers (line index + 1; files with line breaks inside quoted cells, which loggers
 * do not write, would count records instead). The first of several rows with the same
 * timestamp is kept; later ones are rejected.
 */
export function previewImport(text: string, profile: ImportProfile, options: PreviewOptions): PreviewResult {
  const parser = compileProfile(profile, options);
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const records = Papa.parse<string[]>(body, { delimiter: profile.delimiter, skipEmptyLines: false, quoteChar: '"' }).data;
  const duplicates = createDuplicateChecker();
  const timeHeader = headerOfTime(profile);
  const result: PreviewResult = { rows: [], errors: [], dataRows: 0, accepted: 0, rejected: 0, duplicates: 0, sampleRows: [] };
  const out = createParsedRow();
  const limit = options.maxRows ?? Number.POSITIVE_INFINITY;
  for (let i = Math.max(0, profile.dataStartRow); i < records.length && result.dataRows < limit; i++) {
    const fields = records[i];
    if (isBlankRow(fields)) continue;
    const rowNumber = i + 1;
    result.dataRows++;
    if (result.sampleRows.length < 20) result.sampleRows.push(fields);
    if (!parser.parseRow(fields, rowNumber, out)) {
      result.rejected++;
      for (const e of parser.lastErrors) result.errors.push({ ...e });
      continue;
    }
    const earlier = duplicates.check(out.timeMs, rowNumber);
    if (earlier !== 0) {
      result.rejected++;
      result.duplicates++;
      result.errors.push({
        row: rowNumber,
        column: timeHeader,
        value: new Date(out.timeMs).toISOString(),
        reason: `same timestamp as row ${earlier}; the first one is kept`,
      });
      continue;
    }
    result.accepted++;
    result.rows.push({ ...out, row: rowNumber });
  }
  return result;
}

function headerOfTime(profile: ImportProfile) {
  const index = profile.timestamp.kind === "split" ? profile.timestamp.dateColumn : profile.timestamp.column;
  const header = profile.columns.find((c) => c.index === index)?.header.trim();
  return header || `Column ${index + 1}`;
}
