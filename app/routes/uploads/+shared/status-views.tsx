import { formatInZone } from "#app/lib/zoned-time.ts";
import type { UploadStatus } from "#db/schema.ts";

// Status words, marks and the progress bar shared by the uploads list and the upload page. A
// status is never told by colour alone: each has a mark and a word.

export const STATUS_TEXT: Record<UploadStatus, { label: string; mark: string; tone: string }> = {
  "awaiting-file": { label: "File not received", mark: "○", tone: "border-ink-300 bg-ink-50 text-ink-700" },
  queued: { label: "Queued", mark: "…", tone: "border-lake-600 bg-lake-100 text-lake-700" },
  processing: { label: "Processing", mark: "↻", tone: "border-lake-600 bg-lake-100 text-lake-700" },
  done: { label: "Done", mark: "✓", tone: "border-reed-600 bg-reed-100 text-reed-700" },
  failed: { label: "Failed", mark: "✕", tone: "border-brick-600 bg-brick-100 text-brick-700" },
  duplicate: { label: "Already uploaded", mark: "=", tone: "border-amber-700 bg-amber-100 text-amber-700" },
};

export function StatusBadge({ status }: { status: UploadStatus }) {
  const s = STATUS_TEXT[status];
  return (
    <span className={`inline-flex items-center gap-1 whitespace-nowrap rounded border px-1.5 py-0.5 text-sm font-semibold ${s.tone}`}>
      <span aria-hidden="true">{s.mark}</span>
      {s.label}
    </span>
  );
}

/** A progress bar with its value in words as well; `percent` null is "under way, amount unknown". */
export function ProgressBar({ label, percent, text, tone = "lake" }: { label: string; percent: number | null; text: string; tone?: "lake" | "reed" }) {
  const value = percent === null ? null : Math.max(0, Math.min(100, Math.round(percent)));
  return (
    <div className="flex items-center gap-3">
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={value ?? undefined}
        aria-valuetext={text}
        className="h-2.5 flex-1 overflow-hidden rounded-full bg-ink-100"
      >
        <div
          className={`h-full rounded-full transition-[width] duration-300 ${tone === "reed" ? "bg-reed-600" : "bg-lake-600"} ${value === null ? "w-1/3 animate-pulse" : ""}`}
          style={value === null ? undefined : { width: `${value}%` }}
        />
      </div>
      <span className="w-40 shrink-0 text-sm tabular-nums text-ink-700" aria-hidden="true">
        {text}
      </span>
    </div>
  );
}

/** A time at the site's clock, with the zone's abbreviation ("3 Jun 2019, 01:00 BST"). */
export function formatAtSite(value: string | Date | null, timeZone: string) {
  if (!value) return null;
  return formatInZone(typeof value === "string" ? new Date(value) : value, timeZone);
}

export function formatBytes(bytes: number) {
  if (bytes < 1024) return `${bytes} bytes`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} KB`;
  return `${(bytes / 1048576).toFixed(1)} MB`;
}

const count = (n: number) => n.toLocaleString("en-GB");

/** "96 readings stored · 2 rows rejected · 4 already stored (skipped)" */
export function countsText(c: { rowsAccepted: number; rowsRejected: number; rowsDuplicate: number }) {
  return [
    `${count(c.rowsAccepted)} reading${c.rowsAccepted === 1 ? "" : "s"} stored`,
    `${count(c.rowsRejected)} row${c.rowsRejected === 1 ? "" : "s"} rejected`,
    `${count(c.rowsDuplicate)} already stored (skipped)`,
  ].join(" · ");
}

export function rangeText(first: string | Date | null, last: string | Date | null, timeZone: string) {
  const a = formatAtSite(first, timeZone);
  const b = formatAtSite(last, timeZone);
  if (!a || !b) return null;
  return a === b ? a : `${a} to ${b}`;
}
