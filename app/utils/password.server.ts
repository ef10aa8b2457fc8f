import { randomBytes, scrypt, timingSafeEqual, type ScryptOptions } from "node:crypto";

// scrypt with N = 2^15, r = 8, p = 1 (the interactive-login parameters recommended by the scrypt
// paper and OWASP's password storage cheat sheet), a 16-byte random salt and a 64-byte key.
// Stored as `scrypt$N$r$p$salt$hash` so parameters can be raised later without breaking old hashes.
const N = 2 ** 15;
const r = 8;
const p = 1;
const KEYLEN = 64;

function scryptAsync(password: string, salt: Buffer, keylen: number, opts: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scrypt(password, salt, keylen, { ...opts, maxmem: 128 * opts.N! * opts.r! * 2 }, (err, key) =>
      err ? reject(err) : resolve(key),
    ),
  );
}

export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(16);
  const key = await scryptAsync(password, salt, KEYLEN, { N, r, p });
  return ["scrypt", N, r, p, salt.toString("base64"), key.toString("base64")].join("$");
}

export async function verifyPassword(password: string, stored: string | null | undefined): Promise<boolean> {
  if (!stored) {
    // Spend the same time as a real check so an unknown e-mail is not revealed by timing.
    await scryptAsync(password, Buffer.alloc(16), KEYLEN, { N, r, p });
    return false;
  }
  const [scheme, n, rr, pp, saltB64, keyB64] = stored.split("$");
  if (scheme !== "scrypt" || !saltB64 || !keyB64) return false;
  const expected = Buffer.from(keyB64, "base64");
  const actual = await scryptAsync(password, Buffer.from(saltB64, "base64"), expected.length, {
    N: Number(n),
    r: Number(rr),
    p: Number(pp),
  });
  return actual.length === expected.length && timingSafeEqual(actual, expected);
}

export { PASSWORD_MIN_LENGTH } from "./auth-schemas.ts";
