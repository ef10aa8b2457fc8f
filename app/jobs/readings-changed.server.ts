// The `readings-changed` job: whatever depends on readings is brought up to date for one site and
// one time range, after an ingest, a re-process, a recompute or a correction. Steps run in order
// (corrections before exceedance detection, detection before summaries) and each must be
// idempotent: the queue may run the job again after a failure.
import { applyCorrectionsStep } from "./apply-corrections.server.ts";
import { detectExceedancesStep } from "./detect-exceedances.server.ts";
import { WEEKLY_SUMMARIES_STEP } from "./weekly-summaries.server.ts";

export type ReadingsChange = { siteId: string; fromMs: number; toMs: number; reason: "ingest" | "recompute" | "correction" | "manual" };

export type ReadingsChangedStep = { name: string; run: (change: ReadingsChange) => Promise<void> };

/** The steps, in the order they run. Each capability adds its own step here. */
export const READINGS_CHANGED_STEPS: ReadingsChangedStep[] = [
  // Keep first: approved corrections are applied before anything reads the readings.
  applyCorrectionsStep,
  // After corrections, before summaries: alert rules over the corrected readings (events, notifications, e-mail).
  detectExceedancesStep,
  // Keep last: queues the recomputation of the affected weeks' summaries from the final readings and events.
  WEEKLY_SUMMARIES_STEP,
];

export async function runReadingsChanged(change: ReadingsChange) {
  for (const step of READINGS_CHANGED_STEPS) {
    try {
      await step.run(change);
    } catch (e) {
      throw new Error(`readings-changed step "${step.name}" failed: ${(e as Error).message}`, { cause: e });
    }
  }
}
