import { randomBytes, timingSafeEqual, type ScryptOptions } from "node:crypto";
import { Worker } from "node:worker_threads";

// scrypt with N = 2^15, r = 8, p = 1 (the interactive-login parameters recommended by the scrypt
// paper and OWASP's password storage cheat sheet), a 16-byte random salt and a 64-byte key.
// Stored as `scrypt$N$r$p$salt$hash` so parameters can be raised later without breaking old hashes.
const N = 2 ** 15;
const r = 8;
const p = 1;
const KEYLEN = 64;

// Where the hashing runs. Each hash costs ~32 MB and tens of milliseconds of CPU on purpose. Node's
// own crypto.scrypt() would run it on libuv's shared pool of four threads, where a burst of sign-ins
// (or a password-guessing run) queues ahead of the small jobs every request needs — verifying the
// session cookie's signature, file reads — and stalls every page. So hashes run one at a time on a
// thread of their own, at a lower scheduling priority (nice 5; on Linux the nice value is per
// thread), so the rest of the process keeps answering while sign-ins wait their turn.
const HASH_THREAD_NICE = 5;
const HASH_THREAD_SOURCE = `
const { parentPort } = require("node:worker_threads");
const { scryptSync } = require("node:crypto");
try { require("node:os").setPriority(${HASH_THREAD_NICE}); } catch {}
parentPort.on("message", ({ id, password, salt, keylen, options }) => {
  try {
    const key = scryptSync(password, Buffer.from(salt), keylen, options);
    parentPort.postMessage({ id, key });
  } catch (error) {
    parentPort.postMessage({ id, error: String((error && error.message) || error) });
  }
});`;

type Pending = { resolve: (key: Buffer) => void; reject: (error: Error) => void };
let hasher: { worker: Worker; pending: Map<number, Pending> } | null = null;
let nextId = 1;

function hashThread() {
  if (hasher) return hasher;
  const worker = new Worker(HASH_THREAD_SOURCE, { eval: true, name: "password-hashing" });
  const pending = new Map<number, Pending>();
  const current = { worker, pending };
  worker.on("message", (m: { id: number; key?: Uint8Array; error?: string }) => {
    const job = pending.get(m.id);
    if (!job) return;
    pending.delete(m.id);
    if (pending.size === 0) worker.unref();
    if (m.error !== undefined || !m.key) job.reject(new Error(`password hashing failed: ${m.error}`));
    else job.resolve(Buffer.from(m.key.buffer, m.key.byteOffset, m.key.byteLength));
  });
  const fail = (error: Error) => {
    if (hasher === current) hasher = null;
    for (const job of pending.values()) job.reject(error);
    pending.clear();
  };
  worker.on("error", fail);
  worker.on("exit", (code) => fail(new Error(`password hashing thread stopped (exit code ${code})`)));
  worker.unref();
  hasher = current;
  return current;
}

function scryptAsync(password: string, salt: Buffer, keylen: number, opts: ScryptOptions): Promise<Buffer> {
  const { worker, pending } = hashThread();
  const id = nextId++;
  return new Promise((resolve, reject) => {
    pending.set(id, { resolve, reject });
    worker.ref(); // keep the process alive while a hash is owed
    worker.postMessage({ id, password, salt: new Uint8Array(salt), keylen, options: { ...opts, maxmem: 128 * opts.N! * opts.r! * 2 } });
  });
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
