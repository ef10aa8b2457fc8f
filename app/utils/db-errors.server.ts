import { data } from "react-router";

/** True for PostgreSQL's unique_violation (23505), optionally on one named constraint or index. */
export function isUniqueViolation(error: unknown, constraint?: string): boolean {
  if (typeof error !== "object" || error === null) return false;
  const e = error as { code?: unknown; constraint?: unknown };
  return e.code === "23505" && (constraint === undefined || e.constraint === constraint);
}

// Errors that mean "PostgreSQL cannot be reached just now" (restarting, stopped, network), as
// opposed to a fault in a query. Pages answer these with 503 and a "try again" message instead of a
// generic 500; the pool replaces dead connections by itself once the server is back.
const NETWORK_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "EHOSTUNREACH", "ENOTFOUND"]);
// SQLSTATE class 08 (connection exception) and the shutdown/start-up codes of class 57.
const SQLSTATES = new Set(["08000", "08001", "08003", "08004", "08006", "57P01", "57P02", "57P03"]);
const MESSAGES = /Connection terminated|connection error|timeout exceeded when trying to connect|the database system is (starting up|shutting down)/i;

export function isDatabaseUnavailable(error: unknown): boolean {
  if (!error || typeof error !== "object") return false;
  const e = error as { code?: unknown; message?: unknown; errors?: unknown };
  if (typeof e.code === "string" && (NETWORK_CODES.has(e.code) || SQLSTATES.has(e.code))) return true;
  if (typeof e.message === "string" && MESSAGES.test(e.message)) return true;
  // Node reports a refused connection to every address of a host as an AggregateError.
  return Array.isArray(e.errors) && e.errors.some(isDatabaseUnavailable);
}

/** What a loader or action throws when the database is unavailable: 503, try again shortly. */
export function databaseUnavailable() {
  return data(null, { status: 503, headers: { "Retry-After": "30", "Cache-Control": "no-store" } });
}
