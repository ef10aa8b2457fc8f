import { describe, expect, it } from "vitest";
import { reconcileEvents, type StoredEvent } from "#app/lib/quality/reconcile.ts";
import type { DetectedEvent } from "#app/lib/quality/detection.ts";

// Times in hours for readability.
const H = 3_600_000;
const ev = (start: number, end: number | null, last: number, peak = 3000, peakAt = start): DetectedEvent => ({
  startMs: start * H,
  endMs: end === null ? null : end * H,
  lastMs: last * H,
  peakValue: peak,
  peakMs: peakAt * H,
});
const stored = (id: string, e: DetectedEvent, extra: Partial<StoredEvent> = {}): StoredEvent => ({ id, ...e, status: "open", reviewed: false, ...extra });
const ALL = { fromMs: 0, toMs: 1000 * H };

describe("reconciling detected events with stored ones", () => {
  it("changes nothing when detection finds exactly what is stored (idempotent)", () => {
    const a = ev(10, 14, 13);
    const plan = reconcileEvents([stored("a", a)], [a], ALL);
    expect(plan).toEqual({ inserts: [], updates: [], withdrawals: [], unchanged: [stored("a", a)] });
  });

  it("extends an ongoing event instead of adding a second one", () => {
    const before = ev(10, null, 20, 3000, 12);
    const now = ev(10, 30, 29, 3400, 25);
    const plan = reconcileEvents([stored("a", before)], [now], ALL);
    expect(plan.inserts).toEqual([]);
    expect(plan.updates).toEqual([{ stored: stored("a", before), event: now }]);
  });

  it("moves the start of a stored event back when earlier readings arrive later", () => {
    // The second file was processed first: the event seemed to start at 20 h; the first file shows it began at 15 h.
    const seen = ev(20, null, 24);
    const whole = ev(15, 30, 29);
    const plan = reconcileEvents([stored("a", seen)], [whole], ALL);
    expect(plan.updates.map((u) => u.stored.id)).toEqual(["a"]);
    expect(plan.inserts).toEqual([]);
  });

  it("adds events that overlap nothing stored", () => {
    const plan = reconcileEvents([stored("a", ev(10, 14, 13))], [ev(10, 14, 13), ev(40, 41, 40)], ALL);
    expect(plan.inserts).toEqual([ev(40, 41, 40)]);
  });

  it("withdraws an unreviewed event the readings no longer support, but never a reviewed one", () => {
    const gone = stored("gone", ev(10, 14, 13));
    const kept = stored("kept", ev(20, 24, 23), { reviewed: true });
    const plan = reconcileEvents([gone, kept], [], ALL);
    expect(plan.withdrawals.map((s) => s.id)).toEqual(["gone"]);
  });

  it("only withdraws events that start inside the stretch evaluated in full", () => {
    const edge = stored("edge", ev(50, null, 52));
    expect(reconcileEvents([edge], [], { fromMs: 0, toMs: 40 * H }).withdrawals).toEqual([]);
  });

  it("brings a withdrawn event back when detection finds it again", () => {
    const e = ev(10, 14, 13);
    const plan = reconcileEvents([stored("a", e, { status: "withdrawn" })], [e], ALL);
    expect(plan.updates.map((u) => u.stored.id)).toEqual(["a"]);
  });

  it("keeps one stored event per detected event when a gap is filled and two events become one", () => {
    const first = stored("first", ev(10, 14, 14));
    const second = stored("second", ev(16, 20, 19));
    const merged = ev(10, 20, 19);
    const plan = reconcileEvents([first, second], [merged], ALL);
    expect(plan.unchanged).toEqual([]);
    expect(plan.updates.map((u) => u.stored.id)).toEqual(["first"]);
    expect(plan.withdrawals.map((s) => s.id)).toEqual(["second"]);
  });
});
