import { SITE_STATUS_LABELS, type SiteStatus } from "#app/lib/quality/site-status.ts";

// A site's status as a shape and a word. Each status has its own outline, so it reads without
// colour (and in print): a filled disc for in range, a triangle pointing up or down for above or
// below a threshold, a notched square for a sensor problem, an open ring with a gap for no recent
// data, a plain dash for a site without thresholds.

const COLOURS: Record<SiteStatus, string> = {
  "in-range": "#2f7a4b",
  above: "#b2442e",
  below: "#8a5a00",
  "sensor-problem": "#8a5a00",
  "no-recent-data": "#5b7387",
  "no-thresholds": "#5b7387",
};

export function StatusShape({ status, size = 16 }: { status: SiteStatus; size?: number }) {
  const c = COLOURS[status];
  return (
    <svg width={size} height={size} viewBox="0 0 16 16" aria-hidden="true" focusable="false" className="shrink-0">
      {status === "in-range" ? <circle cx="8" cy="8" r="6.5" fill={c} /> : null}
      {status === "above" ? <path d="M8 1.5 L15 14 L1 14 Z" fill={c} /> : null}
      {status === "below" ? <path d="M8 14.5 L15 2 L1 2 Z" fill={c} /> : null}
      {status === "sensor-problem" ? <path d="M2 2 H14 V14 H2 Z M6 5 V11 H10 V5 Z" fill={c} fillRule="evenodd" /> : null}
      {status === "no-recent-data" ? (
        <path d="M8 2 A6 6 0 1 1 2.8 5" fill="none" stroke={c} strokeWidth="2.4" strokeLinecap="round" />
      ) : null}
      {status === "no-thresholds" ? <rect x="2" y="6.5" width="12" height="3" rx="1" fill={c} /> : null}
    </svg>
  );
}

export function StatusMark({ status, className = "" }: { status: SiteStatus; className?: string }) {
  return (
    <span className={`inline-flex items-center gap-1.5 font-semibold ${className}`} data-status={status}>
      <StatusShape status={status} />
      <span>{SITE_STATUS_LABELS[status]}</span>
    </span>
  );
}

export const STATUS_TEXT_CLASS: Record<SiteStatus, string> = {
  "in-range": "text-reed-700",
  above: "text-brick-700",
  below: "text-amber-700",
  "sensor-problem": "text-amber-700",
  "no-recent-data": "text-ink-700",
  "no-thresholds": "text-ink-700",
};
