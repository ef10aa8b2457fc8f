import { describe, expect, it } from "vitest";
import { hashPassword, verifyPassword } from "#app/utils/password.server.ts";

// Password hashing runs on a thread of its own (app/utils/password.server.ts). These checks go
// through that thread.

// RFC 7914 (The scrypt Password-Based Key Derivation Function), section 12, second test vector:
// P = "password", S = "NaCl", N = 1024, r = 8, p = 16, dkLen = 64. (Value written from memory and
// matched with node:crypto's scryptSync on this machine.)
const RFC7914_KEY =
  "fdbabe1c9d3472007856e7190d01e9fe7c6ad7cbc8237830e77376634b3731622eaf30d92e22a3886ff109279d9830dac727afb94a83ee6d8360cbdfa2cc0640";
const stored = (key: string) => ["scrypt", 1024, 8, 16, Buffer.from("NaCl").toString("base64"), Buffer.from(key, "hex").toString("base64")].join("$");

describe("password hashing", () => {
  it("derives the RFC 7914 test vector", async () => {
    expect(await verifyPassword("password", stored(RFC7914_KEY))).toBe(true);
    expect(await verifyPassword("passwore", stored(RFC7914_KEY))).toBe(false);
    const wrongKey = RFC7914_KEY.slice(0, -2) + "41";
    expect(await verifyPassword("password", stored(wrongKey))).toBe(false);
  });

  it("stores scrypt N = 2^15, r = 8, p = 1 with a 16-byte salt, different every time", async () => {
    const [a, b] = await Promise.all([hashPassword("quiet-river-42"), hashPassword("quiet-river-42")]);
    const parts = a.split("$");
    expect(parts.slice(0, 4)).toEqual(["scrypt", "32768", "8", "1"]);
    expect(Buffer.from(parts[4], "base64")).toHaveLength(16);
    expect(Buffer.from(parts[5], "base64")).toHaveLength(64);
    expect(a).not.toBe(b);
  });

  it("answers many checks at once, each with its own answer", async () => {
    const hash = await hashPassword("quiet-river-42");
    const tries = ["quiet-river-42", "quiet-river-43", "quiet-river-42", "", "QUIET-RIVER-42", "quiet-river-42"];
    expect(await Promise.all(tries.map((t) => verifyPassword(t, hash)))).toEqual([true, false, true, false, false, true]);
  });

  it("refuses unknown schemes and missing hashes (after spending the same effort)", async () => {
    expect(await verifyPassword("x", null)).toBe(false);
    expect(await verifyPassword("x", "bcrypt$whatever")).toBe(false);
  });

  it("reports a hashing failure as an error instead of hanging", async () => {
    // N must be a power of two: scrypt refuses N = 1000.
    await expect(verifyPassword("password", ["scrypt", 1000, 8, 1, "TmFDbA==", Buffer.alloc(64).toString("base64")].join("$"))).rejects.toThrow(/password hashing failed/);
  });
});
