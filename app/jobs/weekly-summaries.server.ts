import { z } from "zod";
import { dateToUtcMs } from "#app/lib/series/weeks.ts";
import { enqueueSummariseWeeks, summariseWeeks } from "#app/models/weekly-summary.server.ts";
import type { ReadingsChange, ReadingsChangedStep } from "./readings-changed.server.ts";

// The `summarise-weeks` job and the readings-changed step that queues it. The step runs last (after
// corrections and exceedance detection), so the week's events and corrected values are in place
// when the job recomputes the week.

const monday = z.string().refine((v) => {
  const ms = dateToUtcMs(v);
  return ms !== null && new Date(ms).getUTCDay() === 1;
}, "a Monday as YYYY-MM-DD");

export const summariseWeeksPayload = z
  .object({ siteId: z.uuid(), fromWeek: monday, toWeek: monday })
  .refine((p) => p.fromWeek <= p.toWeek, "fromWeek must not be after toWeek");

export async function runSummariseWeeksJob(payload: unknown) {
  const p = summariseWeeksPayload.parse(payload);
  return summariseWeeks(p.siteId, p.fromWeek, p.toWeek);
}

/** readings-changed step: queue the recomputation of every week the changed range touches. */
export const WEEKLY_SUMMARIES_STEP: ReadingsChangedStep = {
  name: "weekly-summaries",
  run: async (change: ReadingsChange) => {
    await enqueueSummariseWeeks(change.siteId, change.fromMs, change.toMs);
  },
};
