import { describe, expect, it } from "vitest";
import { parseEnv } from "#app/utils/env.server.ts";

const base = {
  DATABASE_URL: "postgres://u:p@127.0.0.1:54329/db",
  SESSION_SECRET: "a".repeat(32),
  S3_ACCESS_KEY_ID: "S3RVER",
  S3_SECRET_ACCESS_KEY: "S3RVER",
};

describe("env", () => {
  it("accepts a minimal environment and fills defaults", () => {
    const env = parseEnv(base);
    expect(env.NODE_ENV).toBe("development");
    expect(env.SMTP_PORT).toBe(54325);
    expect(env.S3_BUCKET).toBe("ripplemark");
    expect(env.S3_FORCE_PATH_STYLE).toBe(true);
    expect(env.SESSION_SECRET).toEqual(["a".repeat(32)]);
  });

  it("splits rotated session secrets, first one signing", () => {
    const env = parseEnv({ ...base, SESSION_SECRET: `${"n".repeat(32)}, ${"o".repeat(32)}` });
    expect(env.SESSION_SECRET).toEqual(["n".repeat(32), "o".repeat(32)]);
  });

  it("names the variable that is wrong", () => {
    expect(() => parseEnv({ ...base, DATABASE_URL: "mysql://x" })).toThrow(/DATABASE_URL/);
    expect(() => parseEnv({ ...base, SESSION_SECRET: "short" })).toThrow(/SESSION_SECRET must be at least 32/);
    expect(() => parseEnv({ ...base, SMTP_PORT: "70000" })).toThrow(/SMTP_PORT/);
    const { S3_ACCESS_KEY_ID: _, ...missing } = base;
    expect(() => parseEnv(missing)).toThrow(/S3_ACCESS_KEY_ID/);
  });

  it("parses booleans from strings", () => {
    expect(parseEnv({ ...base, RUN_WORKER: "false" }).RUN_WORKER).toBe(false);
    expect(parseEnv({ ...base, SMTP_SECURE: "true" }).SMTP_SECURE).toBe(true);
  });
});
