import { db } from "#app/utils/db.server.ts";
import { applyCorrections, approvedCorrectionsOverlapping } from "#app/models/correction.server.ts";
import type { ReadingsChange, ReadingsChangedStep } from "./readings-changed.server.ts";

/**
 * The first step of `readings-changed`: approved corrections are applied to the readings in the
 * changed range before anything reads them (exceedance detection, summaries). After an ingest or a
 * recompute only the parts of the range under an approved correction are touched (new readings
 * arrive uncorrected; a recompute changes the base a % correction applies to); after a correction
 * the whole range is brought in line, which also clears what a rejected correction left. Idempotent:
 * rows already right are not written again.
 */
export async function runApplyCorrections(change: ReadingsChange) {
  const from = new Date(change.fromMs);
  const to = new Date(change.toMs);
  if (change.reason === "correction" || change.reason === "manual") {
    return applyCorrections(db, change.siteId, from, to);
  }
  let rows = 0;
  for (const c of await approvedCorrectionsOverlapping(change.siteId, from, to)) {
    const start = c.period_start > from ? c.period_start : from;
    const end = c.period_end < to ? c.period_end : to;
    rows += await applyCorrections(db, change.siteId, start, end);
  }
  return rows;
}

export const applyCorrectionsStep: ReadingsChangedStep = {
  name: "apply-corrections",
  run: async (change) => {
    await runApplyCorrections(change);
  },
};
