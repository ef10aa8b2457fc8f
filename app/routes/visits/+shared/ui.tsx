import type { ReactNode } from "react";
import { Link, useSearchParams } from "react-router";

/** The confirmation after a redirect with `?<param>=<key>`; only known keys show a message. */
export function SavedNotice({ param = "saved", messages }: { param?: string; messages: Record<string, string> }) {
  const [params] = useSearchParams();
  const message = messages[params.get(param) ?? ""];
  if (!message) return null;
  return (
    <p role="status" className="rounded border border-reed-600 bg-reed-100 px-3 py-2 text-reed-700">
      <span aria-hidden="true">✓ </span>
      {message}
    </p>
  );
}

export function BackLink({ to, children }: { to: string; children: ReactNode }) {
  return (
    <Link to={to} className="inline-block py-2 text-lake-700 underline">
      <span aria-hidden="true">← </span>
      {children}
    </Link>
  );
}
