import type { ReactNode } from "react";

// Pass or fail of a field test as a mark and a word (never colour alone): a tick in a circle for
// within the criterion, a cross in a square for outside it, an open circle for not computed yet.
export type Verdict = boolean | null | undefined;

export const VERDICT_WORDS = { pass: "Pass", fail: "Fail", none: "Not computed yet" } as const;

function key(v: Verdict) {
  return v === true ? "pass" : v === false ? "fail" : "none";
}

export function VerdictMark({ verdict, children, testId }: { verdict: Verdict; children?: ReactNode; testId?: string }) {
  const k = key(verdict);
  const tone = k === "pass" ? "border-reed-600 bg-reed-100 text-reed-700" : k === "fail" ? "border-brick-600 bg-brick-100 text-brick-700" : "border-ink-200 bg-white text-ink-500";
  return (
    <span className={`inline-flex items-center gap-1.5 rounded border px-2 py-0.5 font-semibold ${tone}`} data-verdict={k} data-testid={testId}>
      <svg width="16" height="16" viewBox="0 0 16 16" aria-hidden="true" focusable="false" className="shrink-0">
        {k === "pass" ? (
          <>
            <circle cx="8" cy="8" r="7" fill="currentColor" />
            <path d="M4.5 8.3 L7 10.8 L11.6 5.6" fill="none" stroke="white" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round" />
          </>
        ) : k === "fail" ? (
          <>
            <rect x="1" y="1" width="14" height="14" rx="2" fill="currentColor" />
            <path d="M5 5 L11 11 M11 5 L5 11" stroke="white" strokeWidth="2" strokeLinecap="round" />
          </>
        ) : (
          <circle cx="8" cy="8" r="6" fill="none" stroke="currentColor" strokeWidth="1.6" strokeDasharray="3 2" />
        )}
      </svg>
      <span>{VERDICT_WORDS[k]}</span>
      {children}
    </span>
  );
}
