import { z } from "zod";
import { OUTCOMES } from "#app/lib/quality/exceedance-words.ts";

// The review form on an event page, shared by browser and server.
export const reviewSchema = z.object({
  outcome: z.enum(OUTCOMES).optional(),
  comment: z.string().trim().max(4000, "Keep the comment under 4,000 characters").optional(),
  flagReadings: z.boolean().optional(),
  then: z.enum(["save", "close", "reopen"], { error: "Choose what to do" }),
});

export type ReviewForm = z.infer<typeof reviewSchema>;
