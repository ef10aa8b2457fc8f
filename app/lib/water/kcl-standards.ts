// Potassium chloride conductivity standards against temperature, and the cell constant
// a calibration against one of them implies.
//
// Temperature dependence: CRC Handbook of Chemistry and Physics, section 5, "Standard
// KCl solutions for calibrating conductivity cells" (p. 5-73 in the mid-2000s editions),
// the NIST primary standards of Wu, Koch & Pratt, J. Res. NIST 96, 191 (1991) for 0.01 and
// 0.1 mol/kg and Wu et al., J. Res. NIST 99, 241 (1994) for 1.0 mol/kg, 0–50 °C (ITS-90),
// in µS/cm, with the conductivity of CO₂-saturated water already subtracted. Between the
// tabulated temperatures we interpolate linearly (error below 0.03 % at mid-interval,
// about the table's stated uncertainty).
//
// The solutions sold to the trade are named by their 25 °C value. We take that value and
// scale it by the NIST curve of the nearest molality, κ(t) = κ₂₅ × κ_NIST(t)/κ_NIST(25 °C):
//   0.001 mol/L  146.9 µS/cm   Standard Methods Table 2510:I, Λ = 146.9 S cm²/mol (from memory)
//   0.01 mol/L   1413 µS/cm    Standard Methods Table 2510:I and EPA Method 120.1
//   0.1 mol/L    12.88 mS/cm   the "12.88" standard (IEC/DIN tables; common practice)
//   1 demal      111.3 mS/cm   the "111.3" standard, 1 D KCl (Jones & Bradshaw 1933;
//                              Standard Methods gives 111.9 mS/cm for 1 mol/L, from memory)
// Scaling 0.001 mol/L by the 0.01 mol/kg curve is an approximation (the temperature
// coefficients of the two differ by a few tenths of a per cent at the ends of the range).

export type KclStandard =
  | "0.001M" | "0.01M" | "0.1M" | "1M" // trade solutions, by nominal amount
  | "146.9" | "1413" | "12.88" | "111.3" // the same, by the names used in the trade
  | "0.01m" | "0.1m" | "1.0m"; // NIST molal primary standards (CRC table)

type Curve = { temperaturesC: readonly number[]; usPerCm: readonly number[] };

const NIST_T = [0, 5, 10, 15, 18, 20, 25, 30, 35, 40, 45, 50] as const;
const NIST_T_1M = [0, 5, 10, 15, 20, 25, 30, 35, 40, 45, 50] as const; // no 18 °C entry

export const NIST_KCL_CURVES: Record<"0.01m" | "0.1m" | "1.0m", Curve> = {
  "0.01m": {
    temperaturesC: NIST_T,
    usPerCm: [772.92, 890.96, 1013.95, 1141.45, 1219.93, 1273.03, 1408.23, 1546.63, 1687.79, 1831.27, 1976.62, 2123.43],
  },
  "0.1m": {
    temperaturesC: NIST_T,
    usPerCm: [7116.85, 8183.7, 9291.72, 10437.1, 11140.6, 11615.9, 12824.6, 14059.2, 15316.0, 16591.0, 17880.6, 19180.9],
  },
  "1.0m": {
    temperaturesC: NIST_T_1M,
    usPerCm: [63488, 72030, 80844, 89900, 99170, 108620, 118240, 127970, 137810, 147720, 157670],
  },
};

const TRADE: Record<"0.001M" | "0.01M" | "0.1M" | "1M", { at25UsPerCm: number; curve: keyof typeof NIST_KCL_CURVES }> = {
  "0.001M": { at25UsPerCm: 146.9, curve: "0.01m" },
  "0.01M": { at25UsPerCm: 1413, curve: "0.01m" },
  "0.1M": { at25UsPerCm: 12_880, curve: "0.1m" },
  "1M": { at25UsPerCm: 111_300, curve: "1.0m" },
};

const ALIASES: Record<"146.9" | "1413" | "12.88" | "111.3", keyof typeof TRADE> = {
  "146.9": "0.001M",
  "1413": "0.01M",
  "12.88": "0.1M",
  "111.3": "1M",
};

export const KCL_STANDARDS: readonly KclStandard[] = [
  ...(Object.keys(TRADE) as KclStandard[]),
  ...(Object.keys(ALIASES) as KclStandard[]),
  ...(Object.keys(NIST_KCL_CURVES) as KclStandard[]),
];

function interpolate(curve: Curve, temperatureC: number): number {
  const ts = curve.temperaturesC;
  const first = ts[0];
  const last = ts[ts.length - 1];
  if (!Number.isFinite(temperatureC) || temperatureC < first || temperatureC > last) {
    throw new RangeError(`KCl standard table covers ${first}–${last} °C; got ${temperatureC} °C`);
  }
  let i = 0;
  while (i < ts.length - 2 && temperatureC > ts[i + 1]) i++;
  const t0 = ts[i];
  const t1 = ts[i + 1];
  const k0 = curve.usPerCm[i];
  const k1 = curve.usPerCm[i + 1];
  return k0 + ((temperatureC - t0) / (t1 - t0)) * (k1 - k0);
}

/**
 * Conductivity (µS/cm) of a KCl calibration standard at a temperature (ITS-90 °C): the
 * CRC/NIST table (Wu, Koch & Pratt 1991; Wu et al. 1994), interpolated linearly, for the
 * molal standards; for trade solutions their 25 °C value scaled by that curve (see the
 * module note). RangeError for unknown standards and outside 0–50 °C.
 */
export function kclStandardConductivity(standard: KclStandard, temperatureC: number): number {
  const key = (Object.hasOwn(ALIASES, standard) ? ALIASES[standard as keyof typeof ALIASES] : standard) as string;
  if (Object.hasOwn(NIST_KCL_CURVES, key)) {
    return interpolate(NIST_KCL_CURVES[key as keyof typeof NIST_KCL_CURVES], temperatureC);
  }
  if (Object.hasOwn(TRADE, key)) {
    const { at25UsPerCm, curve } = TRADE[key as keyof typeof TRADE];
    const table = NIST_KCL_CURVES[curve];
    return (at25UsPerCm * interpolate(table, temperatureC)) / interpolate(table, 25);
  }
  throw new RangeError(`Unknown KCl standard "${standard}"; known: ${KCL_STANDARDS.join(", ")}`);
}

export type CellConstantInput =
  | { standardUsPerCm: number; measuredUsPerCm: number; currentCellConstantPerCm: number }
  | { standard: KclStandard; temperatureC: number; measuredUsPerCm: number; currentCellConstantPerCm: number };

export type CellConstantResult = {
  cellConstantPerCm: number;
  previousCellConstantPerCm: number;
  standardUsPerCm: number;
  changePercent: number;
  warning?: string;
};

// A change larger than this usually means a wrong or spoiled standard, a fouled cell or
// a temperature mismatch rather than real drift (common practice).
export const CELL_CONSTANT_CHANGE_WARNING_PERCENT = 10;

/**
 * New cell constant from a reading of a standard: the meter reports κ = K·G, so
 * K_new = K_current × κ_standard / κ_read, and the change is 100 (K_new/K_current − 1) %.
 * The standard can be given as a value (µS/cm, at the reading's temperature) or as a KCl
 * standard and temperature. RangeError for non-positive inputs; a warning above 10 %.
 */
export function cellConstant(input: CellConstantInput): CellConstantResult {
  const standardUsPerCm =
    "standard" in input ? kclStandardConductivity(input.standard, input.temperatureC) : input.standardUsPerCm;
  const { measuredUsPerCm, currentCellConstantPerCm } = input;
  for (const [name, value] of [
    ["Standard conductivity", standardUsPerCm],
    ["Measured conductivity", measuredUsPerCm],
    ["Current cell constant", currentCellConstantPerCm],
  ] as const) {
    if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number, got ${value}`);
  }
  const cellConstantPerCm = (currentCellConstantPerCm * standardUsPerCm) / measuredUsPerCm;
  const changePercent = 100 * (cellConstantPerCm / currentCellConstantPerCm - 1);
  const result: CellConstantResult = {
    cellConstantPerCm,
    previousCellConstantPerCm: currentCellConstantPerCm,
    standardUsPerCm,
    changePercent,
  };
  if (Math.abs(changePercent) > CELL_CONSTANT_CHANGE_WARNING_PERCENT) {
    result.warning = `The cell constant moved by ${changePercent.toFixed(1)} %: check the standard (age, contamination), clean the cell and confirm the temperature before accepting.`;
  }
  return result;
}
