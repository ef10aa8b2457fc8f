// Practical Salinity, PSS-78: UNESCO (1983) "Algorithms for computation of fundamental
// properties of seawater", Fofonoff & Millard, UNESCO Technical Papers in Marine Science 44,
// with the extension below S = 2 of Hill, Dauphinee & Woods (1986), IEEE J. Oceanic Eng.
// OE-11(1), 109–112, so that fresh and brackish water get a sensible value.
//
// Temperatures enter in ITS-90 and are converted with t68 = 1.00024 t90 (the usual
// practice, as in the TEOS-10 GSW code), since PSS-78 is defined on IPTS-68.
// C(35, 15, 0) = 42.914 mS/cm (Culkin & Smith 1980, the value used by UNESCO 1983).

export const C35_15_0_MS_PER_CM = 42.914;
export const PSS78_TEMPERATURE_RANGE_C = [-2, 35] as const;
export const PSS78_PRESSURE_RANGE_DBAR = [0, 10_000] as const;
export const PSS78_SALINITY_MAX = 42;
export const PSS78_HILL_BELOW = 2;

// UNESCO 1983, PSS-78 coefficients.
const A0 = 0.008, A1 = -0.1692, A2 = 25.3851, A3 = 14.0941, A4 = -7.0261, A5 = 2.7081;
const B0 = 0.0005, B1 = -0.0056, B2 = -0.0066, B3 = -0.0375, B4 = 0.0636, B5 = -0.0144;
const K = 0.0162;
// rt(t) = C(35, t, 0) / C(35, 15, 0)
const C0 = 0.6766097, C1 = 2.00564e-2, C2 = 1.104259e-4, C3 = -6.9698e-7, C4 = 1.0031e-9;
// Rp = C(S, t, p) / C(S, t, 0)
const D1 = 3.426e-2, D2 = 4.464e-4, D3 = 4.215e-1, D4 = -3.107e-3;
const E1 = 2.07e-5, E2 = -6.37e-10, E3 = 3.989e-15;

/** IPTS-68 temperature from ITS-90, t68 = 1.00024 t90 (Saunders 1990; the usual practice for PSS-78). */
export function t68FromT90(t90: number): number {
  return 1.00024 * t90;
}

function rtPolynomial(t68: number): number {
  return C0 + t68 * (C1 + t68 * (C2 + t68 * (C3 + t68 * C4)));
}

function pressureTerm(p: number): number {
  return p * (E1 + p * (E2 + p * E3));
}

function temperatureTerm(t68: number): number {
  return (t68 - 15) / (1 + K * (t68 - 15));
}

// S as a function of x = √Rt on the PSS-78 branch, and its derivative.
function pssAtX(x: number, ft: number): number {
  return (
    A0 + ft * B0 +
    x * (A1 + ft * B1 + x * (A2 + ft * B2 + x * (A3 + ft * B3 + x * (A4 + ft * B4 + x * (A5 + ft * B5)))))
  );
}

function pssSlopeAtX(x: number, ft: number): number {
  return (
    A1 + ft * B1 +
    x * (2 * (A2 + ft * B2) + x * (3 * (A3 + ft * B3) + x * (4 * (A4 + ft * B4) + x * 5 * (A5 + ft * B5))))
  );
}

// Hill et al. (1986): S = S_PSS − a0/(1 + 1.5X + X²) − b0·f(t)/(1 + √y + y + y^1.5),
// X = 400 Rt, y = 100 Rt (so √y = 10x).
function hillRawAtX(x: number, ft: number, pss: number): number {
  const bigX = 400 * x * x;
  const part1 = 1 + bigX * (1.5 + bigX);
  const sy = 10 * x;
  const part2 = 1 + sy * (1 + sy * (1 + sy));
  return pss - A0 / part1 - (B0 * ft) / part2;
}

function hillRawSlopeAtX(x: number, ft: number, pssSlope: number): number {
  const bigX = 400 * x * x;
  const part1 = 1 + bigX * (1.5 + bigX);
  const sy = 10 * x;
  const part2 = 1 + sy * (1 + sy * (1 + sy));
  return pssSlope + (A0 * (1.5 + 2 * bigX) * 800 * x) / (part1 * part1) + (B0 * ft * (10 + 200 * x + 3000 * x * x)) / (part2 * part2);
}

// Solve S_PSS(x) = target by bracketed Newton on x = √Rt (S is increasing in x).
function xForPss(target: number, ft: number): number {
  let lo = 0, hi = 2, x = Math.sqrt(target / 35);
  for (let i = 0; i < 100; i++) {
    const f = pssAtX(x, ft) - target;
    if (Math.abs(f) < 1e-13) break;
    if (f > 0) hi = x;
    else lo = x;
    let next = x - f / pssSlopeAtX(x, ft);
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    if (Math.abs(next - x) < 1e-16) break;
    x = next;
  }
  return x;
}

/**
 * Factor that makes the Hill et al. (1986) branch meet PSS-78 exactly at S = 2: the
 * raw Hill formula is about 1e-5 low there. The same continuity factor is applied in
 * the TEOS-10 GSW code (gsw_SP_from_C), which keeps S(R) continuous and invertible.
 */
export function hillRatioAtS2(t68: number): number {
  const ft = temperatureTerm(t68);
  const x2 = xForPss(PSS78_HILL_BELOW, ft);
  return PSS78_HILL_BELOW / hillRawAtX(x2, ft, PSS78_HILL_BELOW);
}

function salinityFromRtIpts68(rt: number, t68: number): number {
  const ft = temperatureTerm(t68);
  const x = Math.sqrt(rt);
  const pss = pssAtX(x, ft);
  if (pss >= PSS78_HILL_BELOW) return pss;
  return hillRatioAtS2(t68) * hillRawAtX(x, ft, pss);
}

function rtFromR(r: number, t68: number, p: number): number {
  const rp = 1 + pressureTerm(p) / (1 + t68 * (D1 + t68 * D2) + r * (D3 + t68 * D4));
  return r / (rp * rtPolynomial(t68));
}

/**
 * PSS-78 (UNESCO 1983, Tech. Pap. Mar. Sci. 44) with the Hill et al. (1986) branch
 * below S = 2, on IPTS-68 temperature and with no range checks. It exists to reproduce
 * the UNESCO computational check values (some lie outside the oceanographic range);
 * use salinityFromConductivityRatio for data.
 */
export function salinityFromRatioIpts68Unchecked(r: number, t68: number, pressureDbar: number): number {
  return salinityFromRtIpts68(rtFromR(r, t68, pressureDbar), t68);
}

function checkTemperaturePressure(temperatureC: number, pressureDbar: number) {
  const [tLo, tHi] = PSS78_TEMPERATURE_RANGE_C;
  if (!Number.isFinite(temperatureC) || temperatureC < tLo || temperatureC > tHi) {
    throw new RangeError(`PSS-78 is defined for ${tLo} to ${tHi} °C; got ${temperatureC} °C`);
  }
  const [pLo, pHi] = PSS78_PRESSURE_RANGE_DBAR;
  if (!Number.isFinite(pressureDbar) || pressureDbar < pLo || pressureDbar > pHi) {
    throw new RangeError(`PSS-78 is defined for ${pLo} to ${pHi} dbar; got ${pressureDbar} dbar`);
  }
}

function checkSalinityResult(s: number): number {
  if (!(s <= PSS78_SALINITY_MAX)) {
    throw new RangeError(`Practical salinity ${s.toFixed(3)} is above the PSS-78 range (0–${PSS78_SALINITY_MAX})`);
  }
  return s;
}

/**
 * Practical salinity from the conductivity ratio R = C(S, t, p) / C(35, 15, 0):
 * PSS-78 (UNESCO 1983) for 2 ≤ S ≤ 42, Hill et al. (1986) below 2. Temperature in ITS-90
 * °C (converted with t68 = 1.00024 t90). RangeError for R < 0, t outside −2…35 °C,
 * p outside 0…10 000 dbar, or a result above 42.
 */
export function salinityFromConductivityRatio(r: number, temperatureC: number, pressureDbar = 0): number {
  if (!Number.isFinite(r) || r < 0) throw new RangeError(`Conductivity ratio must be ≥ 0, got ${r}`);
  checkTemperaturePressure(temperatureC, pressureDbar);
  return checkSalinityResult(salinityFromRatioIpts68Unchecked(r, t68FromT90(temperatureC), pressureDbar));
}

/**
 * Practical salinity from in-situ conductivity (mS/cm), temperature (ITS-90 °C) and sea
 * pressure (dbar): R = C / 42.914, then PSS-78 with the Hill et al. (1986) extension
 * (UNESCO 1983). RangeError as salinityFromConductivityRatio, and for negative conductivity.
 */
export function practicalSalinity(conductivityMsPerCm: number, temperatureC: number, pressureDbar = 0): number {
  if (!Number.isFinite(conductivityMsPerCm) || conductivityMsPerCm < 0) {
    throw new RangeError(`Conductivity must be a non-negative number of mS/cm, got ${conductivityMsPerCm}`);
  }
  return salinityFromConductivityRatio(conductivityMsPerCm / C35_15_0_MS_PER_CM, temperatureC, pressureDbar);
}

/**
 * Practical salinity from a salinometer reading Rt = C(S, t, 0) / C(35, t, 0) at bath
 * temperature t (ITS-90): PSS-78 (UNESCO 1983) with the Hill et al. (1986) branch.
 * RangeError for Rt < 0, t outside −2…35 °C or a result above 42.
 */
export function salinityFromRt(rt: number, temperatureC: number): number {
  if (!Number.isFinite(rt) || rt < 0) throw new RangeError(`Rt must be ≥ 0, got ${rt}`);
  checkTemperaturePressure(temperatureC, 0);
  return checkSalinityResult(salinityFromRtIpts68(rt, t68FromT90(temperatureC)));
}

// Rt for a salinity on the combined PSS-78 / Hill curve, by bracketed Newton on √Rt,
// iterated until |S(Rt) − S| < 1e-12 (well inside the 1e-10 we promise).
function rtFromSalinityIpts68(s: number, t68: number): number {
  if (s === 0) return 0;
  const ft = temperatureTerm(t68);
  // Iterates may cross S = 2 whatever the target, so both branches must be exact.
  const ratio = hillRatioAtS2(t68);
  let lo = 0, hi = 2, x = Math.sqrt(s / 35);
  for (let i = 0; i < 200; i++) {
    const pss = pssAtX(x, ft);
    let value: number, slope: number;
    if (pss >= PSS78_HILL_BELOW) {
      value = pss;
      slope = pssSlopeAtX(x, ft);
    } else {
      value = ratio * hillRawAtX(x, ft, pss);
      slope = ratio * hillRawSlopeAtX(x, ft, pssSlopeAtX(x, ft));
    }
    const f = value - s;
    if (Math.abs(f) < 1e-12) break;
    if (f > 0) hi = x;
    else lo = x;
    let next = x - f / slope;
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    if (next === x) break;
    x = next;
  }
  return x * x;
}

/**
 * Inverse of salinityFromRatioIpts68Unchecked (IPTS-68, no range checks): R for S, t68, p.
 * Rt by Newton iteration to |ΔS| < 1e-12, then R from Rt·rt·Rp(R), a quadratic in R
 * (the route of the TEOS-10 GSW gsw_C_from_SP).
 */
export function ratioFromSalinityIpts68Unchecked(s: number, t68: number, pressureDbar: number): number {
  const u = rtFromSalinityIpts68(s, t68) * rtPolynomial(t68);
  const a = pressureTerm(pressureDbar);
  const b = 1 + t68 * (D1 + t68 * D2);
  const c = D3 + t68 * D4;
  if (a === 0) return u;
  const q = b - u * c;
  return (-q + Math.sqrt(q * q + 4 * c * u * (a + b))) / (2 * c);
}

/**
 * Conductivity ratio R = C(S, t, p)/C(35, 15, 0) for a practical salinity: the inverse of
 * PSS-78 + Hill (UNESCO 1983; Hill et al. 1986) by Newton iteration to 1e-10 in S.
 * RangeError for S outside 0–42, t outside −2…35 °C (ITS-90), p outside 0…10 000 dbar.
 */
export function conductivityRatioFromSalinity(salinity: number, temperatureC: number, pressureDbar = 0): number {
  if (!Number.isFinite(salinity) || salinity < 0 || salinity > PSS78_SALINITY_MAX) {
    throw new RangeError(`Practical salinity must be 0–${PSS78_SALINITY_MAX}, got ${salinity}`);
  }
  checkTemperaturePressure(temperatureC, pressureDbar);
  return ratioFromSalinityIpts68Unchecked(salinity, t68FromT90(temperatureC), pressureDbar);
}

/** Conductivity (mS/cm) of water of practical salinity S: 42.914 × R(S, t, p). Checks as above. */
export function conductivityFromSalinity(salinity: number, temperatureC: number, pressureDbar = 0): number {
  return C35_15_0_MS_PER_CM * conductivityRatioFromSalinity(salinity, temperatureC, pressureDbar);
}

// Continuity factors for the bulk path, every 0.1 °C over −2…35 °C (ITS-90), built on
// first use. Quadratic interpolation between entries reproduces hillRatioAtS2 to about
// 1e-12 (linear interpolation would leave 1e-9 near −2 °C).
let hillRatioTable: Float64Array | null = null;
const HILL_TABLE_START_C = -2;
const HILL_TABLE_STEPS = 370;

function getHillRatioTable(): Float64Array {
  if (!hillRatioTable) {
    const table = new Float64Array(HILL_TABLE_STEPS + 1);
    for (let i = 0; i <= HILL_TABLE_STEPS; i++) {
      table[i] = hillRatioAtS2(t68FromT90(HILL_TABLE_START_C + i / 10));
    }
    hillRatioTable = table;
  }
  return hillRatioTable;
}

/**
 * Practical salinity of one logged reading, for bulk paths: conductivity in µS/cm,
 * ITS-90 temperature, sea pressure in dbar (not checked: pass a validated value). The
 * formulas of practicalSalinity, inlined; returns NaN instead of throwing for negative or
 * non-finite conductivity, temperature outside −2…35 °C or S above 42. No allocation.
 */
export function practicalSalinityOrNaN(conductivityUsPerCm: number, temperatureC: number, pressureDbar = 0): number {
  const c = conductivityUsPerCm;
  const t90 = temperatureC;
  if (!(c >= 0 && c < Infinity && t90 >= -2 && t90 <= 35)) return NaN;
  const hill = hillRatioTable ?? getHillRatioTable();
  const t = 1.00024 * t90;
  const r = c * (1 / (1000 * C35_15_0_MS_PER_CM));
  const rt = C0 + t * (C1 + t * (C2 + t * (C3 + t * C4)));
  const rp =
    pressureDbar === 0
      ? 1
      : 1 + (pressureDbar * (E1 + pressureDbar * (E2 + pressureDbar * E3))) / (1 + t * (D1 + t * D2) + r * (D3 + t * D4));
  const x = Math.sqrt(r / (rp * rt));
  const ft = (t - 15) / (1 + K * (t - 15));
  let s =
    A0 + ft * B0 +
    x * (A1 + ft * B1 + x * (A2 + ft * B2 + x * (A3 + ft * B3 + x * (A4 + ft * B4 + x * (A5 + ft * B5)))));
  if (s < 2) {
    const bigX = 400 * x * x;
    const sy = 10 * x;
    const raw = s - A0 / (1 + bigX * (1.5 + bigX)) - (B0 * ft) / (1 + sy * (1 + sy * (1 + sy)));
    // Quadratic interpolation on the nearest three entries.
    const pos = (t90 - HILL_TABLE_START_C) * 10;
    let i = Math.round(pos);
    if (i < 1) i = 1;
    else if (i > HILL_TABLE_STEPS - 1) i = HILL_TABLE_STEPS - 1;
    const u = pos - i;
    const below = hill[i - 1], mid = hill[i], above = hill[i + 1];
    s = (mid + 0.5 * u * (above - below) + 0.5 * u * u * (above - 2 * mid + below)) * raw;
  }
  return s <= 42 ? s : NaN;
}

/**
 * Bulk practical salinity for ingest, from in-situ conductivity in µS/cm (as logged) and
 * ITS-90 temperature, at one sea pressure for all readings. Same formulas as
 * practicalSalinity. No allocation and no throw in the loop: a reading with negative or
 * non-finite conductivity, temperature outside −2…35 °C, or S above 42 gives NaN. The
 * pressure is checked once (RangeError).
 */
export function practicalSalinityInto(
  conductivityUsPerCm: Float64Array,
  temperatureC: Float64Array,
  out: Float64Array,
  pressureDbar = 0,
): Float64Array {
  const n = conductivityUsPerCm.length;
  if (temperatureC.length !== n || out.length < n) {
    throw new RangeError("conductivity, temperature and output arrays must have the same length");
  }
  checkTemperaturePressure(25, pressureDbar);
  getHillRatioTable();
  for (let k = 0; k < n; k++) {
    out[k] = practicalSalinityOrNaN(conductivityUsPerCm[k], temperatureC[k], pressureDbar);
  }
  return out;
}
