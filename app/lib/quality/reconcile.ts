// Matching freshly detected events with the events already stored for one rule at one site, so
// that detection is idempotent and an event that grows across uploads stays one event. Pure.
//
// A detected event takes over a stored event it overlaps in time (the stored one with the same
// start first, then one that is not withdrawn, then the earliest): the stored row is updated (its
// end, peak or even its start, when earlier readings arrived later) instead of a second row being
// added. Detected events that overlap nothing are new. Stored events in the re-evaluated stretch
// that no detection supports any more (the readings were corrected, re-processed or flagged) are
// withdrawn — but only while nobody has reviewed them; a reviewed event is left as the officer left it.
import type { DetectedEvent } from "./detection.ts";

export type StoredEvent = {
  id: string;
  startMs: number;
  endMs: number | null;
  lastMs: number;
  peakValue: number;
  peakMs: number;
  status: "open" | "closed" | "withdrawn";
  /** An officer has classified, commented on or closed it. */
  reviewed: boolean;
};

export type ReconcilePlan = {
  inserts: DetectedEvent[];
  /** Stored events whose times or peak changed (or that come back after being withdrawn). */
  updates: { stored: StoredEvent; event: DetectedEvent }[];
  withdrawals: StoredEvent[];
  /** Stored events detection found again exactly as stored. */
  unchanged: StoredEvent[];
};

function reach(e: { startMs: number; endMs: number | null; lastMs: number }) {
  return e.endMs ?? e.lastMs;
}

function overlaps(a: { startMs: number; endMs: number | null; lastMs: number }, b: { startMs: number; endMs: number | null; lastMs: number }) {
  return a.startMs <= reach(b) && b.startMs <= reach(a);
}

export function sameAsStored(stored: StoredEvent, e: DetectedEvent) {
  return (
    stored.status !== "withdrawn" &&
    stored.startMs === e.startMs &&
    stored.endMs === e.endMs &&
    stored.lastMs === e.lastMs &&
    stored.peakValue === e.peakValue &&
    stored.peakMs === e.peakMs
  );
}

/**
 * @param stored   events of the rule at the site that reach into the evaluated stretch
 * @param detected events found in the evaluated stretch, in time order
 * @param withdrawWithin only stored events starting in this span may be withdrawn (the stretch whose
 *                 readings were evaluated in full; events near its far edge are left alone)
 */
export function reconcileEvents(
  stored: readonly StoredEvent[],
  detected: readonly DetectedEvent[],
  withdrawWithin: { fromMs: number; toMs: number },
): ReconcilePlan {
  const plan: ReconcilePlan = { inserts: [], updates: [], withdrawals: [], unchanged: [] };
  const used = new Set<string>();
  for (const e of detected) {
    const candidates = stored.filter((s) => !used.has(s.id) && overlaps(s, e));
    const pick =
      candidates.find((s) => s.startMs === e.startMs) ??
      candidates.filter((s) => s.status !== "withdrawn").sort((a, b) => a.startMs - b.startMs)[0] ??
      candidates.sort((a, b) => a.startMs - b.startMs)[0];
    if (!pick) {
      plan.inserts.push(e);
      continue;
    }
    used.add(pick.id);
    if (sameAsStored(pick, e)) plan.unchanged.push(pick);
    else plan.updates.push({ stored: pick, event: e });
  }
  for (const s of stored) {
    if (used.has(s.id) || s.reviewed || s.status !== "open") continue;
    if (s.startMs >= withdrawWithin.fromMs && s.startMs <= withdrawWithin.toMs) plan.withdrawals.push(s);
  }
  return plan;
}
