import { describe, expect, it } from "vitest";
import { isDatabaseUnavailable, isUniqueViolation } from "#app/utils/db-errors.server.ts";

// SQLSTATE codes from PostgreSQL's documentation, Appendix A "PostgreSQL Error Codes":
// 08006 connection_failure, 57P01 admin_shutdown, 57P03 cannot_connect_now, 23505 unique_violation,
// 42P01 undefined_table. Network codes are Node's (node:net / libuv errno names).
const pgError = (code: string, message = "x") => Object.assign(new Error(message), { code });

describe("isDatabaseUnavailable", () => {
  it("recognises a server that is away, stopping or starting", () => {
    expect(isDatabaseUnavailable(pgError("ECONNREFUSED"))).toBe(true);
    expect(isDatabaseUnavailable(pgError("57P01", "terminating connection due to administrator command"))).toBe(true);
    expect(isDatabaseUnavailable(pgError("57P03", "the database system is starting up"))).toBe(true);
    expect(isDatabaseUnavailable(pgError("08006"))).toBe(true);
    expect(isDatabaseUnavailable(new Error("Connection terminated unexpectedly"))).toBe(true);
    // A refused connection to every address of "localhost" arrives as an AggregateError.
    expect(isDatabaseUnavailable(new AggregateError([pgError("ECONNREFUSED"), pgError("ECONNREFUSED")], ""))).toBe(true);
  });

  it("leaves faults of the query itself alone", () => {
    expect(isDatabaseUnavailable(pgError("23505", "duplicate key value violates unique constraint"))).toBe(false);
    expect(isDatabaseUnavailable(pgError("42P01", 'relation "nope" does not exist'))).toBe(false);
    expect(isDatabaseUnavailable(new TypeError("x is undefined"))).toBe(false);
    expect(isDatabaseUnavailable(null)).toBe(false);
    expect(isUniqueViolation(pgError("23505"))).toBe(true);
  });
});
