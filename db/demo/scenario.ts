// The invented demo scenario: the Marrowby Water Cooperative and its eight monitoring sites on the
// fictional River Quell. Every name, place, person and serial here is made up.
import type { RoleName, SiteKind } from "../schema.ts";

export const DEMO_ORGANISATION = "Marrowby Water Cooperative";

export const DEMO_PEOPLE: { email: string; name: string; role: RoleName; password: string; weeklyDigest: boolean }[] = [
  { email: "tamsin.oakes@marrowby.example", name: "Tamsin Oakes", role: "technician", password: "quell-field-2026", weeklyDigest: false },
  { email: "idris.penhallow@marrowby.example", name: "Idris Penhallow", role: "officer", password: "quell-review-2026", weeklyDigest: true },
  { email: "mira.castellane@marrowby.example", name: "Mira Castellane", role: "manager", password: "quell-weekly-2026", weeklyDigest: true },
  { email: "osric.wendle@marrowby.example", name: "Osric Wendle", role: "admin", password: "quell-admin-2026", weeklyDigest: false },
];

export type DemoSite = {
  code: string;
  name: string;
  kind: SiteKind;
  latitude: number;
  longitude: number;
  notes: string;
  compensationMethod: "linear" | "natural-water";
  referenceC: 20 | 25;
  tdsFactor: number;
};

export const DEMO_SITES: DemoSite[] = [
  { code: "QH1", name: "Quell Head springs", kind: "spring", latitude: 54.412, longitude: -2.981, notes: "Upland springs feeding the Quell; soft, low-conductivity water.", compensationMethod: "natural-water", referenceC: 25, tdsFactor: 0.6 },
  { code: "QF2", name: "Quell at Fernmoor Bridge", kind: "river", latitude: 54.371, longitude: -2.902, notes: "River station 400 m above the Tollcross treated-effluent outfall.", compensationMethod: "linear", referenceC: 25, tdsFactor: 0.65 },
  { code: "QT3", name: "Quell at Tollcross Weir", kind: "river", latitude: 54.352, longitude: -2.861, notes: "River station 1.2 km below the treated-effluent outfall.", compensationMethod: "linear", referenceC: 25, tdsFactor: 0.65 },
  { code: "QS4", name: "Saltinge Quay tidal reach", kind: "tidal", latitude: 54.301, longitude: -2.774, notes: "Brackish at high water on spring tides; salinity matters here.", compensationMethod: "linear", referenceC: 25, tdsFactor: 0.7 },
  { code: "HR5", name: "Harrowmere Reservoir outlet", kind: "reservoir", latitude: 54.398, longitude: -2.948, notes: "Draw-off tower outlet to the treatment works main.", compensationMethod: "natural-water", referenceC: 25, tdsFactor: 0.64 },
  { code: "BW6", name: "Brackwell Works inlet", kind: "treatment-works", latitude: 54.366, longitude: -2.917, notes: "Raw-water inlet channel of the Brackwell treatment works.", compensationMethod: "linear", referenceC: 20, tdsFactor: 0.65 },
  { code: "AB7", name: "Ashcombe borehole 1", kind: "borehole", latitude: 54.338, longitude: -2.826, notes: "Chalk borehole, stable chemistry.", compensationMethod: "linear", referenceC: 25, tdsFactor: 0.68 },
  { code: "AB8", name: "Ashcombe borehole 2", kind: "borehole", latitude: 54.334, longitude: -2.815, notes: "Conductivity rising slowly since the new abstraction licence; watch the trend.", compensationMethod: "linear", referenceC: 25, tdsFactor: 0.68 },
];

/** `swap`: the AB8 logger swap, dated by the demo year's events (db/demo/readings.ts). */
export type DemoLogger = { serial: string; model: string; intervalS: number; site: string | null; from: string; swap?: "replaced" | "replacement" };

export const DEMO_LOGGERS: DemoLogger[] = [
  { serial: "RQ-4101", model: "Four-electrode conductivity/temperature logger", intervalS: 900, site: "QH1", from: "2024-11-06T10:00:00Z" },
  { serial: "RQ-4102", model: "Four-electrode conductivity/temperature logger", intervalS: 900, site: "QF2", from: "2024-11-06T11:30:00Z" },
  { serial: "RQ-4103", model: "Four-electrode conductivity/temperature logger", intervalS: 600, site: "QT3", from: "2024-11-06T12:15:00Z" },
  { serial: "RQ-5201", model: "Conductivity/temperature/depth logger, titanium housing", intervalS: 900, site: "QS4", from: "2024-11-07T09:00:00Z" },
  { serial: "RQ-4105", model: "Multiparameter sonde (conductivity, temperature, pH)", intervalS: 900, site: "HR5", from: "2024-11-07T13:00:00Z" },
  { serial: "RQ-4106", model: "Multiparameter sonde (conductivity, temperature, pH)", intervalS: 60, site: "BW6", from: "2024-11-08T08:30:00Z" },
  { serial: "RQ-3107", model: "Well logger (conductivity, temperature, level)", intervalS: 900, site: "AB7", from: "2024-11-08T10:00:00Z" },
  // The logger swap at AB8: RQ-3108 failed in June and was replaced by RQ-3109.
  { serial: "RQ-3108", model: "Well logger (conductivity, temperature, level)", intervalS: 900, site: "AB8", from: "2024-11-08T11:00:00Z", swap: "replaced" },
  { serial: "RQ-3109", model: "Well logger (conductivity, temperature, level)", intervalS: 900, site: "AB8", from: "2024-11-08T11:00:00Z", swap: "replacement" },
];

/** The technician's round: the sites Tamsin visits. */
export const DEMO_ASSIGNMENTS: { email: string; sites: string[] }[] = [
  { email: "tamsin.oakes@marrowby.example", sites: ["QH1", "QF2", "QT3", "HR5", "AB7", "AB8"] },
];
