// Which units the importer understands for each measured parameter, and the linear
// conversion (canonical = value × scale + offset) it applies per cell. Conductivity and
// temperature defer to app/lib/water/units.ts so the whole app agrees on spellings;
// depth and battery units are few and live here.

import {
  parseConductivityUnit,
  parseTemperatureUnit,
  toMicrosiemensPerCm,
} from "#app/lib/water/units.ts";
import type { Parameter } from "./profile.ts";

export type MeasuredParameter = "conductivity" | "specific-conductance" | "temperature" | "ph" | "depth" | "battery";

export const MEASURED_PARAMETERS: readonly MeasuredParameter[] = [
  "conductivity",
  "specific-conductance",
  "temperature",
  "ph",
  "depth",
  "battery",
];

export function isMeasured(parameter: Parameter): parameter is MeasuredParameter {
  return (MEASURED_PARAMETERS as readonly string[]).includes(parameter);
}

// Depth units to metres as [multiply, divide]: 1 ft = 0.3048 m exactly (international
// yard and pound agreement, 1959); cm and mm divide so 150 cm is exactly 1.5 m.
const METRES_FROM: Record<string, [multiply: number, divide: number]> = {
  m: [1, 1],
  cm: [1, 100],
  mm: [1, 1000],
  ft: [0.3048, 1],
};

/** The unit choices a person is offered for a parameter (canonical spellings). */
export const UNIT_CHOICES: Record<MeasuredParameter, readonly (string | null)[]> = {
  conductivity: ["µS/cm", "mS/cm", "S/m", "mS/m", "µS/m"],
  "specific-conductance": ["µS/cm", "mS/cm", "S/m", "mS/m", "µS/m"],
  temperature: ["°C", "°F", "K"],
  ph: [null],
  depth: ["m", "cm", "mm", "ft"],
  battery: ["V", "mV"],
};

function words(text: string) {
  return text
    .normalize("NFKC")
    .split(/[^A-Za-z]+/)
    .filter(Boolean);
}

/**
 * Canonical spelling of `unit` for `parameter`, or undefined when the importer does not
 * understand it. pH is dimensionless: null, "" and "pH" are all fine (canonical null).
 * Also used on header text ("Depth (m)") by the sniffer.
 */
export function canonicalUnit(parameter: MeasuredParameter, unit: string | null): string | null | undefined {
  const text = (unit ?? "").trim();
  switch (parameter) {
    case "conductivity":
    case "specific-conductance":
      return text ? (parseConductivityUnit(text) ?? undefined) : undefined;
    case "temperature":
      return text ? (parseTemperatureUnit(text) ?? undefined) : undefined;
    case "ph":
      return text === "" || text.toLowerCase() === "ph" || text === "-" ? null : undefined;
    case "depth": {
      const found = words(text).find((w) => w.toLowerCase() in METRES_FROM || /^(feet|foot|metres?|meters?)$/i.test(w));
      if (!found) return undefined;
      const lower = found.toLowerCase();
      if (lower === "feet" || lower === "foot") return "ft";
      if (lower.startsWith("met")) return "m";
      return lower;
    }
    case "battery": {
      const found = words(text).find((w) => w === "V" || w === "v" || w === "mV" || w === "mv" || /^volts?$/i.test(w));
      if (!found) return undefined;
      return found.toLowerCase() === "mv" ? "mV" : "V";
    }
  }
}

// Celsius from other scales, as (value + add) × multiply ÷ divide so common values come
// out exact (59 °F → 15 °C, not 15.000000000000002): t = (F − 32)·5/9, t = K − 273.15
// (SI definition of the Celsius scale; the same formulas as toCelsius in the water module).
const CELSIUS_FROM: Record<string, [add: number, multiply: number, divide: number]> = {
  "°C": [0, 1, 1],
  "°F": [-32, 5, 9],
  K: [-273.15, 1, 1],
};

/** canonical = (value + add) × multiply ÷ divide */
export type Conversion = { add: number; multiply: number; divide: number; canonicalUnit: string | null };

/**
 * Linear conversion to the canonical unit (µS/cm, °C, m, V; pH unchanged), found once
 * per column so a cell costs an add, a multiply and a divide. Conductivity factors come
 * from the water module (toMicrosiemensPerCm). Throws RangeError for a unit the
 * importer does not understand.
 */
export function conversionFor(parameter: MeasuredParameter, unit: string | null): Conversion {
  const canonical = canonicalUnit(parameter, unit);
  if (canonical === undefined) throw new RangeError(`Unknown unit ${JSON.stringify(unit)} for ${parameter}`);
  switch (parameter) {
    case "conductivity":
    case "specific-conductance": {
      const factor = toMicrosiemensPerCm(1, canonical as string);
      // Divide by 100 rather than multiply by 0.01 (µS/m): 0.01 has no exact binary form.
      return factor >= 1
        ? { add: 0, multiply: factor, divide: 1, canonicalUnit: canonical }
        : { add: 0, multiply: 1, divide: Math.round(1 / factor), canonicalUnit: canonical };
    }
    case "temperature": {
      const [add, multiply, divide] = CELSIUS_FROM[canonical as string];
      return { add, multiply, divide, canonicalUnit: canonical };
    }
    case "ph":
      return { add: 0, multiply: 1, divide: 1, canonicalUnit: null };
    case "depth": {
      const [multiply, divide] = METRES_FROM[canonical as string];
      return { add: 0, multiply, divide, canonicalUnit: canonical };
    }
    case "battery":
      return canonical === "mV"
        ? { add: 0, multiply: 1, divide: 1000, canonicalUnit: canonical }
        : { add: 0, multiply: 1, divide: 1, canonicalUnit: canonical };
  }
}
