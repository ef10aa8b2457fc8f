// The background worker: takes jobs from the PostgreSQL queue (graphile-worker). Run as its own
// process (`node --import tsx app/worker.ts`); start more of them, on more machines, to scale.
import { setPriority } from "node:os";
import { run, type TaskList } from "graphile-worker";
import { getEnv } from "#app/utils/env.server.ts";
import { runIngestJob } from "#app/jobs/ingest.server.ts";
import { runRecomputeJob } from "#app/jobs/recompute.server.ts";
import { runReadingsChanged, type ReadingsChange } from "#app/jobs/readings-changed.server.ts";
import { runSummariseWeeksJob } from "#app/jobs/weekly-summaries.server.ts";
import { runWeeklyDigestJob } from "#app/jobs/weekly-digest.server.ts";
import { ALERT_TASKS } from "#app/jobs/alert-tasks.server.ts";

const tasks: TaskList = {
  ...ALERT_TASKS,
  "ingest-upload": async (payload, helpers) => {
    const { uploadId } = payload as { uploadId: string };
    await runIngestJob(uploadId, helpers.job.attempts);
  },
  "readings-changed": async (payload) => {
    await runReadingsChanged(payload as ReadingsChange);
  },
  "recompute-site": async (payload) => {
    const { siteId, settingsId } = payload as { siteId: string; settingsId: number };
    await runRecomputeJob(siteId, settingsId);
  },
  "summarise-weeks": async (payload) => {
    await runSummariseWeeksJob(payload);
  },
  "weekly-digest": async (payload) => {
    await runWeeklyDigestJob(payload);
  },
};

// Recurring jobs (graphile-worker crontab; times are UTC): the weekly digest on Monday morning.
const crontab = ["0 7 * * 1 weekly-digest"].join("\n");

// Background work yields the CPU to people waiting on pages: the worker runs at a lower scheduling
// priority (nice 10 unless WORKER_NICE says otherwise; 0 keeps it level with the app). Set before
// any other thread starts, so the threads it starts later inherit it (on Linux nice is per thread).
const nice = Number(process.env.WORKER_NICE ?? 10);
if (nice) {
  try {
    setPriority(nice);
  } catch (error) {
    console.warn(`[worker] could not lower the priority to nice ${nice}: ${(error as Error).message}`);
  }
}

const env = getEnv();
const runner = await run({
  connectionString: env.DATABASE_URL,
  concurrency: Number(process.env.WORKER_CONCURRENCY ?? 2),
  taskList: tasks,
  crontab,
  noHandleSignals: false,
  pollInterval: 1000,
});
console.log("[worker] ready");
await runner.promise;
