import type { CompensationMethodName, SiteKind } from "#db/schema.ts";

// Readable names for the site settings stored as short codes. Shared by browser and server.
export const SITE_KIND_LABELS: Record<SiteKind, string> = {
  spring: "Spring",
  river: "River station",
  tidal: "Tidal reach",
  reservoir: "Reservoir",
  "treatment-works": "Treatment works",
  borehole: "Borehole",
  other: "Other",
};

export const COMPENSATION_LABELS: Record<CompensationMethodName, string> = {
  linear: "Linear coefficient",
  "natural-water": "Natural water (non-linear)",
};
