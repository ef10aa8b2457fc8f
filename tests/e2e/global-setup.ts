import { WORKER_NODE_FLAGS } from "../support/worker-flags.ts";
import { spawn, type ChildProcess } from "node:child_process";
import { mkdirSync, openSync } from "node:fs";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { createDb } from "#db/connect.ts";
import { seedDemo } from "#db/seed.ts";
import { createTestDatabase, dropRunDatabases, dropStaleDatabases, newRunId, prepareTemplate } from "../support/databases.ts";
import { applyTestEnv, databaseUrl } from "../support/env.ts";

// Browser tests run against the production build served on its own port, with a fresh database
// holding the demo seed, and the background worker when there is one.
const root = path.resolve(import.meta.dirname, "../..");
const children: ChildProcess[] = [];

/** The first port in [from, to] nobody listens on (parallel runs on one machine do not collide). */
async function freePort(from: number, to: number) {
  const net = await import("node:net");
  for (let p = from; p <= to; p++) {
    const free = await new Promise<boolean>((resolve) => {
      const srv = net.createServer().once("error", () => resolve(false)).listen(p, "127.0.0.1", () => srv.close(() => resolve(true)));
    });
    if (free) return p;
  }
  throw new Error(`no free port in ${from}–${to} for the browser tests' app`);
}

async function waitFor(url: string, ms: number) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    try {
      if ((await fetch(url)).ok) return;
    } catch {}
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`${url} did not answer within ${ms} ms`);
}

export default async function setup(project: TestProject) {
  await dropStaleDatabases();
  const runId = newRunId();
  const template = await prepareTemplate(runId);
  const name = await createTestDatabase(template, "rm_e2e");
  const port = process.env.E2E_APP_PORT ? Number(process.env.E2E_APP_PORT) : await freePort(3211, 3219);
  const origin = `http://127.0.0.1:${port}`;
  process.env.APP_ORIGIN = origin;
  applyTestEnv(name);
  process.env.NODE_ENV = "production";
  const db = createDb(databaseUrl(name), 2);
  // 160 days of demo readings: quick enough to load, and they hold the whole HR5 drift episode
  // (from July to the September visit) with its correction awaiting review, and the AB8
  // borehole's ongoing TDS exceedance.
  await seedDemo(db, { readingsDays: 160 });
  await db.destroy();

  // The worker at the app's priority (WORKER_NICE=0): the browser competes for the same two cores,
  // and the journeys wait on its jobs.
  const env = { ...process.env, PORT: String(port), HOST: "127.0.0.1", WORKER_NICE: "0" };
  // Server and worker output goes to .data/e2e-*.log (kept for reading after a failure).
  mkdirSync(path.join(root, ".data"), { recursive: true });
  const logTo = (name: string) => openSync(path.join(root, ".data", `e2e-${name}.log`), "w");
  // TEST_BUILD_DIR: serve a build kept apart from build/ (app/serve.ts finds the client assets
  // next to the server build it is given).
  const buildDir = process.env.TEST_BUILD_DIR ? path.resolve(process.env.TEST_BUILD_DIR) : path.join(root, "build");
  const app = spawn(process.execPath, ["--import", "tsx", path.join(root, "app/serve.ts"), path.join(buildDir, "server/index.js")], {
    cwd: root,
    env,
    stdio: ["ignore", logTo("app"), logTo("app")],
  });
  children.push(app);
  if (await import("node:fs").then((fs) => fs.existsSync(path.join(root, "app/worker.ts")))) {
    children.push(spawn(process.execPath, [...WORKER_NODE_FLAGS, "--import", "tsx", "app/worker.ts"], { cwd: root, env, stdio: ["ignore", logTo("worker"), logTo("worker")] }));
  }
  await waitFor(`${origin}/api/health`, 30_000);
  project.provide("baseURL", origin);
  project.provide("databaseUrl", databaseUrl(name));
  project.provide("mailboxUrl", process.env.MAILBOX_URL!);

  return async () => {
    await Promise.all(
      children.map(
        (c) =>
          new Promise<void>((resolve) => {
            if (c.exitCode !== null) return resolve();
            c.once("exit", () => resolve());
            c.kill("SIGTERM");
            setTimeout(() => c.kill("SIGKILL"), 3000).unref();
          }),
      ),
    );
    await dropRunDatabases(runId);
  };
}

declare module "vitest" {
  export interface ProvidedContext {
    baseURL: string;
    databaseUrl: string;
    mailboxUrl: string;
  }
}
