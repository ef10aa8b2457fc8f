import { useMemo } from "react";
import type { MeasuredParameter } from "#app/lib/import/measurement-units.ts";
import { PARAMETER_LABELS } from "#app/lib/import/profile.ts";
import { previewImport } from "#app/lib/import/preview.ts";
import type { ParsedRow, RowError } from "#app/lib/import/rows.ts";
import { buildProfile, DELIMITERS, type DelimiterName, type EditorValues } from "./profile-form.ts";
import type { Sample } from "./sample.ts";

// The two views of the sample in the profile editor: the file's first lines as they are split,
// and how the first data rows read with the current settings. Everything from the file is
// rendered as text (React escapes it); nothing from it becomes markup.

type LineKind = "preamble" | "header" | "skipped" | "data";
const KIND_LABEL: Record<LineKind, string> = { preamble: "Before the header", header: "Header", skipped: "Skipped", data: "Data" };
const KIND_CLASS: Record<LineKind, string> = {
  preamble: "bg-ink-50 text-ink-500 italic",
  header: "bg-lake-100 font-semibold text-ink-900",
  skipped: "bg-ink-50 text-ink-500",
  data: "",
};

export function SampleTable({
  records,
  fileName,
  headerRow,
  dataStartRow,
  delimiter,
}: {
  records: string[][];
  fileName: string;
  headerRow: number;
  dataStartRow: number;
  delimiter: DelimiterName;
}) {
  const start = Number.isNaN(dataStartRow) ? 0 : dataStartRow;
  const shown = records.slice(0, Math.min(40, Math.max(start + 10, 12)));
  const kindOf = (i: number): LineKind =>
    i === headerRow ? "header" : i < start && (headerRow < 0 || i < headerRow) ? "preamble" : i < start ? "skipped" : "data";
  const width = Math.max(1, ...shown.map((r, i) => (kindOf(i) === "preamble" ? 1 : r.length)));
  return (
    <div className="space-y-2">
      <p className="text-sm text-ink-700">
        The first {shown.length} lines of <span className="font-semibold">{fileName}</span>, split at each {DELIMITERS[delimiter].label.toLowerCase()}.
        <span className="ml-2 inline-flex flex-wrap gap-2 align-middle text-xs">
          <span className="rounded bg-ink-50 px-1.5 py-0.5 italic text-ink-500">before the header</span>
          <span className="rounded bg-lake-100 px-1.5 py-0.5 font-semibold">header</span>
          <span className="rounded border border-ink-100 px-1.5 py-0.5">data</span>
        </span>
      </p>
      <div className="max-h-96 overflow-auto rounded border border-ink-100">
        <table className="data-table text-sm" data-testid="sample-table">
          <caption className="sr-only">First lines of {fileName}</caption>
          <thead className="sticky top-0 bg-white">
            <tr>
              <th scope="col">Line</th>
              <th scope="col" className="sr-only">Kind</th>
              {Array.from({ length: width }, (_, i) => (
                <th scope="col" key={i} className="text-ink-500">
                  {i + 1}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {shown.map((r, i) => {
              const kind = kindOf(i);
              return (
                <tr key={i} className={KIND_CLASS[kind]} data-line-kind={kind}>
                  <th scope="row" className="border-b border-ink-100 tabular-nums font-normal">{i + 1}</th>
                  <td className="sr-only">{KIND_LABEL[kind]}</td>
                  {kind === "preamble" ? (
                    <td colSpan={width} className="whitespace-pre font-mono">{r.join(DELIMITERS[delimiter].char)}</td>
                  ) : (
                    Array.from({ length: width }, (_, c) => (
                      <td key={c} className="whitespace-pre font-mono">{r[c] ?? ""}</td>
                    ))
                  )}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </div>
  );
}

const VALUE_COLUMNS: { key: keyof ParsedRow; parameter: MeasuredParameter; unit: string }[] = [
  { key: "conductivityUsPerCm", parameter: "conductivity", unit: "µS/cm" },
  { key: "specificConductanceUsPerCm", parameter: "specific-conductance", unit: "µS/cm" },
  { key: "temperatureC", parameter: "temperature", unit: "°C" },
  { key: "ph", parameter: "ph", unit: "" },
  { key: "depthM", parameter: "depth", unit: "m" },
  { key: "batteryV", parameter: "battery", unit: "V" },
];

type PreviewLine = { line: number; row: ParsedRow | null; errors: RowError[] };

function formatUtc(ms: number) {
  return new Date(ms).toISOString().replace("T", " ").replace(/\.000Z$/, "").replace(/Z$/, "");
}

function capitalise(text: string) {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function formatValue(x: number) {
  if (Number.isNaN(x)) return "—";
  return String(Math.round(x * 1000) / 1000);
}

/** The first ten data rows read with the current settings, in canonical units (previewImport, as the ingest reads them). */
export function SamplePreview({ values, sample }: { values: EditorValues; sample: Sample }) {
  const outcome = useMemo(() => {
    const built = buildProfile(values);
    if (!built.profile) return { problem: built.issues[0]?.message ?? "The settings are not complete yet.", lines: [], shown: [] };
    const profile = built.profile;
    // A truncated sample ends in a cut line: leave it out.
    const text = sample.truncated ? sample.text.slice(0, sample.text.lastIndexOf("\n") + 1) : sample.text;
    const result = previewImport(text, profile, { now: Date.now(), maxRows: 10 });
    const lines = new Map<number, PreviewLine>();
    for (const r of result.rows) lines.set(r.row, { line: r.row, row: r, errors: [] });
    for (const e of result.errors) {
      const entry = lines.get(e.row) ?? { line: e.row, row: null, errors: [] };
      entry.errors.push(e);
      lines.set(e.row, entry);
    }
    const used = new Set(profile.columns.map((c) => c.parameter));
    return {
      problem: null,
      lines: [...lines.values()].sort((a, b) => a.line - b.line),
      shown: VALUE_COLUMNS.filter((v) => used.has(v.parameter)),
    };
  }, [values, sample]);

  if (outcome.problem) {
    return (
      <p className="caution" data-testid="preview-waiting">
        The preview waits for the settings above: {outcome.problem}
      </p>
    );
  }
  const accepted = outcome.lines.filter((r) => r.row).length;
  return (
    <div className="space-y-2">
      <p className="text-sm text-ink-700" data-testid="preview-summary">
        {accepted} of {outcome.lines.length} rows read; times in UTC, values in the units Ripplemark stores.
      </p>
      <div className="overflow-x-auto rounded border border-ink-100">
        <table className="data-table text-sm" data-testid="preview-table">
          <caption className="sr-only">Preview of the first data rows</caption>
          <thead>
            <tr>
              <th scope="col">Line</th>
              <th scope="col">Time (UTC)</th>
              {outcome.shown.map((v) => (
                <th scope="col" key={v.key} className="text-right">
                  {capitalise(PARAMETER_LABELS[v.parameter])}
                  {v.unit ? ` (${v.unit})` : ""}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {outcome.lines.map((r) => (
              <tr key={r.line} className={r.row ? "" : "bg-brick-100"}>
                <th scope="row" className="border-b border-ink-100 tabular-nums font-normal">{r.line}</th>
                {r.row ? (
                  <>
                    <td className="whitespace-nowrap tabular-nums">{formatUtc(r.row.timeMs)}</td>
                    {outcome.shown.map((v) => (
                      <td key={v.key} className="text-right tabular-nums">{formatValue(r.row![v.key])}</td>
                    ))}
                  </>
                ) : (
                  <td colSpan={outcome.shown.length + 1} className="text-brick-700">
                    <span className="font-semibold">Rejected: </span>
                    {r.errors.map((e, k) => (
                      <span key={k}>
                        {k > 0 ? "; " : ""}
                        {e.column} “<span className="font-mono">{e.value}</span>”: {e.reason}
                      </span>
                    ))}
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
