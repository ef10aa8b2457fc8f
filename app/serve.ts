// The production HTTP server: `node --import tsx app/serve.ts [build/server/index.js]`.
//
// Express with React Router's request handler, as react-router-serve does, with three changes:
// - several request processes (node:cluster, one per CPU core unless WEB_CONCURRENCY says
//   otherwise) share the port, so one busy render or JSON answer does not hold up everyone else;
// - static files are looked up only where they can be (/assets/… and the files at the top of
//   build/client), not with a file-system probe before every page and API request;
// - SIGTERM/SIGINT stop the processes cleanly (finish what is in flight, then exit).
//
// Environment: PORT (3000), HOST (127.0.0.1), WEB_CONCURRENCY (CPU cores), NODE_ENV (production).
import cluster from "node:cluster";
import { readdirSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { createRequestHandler } from "@react-router/express";
import compression from "compression";
import express from "express";
import morgan from "morgan";

process.env.NODE_ENV ??= "production";
const buildPath = path.resolve(process.argv[2] ?? "build/server/index.js");
const clientDir = path.resolve(path.dirname(buildPath), "../client");
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const processes = Math.max(1, Number(process.env.WEB_CONCURRENCY ?? os.availableParallelism()));
const STOP_GRACE_MS = 5_000;

async function serve() {
  const build = await import(pathToFileURL(buildPath).href);
  const app = express();
  app.disable("x-powered-by");
  app.use(compression());
  // Hashed build output: cached for a year, never revalidated.
  app.use("/assets", express.static(path.join(clientDir, "assets"), { immutable: true, maxAge: "1y", index: false, fallthrough: false }));
  const topFiles = new Set(
    readdirSync(clientDir, { withFileTypes: true })
      .filter((f) => f.isFile())
      .map((f) => `/${f.name}`),
  );
  const topStatic = express.static(clientDir, { maxAge: "1h", index: false });
  app.use((req, res, next) => (topFiles.has(req.path) ? topStatic(req, res, next) : next()));
  app.use(morgan("tiny"));
  app.all("*", createRequestHandler({ build, mode: process.env.NODE_ENV }));

  const server = app.listen(port, host, () => {
    if (cluster.isPrimary || cluster.worker?.id === 1) console.log(`[ripplemark] http://${host}:${port} (${processes} request process${processes === 1 ? "" : "es"})`);
  });
  server.on("error", (error) => {
    console.error(`[ripplemark] cannot listen on ${host}:${port}: ${error.message}`);
    process.exit(1);
  });
  let stopping = false;
  const stop = () => {
    if (stopping) return;
    stopping = true;
    server.close(() => process.exit(0));
    server.closeIdleConnections();
    setTimeout(() => process.exit(0), STOP_GRACE_MS).unref();
  };
  process.once("SIGTERM", stop);
  process.once("SIGINT", stop);
}

function supervise() {
  let stopping = false;
  const recentExits: number[] = [];
  for (let i = 0; i < processes; i++) cluster.fork();
  cluster.on("exit", (worker, code, signal) => {
    if (stopping) {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      return;
    }
    // A request process died: start another, unless they keep dying (then stop with an error
    // rather than spin).
    const now = Date.now();
    recentExits.push(now);
    while (recentExits.length && recentExits[0] < now - 60_000) recentExits.shift();
    console.error(`[ripplemark] request process ${worker.process.pid} ended (${signal ?? `exit code ${code}`})`);
    if (recentExits.length > 5) {
      console.error("[ripplemark] request processes keep ending; stopping");
      process.exit(1);
    }
    setTimeout(() => cluster.fork(), 500);
  });
  const stop = () => {
    if (stopping) return;
    stopping = true;
    for (const w of Object.values(cluster.workers ?? {})) w?.process.kill("SIGTERM");
    setTimeout(() => process.exit(0), STOP_GRACE_MS + 1_000).unref();
  };
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

if (cluster.isPrimary && processes > 1) supervise();
else await serve();
