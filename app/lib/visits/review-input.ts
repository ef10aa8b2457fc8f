// The officers' review forms (corrections and periods of record): one schema per intent, shared by
// the review page and its action.
import { z } from "zod";
import { CORRECTION_KINDS, OFFSET_UNITS } from "#app/lib/quality/corrections.ts";

const note = z.string().trim().max(500, "Use at most 500 characters").optional();

function offset(which: string) {
  return z
    .number({ error: `Enter the ${which} offset as a number (0 for none)` })
    .min(-100_000, "That offset is too large")
    .max(100_000, "That offset is too large");
}

export const decideSchema = z.object({
  intent: z.enum(["approve", "reject"]),
  correctionId: z.uuid(),
  note,
});

export const adjustSchema = z.object({
  intent: z.literal("adjust"),
  correctionId: z.uuid(),
  kind: z.enum(CORRECTION_KINDS, { error: "Choose the kind of correction" }),
  unit: z.enum(OFFSET_UNITS, { error: "Choose the unit" }),
  startOffset: offset("start"),
  endOffset: offset("end"),
  reason: z.string({ error: "Say why this correction is right" }).trim().min(1, "Say why this correction is right").max(1000, "Use at most 1000 characters"),
  note,
});

export const addSchema = z.object({
  intent: z.literal("add"),
  periodId: z.uuid({ error: "Choose the period between two visits" }),
  kind: z.enum(CORRECTION_KINDS, { error: "Choose the kind of correction" }),
  unit: z.enum(OFFSET_UNITS, { error: "Choose the unit" }),
  startOffset: offset("start"),
  endOffset: offset("end"),
  reason: z.string({ error: "Say why this correction is needed" }).trim().min(1, "Say why this correction is needed").max(1000, "Use at most 1000 characters"),
  approve: z.boolean().default(false),
  note,
});

export const approvePeriodSchema = z.object({ intent: z.literal("approve-period"), periodId: z.uuid() });

export const reopenPeriodSchema = z.object({
  intent: z.literal("reopen-period"),
  periodId: z.uuid(),
  reason: z.string({ error: "Say why the approved period is reopened" }).trim().min(1, "Say why the approved period is reopened").max(500, "Use at most 500 characters"),
});

export const KIND_LABELS = { fouling: "Fouling", drift: "Calibration drift", other: "Other" } as const;
export const UNIT_LABELS = { percent: "% of the recorded value", us_cm: "µS/cm" } as const;
export const STATUS_LABELS = { proposed: "Awaiting review", approved: "Approved", rejected: "Rejected" } as const;
