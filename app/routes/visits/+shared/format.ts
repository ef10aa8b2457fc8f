// Number formats of the visit and correction pages (en-GB grouping, units spelled out).

export function us(x: number | null | undefined, decimals = 1) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  return `${x.toLocaleString("en-GB", { minimumFractionDigits: decimals, maximumFractionDigits: decimals })} µS/cm`;
}

export function signedUs(x: number | null | undefined, decimals = 1) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  return `${x > 0 ? "+" : x < 0 ? "−" : "±"}${us(Math.abs(x), decimals)}`;
}

export function signedPercent(x: number | null | undefined, decimals = 1) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  const text = Math.abs(x).toLocaleString("en-GB", { minimumFractionDigits: decimals, maximumFractionDigits: decimals });
  return `${x > 0 ? "+" : x < 0 ? "−" : "±"}${text} %`;
}

export function celsius(x: number | null | undefined, decimals = 1) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  return `${x.toLocaleString("en-GB", { minimumFractionDigits: decimals, maximumFractionDigits: decimals })} °C`;
}

export function signedCelsius(x: number | null | undefined, decimals = 2) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  return `${x > 0 ? "+" : x < 0 ? "−" : "±"}${celsius(Math.abs(x), decimals)}`;
}

/** An offset of a correction in its unit: "+13.6 %" or "+12.0 µS/cm". */
export function offsetText(value: number, unit: "us_cm" | "percent") {
  return unit === "percent" ? signedPercent(value, 2) : signedUs(value, 1);
}
