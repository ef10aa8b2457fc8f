import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import type { Kysely } from "kysely";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createDb } from "#db/connect.ts";
import { migrateAll } from "#db/migrator.ts";
import type { DB } from "#db/schema.ts";
import { ownPostgres, type OwnPostgres } from "../support/own-postgres.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// PostgreSQL really stopped and started again under a running app (a cluster of this test's own,
// so the run's shared cluster is not disturbed): pages say plainly that the database is away
// (503, try again), and the same app process serves again once it is back, change feed included.
const root = path.resolve(import.meta.dirname, "../..");
const port = 3340 + Math.floor(Math.random() * 50);
const origin = `http://127.0.0.1:${port}`;
let server: OwnPostgres;
let app: ChildProcess;
let appLog = "";
let own: Kysely<DB>;
let cookie = "";

async function until<T>(what: string, ms: number, probe: () => Promise<T | undefined>): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const got = await probe().catch(() => undefined);
    if (got !== undefined) return got;
    if (Date.now() > end) throw new Error(`${what}: not within ${ms} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const page = (p: string) => fetch(origin + p, { headers: { Cookie: cookie }, redirect: "manual" });
const postSignIn = (email: string) =>
  fetch(`${origin}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: origin },
    body: new URLSearchParams({ email, password: TEST_PASSWORD, redirectTo: "/" }),
  });

beforeAll(async () => {
  server = await ownPostgres();
  const admin = new pg.Client({ connectionString: server.url("postgres") });
  await admin.connect();
  await admin.query("create database rm_restart");
  await admin.end();
  const url = server.url("rm_restart");
  await migrateAll(url);
  own = createDb(url, 2);
  await createPeople(own);
  await own.insertInto("site").values({ code: "RST1", name: "Restart Beck at the old mill", kind: "river", latitude: 54, longitude: -3 }).execute();

  app = spawn(process.execPath, ["--import", "tsx", "app/serve.ts", process.env.TEST_BUILD_DIR ? path.resolve(process.env.TEST_BUILD_DIR, "server/index.js") : "./build/server/index.js"], {
    cwd: root,
    env: { ...process.env, NODE_ENV: "production", DATABASE_URL: url, PORT: String(port), HOST: "127.0.0.1", WEB_CONCURRENCY: "1", APP_ORIGIN: origin },
    stdio: ["ignore", "pipe", "pipe"],
  });
  app.stdout!.on("data", (b: Buffer) => (appLog += b.toString()));
  app.stderr!.on("data", (b: Buffer) => (appLog += b.toString()));
  await until("the app answers", 30_000, async () => ((await fetch(`${origin}/api/health`)).ok ? true : undefined));
  const res = await postSignIn("manager@test.example");
  expect(res.status).toBe(302);
  cookie = res.headers.get("Set-Cookie")!.split(";")[0];
}, 120_000);

afterAll(async () => {
  app?.kill("SIGTERM");
  await own?.destroy().catch(() => {});
  server?.destroy();
});

describe("PostgreSQL stopped and started again while the app runs", () => {
  it("answers 503 with a plain message while it is down, then serves again from the same process", async () => {
    const before = await page("/");
    expect(before.status).toBe(200);
    expect(await before.text()).toContain("Restart Beck at the old mill");
    expect(appLog).not.toContain("[change-feed] not listening");

    server.stop();
    const t0 = Date.now();
    const down = await page("/");
    expect(Date.now() - t0).toBeLessThan(10_000); // an answer, not a hang
    expect(down.status).toBe(503);
    expect(down.headers.get("Retry-After")).toBe("30");
    expect(await down.text()).toContain("cannot reach its database");
    expect((await fetch(`${origin}/api/health`)).status).toBe(503);
    const signIn = await postSignIn("officer@test.example");
    expect(signIn.status).toBe(503);
    expect(await signIn.text()).toContain("cannot reach its database just now");
    await until("the change feed notices", 10_000, async () => (appLog.includes("[change-feed] not listening") ? true : undefined));

    server.start();
    const back = await until("the overview serves again", 20_000, async () => {
      const r = await page("/");
      return r.status === 200 ? r : undefined;
    });
    expect(await back.text()).toContain("Restart Beck at the old mill");
    expect(app.exitCode).toBeNull(); // the same process, not restarted
    await until("the change feed listens again", 20_000, async () => (appLog.includes("[change-feed] listening again") ? true : undefined));

    // Caches are trusted again only with the feed back; a change made now must still show.
    await own.updateTable("site").set({ name: "Restart Beck below the mill race" }).where("code", "=", "RST1").execute();
    const fresh = await until("the renamed site shows", 10_000, async () => {
      const body = await (await page("/")).text();
      return body.includes("below the mill race") ? body : undefined;
    });
    expect(fresh).not.toContain("at the old mill");
  }, 90_000);
});
