// The sample of a logger file the editor and the uploads page work from: its first 64 KB as
// text, split into records the way the ingest job splits the whole file. Browser and server.

import Papa from "papaparse";
import { isBlankRow } from "#app/lib/import/rows.ts";
import type { EditorColumn } from "./profile-form.ts";

export const SAMPLE_BYTES = 65_536;

export type Sample = { text: string; fileName: string; truncated: boolean };

/** Reads the start of a file chosen in the browser. A multi-byte character cut at the end is dropped. */
export async function readFileSample(file: File): Promise<Sample> {
  const bytes = await file.slice(0, SAMPLE_BYTES).arrayBuffer();
  const text = new TextDecoder("utf-8").decode(bytes, { stream: true });
  return { text, fileName: file.name, truncated: file.size > SAMPLE_BYTES };
}

/** The sample's records with this delimiter; the last, possibly cut, line of a truncated sample is left out. */
export function sampleRecords(sample: Sample, delimiter: string): string[][] {
  const text = sample.text.charCodeAt(0) === 0xfeff ? sample.text.slice(1) : sample.text;
  const parsed = Papa.parse<string[]>(text, { delimiter, skipEmptyLines: false });
  const records = parsed.data;
  if (sample.truncated && records.length > 1) return records.slice(0, -1);
  // A final line break leaves one empty record: not a line of the file.
  if (records.length > 0 && isBlankRow(records[records.length - 1]) && /\r?\n$/.test(text)) return records.slice(0, -1);
  return records;
}

/**
 * The columns the sample has with this layout: field count from the data lines (an empty last
 * field left by a trailing delimiter is not a column), names from the header line. Choices
 * already made are kept by position.
 */
export function columnsFromRecords(records: string[][], headerRow: number, dataStartRow: number, previous: EditorColumn[]): EditorColumn[] {
  const data = records.slice(Math.max(0, dataStartRow)).filter((r) => !isBlankRow(r)).slice(0, 200);
  const counts = new Map<number, number>();
  for (const r of data) counts.set(r.length, (counts.get(r.length) ?? 0) + 1);
  const header = headerRow >= 0 ? [...(records[headerRow] ?? [])] : [];
  let count = [...counts.entries()].sort((a, b) => b[1] - a[1] || b[0] - a[0])[0]?.[0] ?? header.length;
  const trailing = count > 1 && data.length > 0 && data.every((r) => r.length !== count || r[count - 1].trim() === "");
  if (trailing && (header.length < count || (header[count - 1] ?? "").trim() === "")) count -= 1;
  while (header.length > count && (header[header.length - 1] ?? "").trim() === "") header.pop();
  count = Math.max(count, header.length);
  return Array.from({ length: count }, (_, index) => {
    const before = previous.find((c) => c.index === index);
    return {
      index,
      header: headerRow >= 0 ? (header[index] ?? "").trim() : `Column ${index + 1}`,
      parameter: before?.parameter ?? "ignore",
      unit: before?.unit ?? null,
    };
  });
}

/** A few distinct values of a column from the data lines, for the person to recognise it. */
export function columnSamples(records: string[][], dataStartRow: number, index: number, limit = 3): string[] {
  const out: string[] = [];
  for (let i = Math.max(0, dataStartRow); i < records.length && out.length < limit; i++) {
    const v = (records[i][index] ?? "").trim();
    if (v !== "" && !out.includes(v)) out.push(v);
    if (i - dataStartRow > 200) break;
  }
  return out;
}
