import { WEEK_STATUS_LABELS, type WeekStatus } from "#app/lib/series/week-status.ts";

// A week's status as a shape and a word, so it reads without colour and in black-and-white print:
// a notched diamond for "Look at this week", a half-filled circle for "Keep watching", a plain
// ring for "Steady", a dotted square for "No readings".
const COLOURS: Record<WeekStatus, string> = {
  act: "#8f3422",
  watch: "#8a5a00",
  steady: "#25633d",
  silent: "#2f4556",
};

export function WeekStatusShape({ status, size = 16 }: { status: WeekStatus; size?: number }) {
  const c = COLOURS[status];
  return (
    <svg width={size} height={size} viewBox="0 0 16 16" aria-hidden="true" focusable="false" className="shrink-0">
      {status === "act" ? (
        <>
          <path d="M8 0.8 L15.2 8 L8 15.2 L0.8 8 Z" fill={c} />
          <rect x="7" y="4" width="2" height="5.2" fill="white" />
          <rect x="7" y="10.4" width="2" height="2" fill="white" />
        </>
      ) : null}
      {status === "watch" ? (
        <>
          <circle cx="8" cy="8" r="6.4" fill="none" stroke={c} strokeWidth="1.8" />
          <path d="M8 1.6 A6.4 6.4 0 0 1 8 14.4 Z" fill={c} />
        </>
      ) : null}
      {status === "steady" ? <circle cx="8" cy="8" r="5.8" fill="none" stroke={c} strokeWidth="2.6" /> : null}
      {status === "silent" ? <rect x="2" y="2" width="12" height="12" fill="none" stroke={c} strokeWidth="1.8" strokeDasharray="2 2" /> : null}
    </svg>
  );
}

export function WeekStatusMark({ status, className = "" }: { status: WeekStatus; className?: string }) {
  return (
    <span className={`inline-flex items-center gap-1.5 font-semibold ${className}`} data-week-status={status}>
      <WeekStatusShape status={status} />
      <span>{WEEK_STATUS_LABELS[status]}</span>
    </span>
  );
}
