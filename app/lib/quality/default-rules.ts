// The alert rules Ripplemark starts with. Levels for the water come from published drinking-water
// guidance and say so in their names and sources; they are screening values for raw and source
// water, not compliance limits: local permits, regulations, accredited laboratories and licensed
// practice govern. Sensor checks are common practice for unattended loggers and tell technicians.
// Rules are scoped by site kind, so a new site of a listed kind is covered as soon as it is added.
// Values marked "(from memory)" were written down without the document at hand: check them against
// the cited text before relying on them.
import type { AlertConditionName, AlertParameterName, RoleName, SiteKind } from "#db/schema.ts";

export type DefaultRule = {
  key: string;
  name: string;
  parameter: AlertParameterName;
  condition: AlertConditionName;
  params: Record<string, unknown>;
  siteKinds: SiteKind[] | null;
  notifyRoles: RoleName[];
  email: boolean;
  guidelineSource: string;
};

/** Sites whose water is, or feeds, drinking water. The tidal reach is brackish by nature and left out. */
const SOURCE_KINDS: SiteKind[] = ["spring", "reservoir", "treatment-works", "borehole"];
const FRESHWATER_KINDS: SiteKind[] = ["spring", "river", "reservoir", "treatment-works", "borehole"];

/** Every default rule's source ends with this reminder. */
export const SCREENING_NOTE =
  "A screening value: local permits, regulations, accredited laboratory analyses and licensed practice govern any decision.";

export const DEFAULT_RULES: DefaultRule[] = [
  {
    key: "eu-dwd-2020-conductivity",
    name: "Specific conductance above 2,500 µS/cm at 20 °C (EU drinking-water indicator value)",
    parameter: "sc25",
    condition: "above",
    // Directive (EU) 2020/2184, Annex I Part C (indicator parameters): conductivity 2 500 µS/cm at
    // 20 °C (from memory). Stated at 20 °C: converted to each site's reference temperature when checked.
    // Clear level 95 % of the threshold and one hour held: our choice, to ride over single readings.
    params: { threshold: 2500, clear: 2375, minDurationMin: 60, referenceC: 20, unit: "µS/cm", durationUnit: "h" },
    siteKinds: FRESHWATER_KINDS,
    notifyRoles: ["officer"],
    email: true,
    guidelineSource:
      "Directive (EU) 2020/2184 on the quality of water intended for human consumption, Annex I Part C (indicator parameters): conductivity 2 500 µS/cm at 20 °C (value from memory; an indicator for monitoring, not a health-based limit). " +
      SCREENING_NOTE,
  },
  {
    key: "us-epa-smcl-tds",
    name: "TDS estimate above 500 mg/L (US EPA secondary standard)",
    parameter: "tds",
    condition: "above",
    params: { threshold: 500, clear: 475, minDurationMin: 360, unit: "mg/L", durationUnit: "h" },
    siteKinds: SOURCE_KINDS,
    notifyRoles: ["officer"],
    email: true,
    guidelineSource:
      "US EPA National Secondary Drinking Water Regulations, 40 CFR 143.3: total dissolved solids 500 mg/L, a non-enforceable secondary level for taste and appearance (value from memory). The TDS here is an estimate from specific conductance. " +
      SCREENING_NOTE,
  },
  {
    key: "who-gdwq-tds-good",
    name: "TDS estimate above 600 mg/L (WHO: beyond the range usually found good to drink)",
    parameter: "tds",
    condition: "above",
    params: { threshold: 600, clear: 570, minDurationMin: 360, unit: "mg/L", durationUnit: "h" },
    siteKinds: SOURCE_KINDS,
    notifyRoles: ["officer"],
    email: false,
    guidelineSource:
      "WHO Guidelines for Drinking-water Quality, 4th edition incorporating the 1st and 2nd addenda (2022), acceptability aspects: TDS below about 600 mg/L is generally considered good; no health-based guideline value is proposed (from memory). " +
      SCREENING_NOTE,
  },
  {
    key: "who-gdwq-tds-unpalatable",
    name: "TDS estimate above 1,000 mg/L (WHO: increasingly unpalatable)",
    parameter: "tds",
    condition: "above",
    params: { threshold: 1000, clear: 950, minDurationMin: 60, unit: "mg/L", durationUnit: "h" },
    siteKinds: SOURCE_KINDS,
    notifyRoles: ["officer", "manager"],
    email: true,
    guidelineSource:
      "WHO Guidelines for Drinking-water Quality, 4th edition incorporating the 1st and 2nd addenda (2022), acceptability aspects: drinking-water becomes significantly and increasingly unpalatable above about 1 000 mg/L TDS (from memory). " +
      SCREENING_NOTE,
  },
  {
    key: "river-fast-change",
    name: "Specific conductance changing fast at river stations",
    parameter: "sc25",
    condition: "rate-of-change",
    // Not from a guideline: a starting value for the demo rivers (normal noise ±5 µS/cm, daily
    // swing under 20 µS/cm), meant to catch a road-salt pulse arriving or a storm diluting the river.
    params: { change: 50, windowMin: 180, direction: "either", unit: "µS/cm", durationUnit: "h" },
    siteKinds: ["river"],
    notifyRoles: ["officer"],
    email: true,
    guidelineSource:
      "Ripplemark starting value, not from a guideline: a change of more than 50 µS/cm within 3 hours. Tune it to each river's own record.",
  },
  {
    key: "sensor-flat-line",
    name: "Conductivity sensor stuck (same value 8 readings in a row)",
    parameter: "conductivity",
    condition: "flat-line",
    params: { readings: 8, tolerance: 0, unit: "µS/cm" },
    siteKinds: null,
    notifyRoles: ["technician", "officer"],
    email: false,
    guidelineSource: "Sensor check (common practice for unattended loggers): natural water is never perfectly still.",
  },
  {
    key: "sensor-spike",
    name: "Conductivity jump on a single reading",
    parameter: "conductivity",
    condition: "spike",
    params: { jump: 500, unit: "µS/cm" },
    siteKinds: null,
    notifyRoles: ["technician", "officer"],
    email: false,
    guidelineSource: "Sensor check (common practice): one reading far from both neighbours usually means an air bubble, debris or a loose connection.",
  },
  {
    key: "sensor-out-of-range",
    name: "Conductivity outside the sensor's range (0–200 mS/cm)",
    parameter: "conductivity",
    condition: "out-of-range",
    // 0–200 mS/cm: the span of common four-electrode field cells (from memory; set the installed sensor's own range).
    params: { min: 0, max: 200_000, unit: "mS/cm" },
    siteKinds: null,
    notifyRoles: ["technician", "officer"],
    email: false,
    guidelineSource: "Sensor check: the range of common four-electrode field sensors (from memory; use the installed sensor's data sheet).",
  },
  {
    key: "sensor-temperature-range",
    name: "Water temperature outside the compensation method's range",
    parameter: "temperature",
    condition: "temperature-range",
    params: {},
    siteKinds: null,
    notifyRoles: ["technician", "officer"],
    email: false,
    guidelineSource:
      "ISO 7888:1985 tabulates natural-water compensation for 0.0–35.9 °C; the linear coefficient method is accepted for −5 to 100 °C here. Outside these, specific conductance cannot be computed.",
  },
  {
    key: "sensor-missing-data",
    name: "Readings missing (no reading for 4 logging intervals)",
    parameter: "conductivity",
    condition: "missing-data",
    params: { intervals: 4 },
    siteKinds: null,
    notifyRoles: ["technician", "officer"],
    email: false,
    guidelineSource: "Data check (common practice): a flat battery, a full memory or a logger out of the water.",
  },
];
