// Units met in conductivity-logger exports, and parsers that recognise them in
// free text such as CSV headers ("Cond (mS/cm)", "Temp °F").

export type ConductivityUnit = "µS/cm" | "mS/cm" | "S/m" | "mS/m" | "µS/m";
export type TemperatureUnit = "°C" | "°F" | "K";

// How many µS/cm one unit is. 1 S/m = 0.01 S/cm = 10 000 µS/cm (SI definitions).
const MICROSIEMENS_PER_CM: Record<ConductivityUnit, number> = {
  "µS/cm": 1,
  "mS/cm": 1000,
  "S/m": 10_000,
  "mS/m": 10,
  "µS/m": 0.01,
};

export const CONDUCTIVITY_UNITS = Object.keys(MICROSIEMENS_PER_CM) as ConductivityUnit[];
export const TEMPERATURE_UNITS: readonly TemperatureUnit[] = ["°C", "°F", "K"];

// Micro prefix as typed in the wild: micro sign U+00B5, Greek mu U+03BC, or "u".
const MICRO = "[µμu]";

// A conductivity unit inside arbitrary text: optional prefix, "S" or "mho"
// (1 mho = 1 S; old lab sheets still print µmho/cm), slash, "cm" or "m".
// Case-insensitive: loggers write "us/cm", "MS/CM" never means megasiemens here.
const CONDUCTIVITY_PATTERN = new RegExp(
  `(?:^|[^a-z])(${MICRO}|m)?(s|mhos?)\\s*/\\s*(cm|m)(?![a-z])`,
  "i",
);

/**
 * Recognise a conductivity unit in text (a unit string or a CSV header such as
 * "SpCond [uS/cm]"). Returns the canonical unit or null. Method: pattern match on
 * prefix (µ/μ/u/m/none) + S or mho + per cm or per m; common practice for logger files.
 */
export function parseConductivityUnit(text: string): ConductivityUnit | null {
  const match = CONDUCTIVITY_PATTERN.exec(text.normalize("NFKC"));
  if (!match) return null;
  const prefix = (match[1] ?? "").toLowerCase();
  const perCm = match[3].toLowerCase() === "cm";
  const micro = prefix === "µ" || prefix === "μ" || prefix === "u";
  if (micro) return perCm ? "µS/cm" : "µS/m";
  if (prefix === "m") return perCm ? "mS/cm" : "mS/m";
  return perCm ? null : "S/m"; // plain S/cm is not a unit loggers use; refuse to guess
}

/**
 * Recognise a temperature unit in text ("°C", "degC", "deg F", "Temp (K)", "℉",
 * "Celsius"). Returns "°C", "°F", "K" or null. A lone letter C/F/K counts only as a
 * separate word, so "Cond (mS/cm)" is not mistaken for Celsius. Common practice.
 */
export function parseTemperatureUnit(text: string): TemperatureUnit | null {
  // The ordinal sign º is often typed for ° (and NFKC would turn it into "o");
  // NFKC then turns ℃ into °C and ℉ into °F.
  const t = text.replace(/º/g, "°").normalize("NFKC").toLowerCase();
  if (/°\s*c|deg(?:rees?)?\s*\.?\s*c(?![a-z])|celsius|centigrade/.test(t)) return "°C";
  if (/°\s*f|deg(?:rees?)?\s*\.?\s*f(?![a-z])|fahrenheit/.test(t)) return "°F";
  if (/kelvin/.test(t)) return "K";
  const words = t.split(/[^a-z]+/).filter(Boolean);
  if (words.includes("c") || words.includes("degc")) return "°C";
  if (words.includes("f") || words.includes("degf")) return "°F";
  if (words.includes("k")) return "K";
  return null;
}

function conductivityUnitOf(unit: string): ConductivityUnit {
  const canonical = (CONDUCTIVITY_UNITS as string[]).includes(unit)
    ? (unit as ConductivityUnit)
    : parseConductivityUnit(unit);
  if (!canonical) throw new RangeError(`Unknown conductivity unit "${unit}"`);
  return canonical;
}

function temperatureUnitOf(unit: string): TemperatureUnit {
  const canonical = (TEMPERATURE_UNITS as string[]).includes(unit)
    ? (unit as TemperatureUnit)
    : parseTemperatureUnit(unit);
  if (!canonical) throw new RangeError(`Unknown temperature unit "${unit}"`);
  return canonical;
}

/**
 * Convert a conductivity to µS/cm. Accepts canonical units or any spelling that
 * parseConductivityUnit recognises. SI unit definitions; RangeError for negative or
 * non-finite values and unknown units.
 */
export function toMicrosiemensPerCm(value: number, unit: ConductivityUnit | string): number {
  const canonical = conductivityUnitOf(unit);
  if (!Number.isFinite(value)) throw new RangeError(`Conductivity must be a finite number, got ${value}`);
  if (value < 0) throw new RangeError(`Conductivity cannot be negative (got ${value} ${canonical})`);
  return value * MICROSIEMENS_PER_CM[canonical];
}

/** Convert a conductivity given in µS/cm to another unit (inverse of toMicrosiemensPerCm). */
export function fromMicrosiemensPerCm(valueUsPerCm: number, unit: ConductivityUnit | string): number {
  const canonical = conductivityUnitOf(unit);
  if (!Number.isFinite(valueUsPerCm)) throw new RangeError(`Conductivity must be a finite number, got ${valueUsPerCm}`);
  if (valueUsPerCm < 0) throw new RangeError(`Conductivity cannot be negative (got ${valueUsPerCm} µS/cm)`);
  return valueUsPerCm / MICROSIEMENS_PER_CM[canonical];
}

/**
 * Convert a temperature to °C: t = (F − 32)·5/9, t = K − 273.15 (SI definition of the
 * Celsius scale). RangeError below absolute zero, for non-finite values and unknown units.
 */
export function toCelsius(value: number, unit: TemperatureUnit | string): number {
  const canonical = temperatureUnitOf(unit);
  if (!Number.isFinite(value)) throw new RangeError(`Temperature must be a finite number, got ${value}`);
  const celsius = canonical === "°C" ? value : canonical === "°F" ? ((value - 32) * 5) / 9 : value - 273.15;
  if (celsius < -273.15) throw new RangeError(`Temperature ${value} ${canonical} is below absolute zero`);
  return celsius;
}
