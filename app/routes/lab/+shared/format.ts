// Number formats of the lab-check pages: enough digits to judge a check against its range, no more.
import { numberFormat } from "#app/lib/number-format.ts";

const DASH = "—";

function ok(value: number | null | undefined): value is number {
  return typeof value === "number" && Number.isFinite(value);
}

/** Conductivity, four significant figures: "406.2 µS/cm", "1,235 µS/cm". */
export function formatEc(value: number | null | undefined, unit = true) {
  if (!ok(value)) return DASH;
  const text = numberFormat({ maximumSignificantDigits: 4 }).format(value);
  return unit ? `${text} µS/cm` : text;
}

/** A concentration as the laboratory gave it (up to 4 significant figures). */
export function formatMgPerL(value: number | null | undefined, unit = true) {
  if (!ok(value)) return DASH;
  const text = numberFormat({ maximumSignificantDigits: 4 }).format(value);
  return unit ? `${text} mg/L` : text;
}

export function formatMeq(value: number, unit = true) {
  const text = numberFormat({ minimumFractionDigits: 3, maximumFractionDigits: 3 }).format(value);
  return unit ? `${text} meq/L` : text;
}

export function formatMmol(value: number) {
  return numberFormat({ maximumSignificantDigits: 4 }).format(value);
}

/** Ratios to three decimals, so a value just outside 0.90–1.10 does not print as the bound. */
export function formatRatio(value: number | null | undefined) {
  if (!ok(value)) return DASH;
  return numberFormat({ minimumFractionDigits: 3, maximumFractionDigits: 3 }).format(value);
}

export function formatBound(value: number) {
  return numberFormat({ minimumFractionDigits: 2, maximumFractionDigits: 2 }).format(value);
}

/** "+1.4 %", "−3.4 %" (true minus sign). */
export function formatPercent(value: number | null | undefined) {
  if (!ok(value)) return DASH;
  const text = numberFormat({ minimumFractionDigits: 1, maximumFractionDigits: 1, signDisplay: "exceptZero" }).format(value);
  return `${text.replace("-", "−")} %`;
}

export function formatSignedMeq(value: number) {
  return formatMeq(value).replace(/^(\d)/, "+$1").replace("-", "−");
}

export function formatPH(value: number | null | undefined) {
  if (!ok(value)) return DASH;
  return numberFormat({ minimumFractionDigits: 1, maximumFractionDigits: 2 }).format(value);
}

/** Ionic strength in mol/L, three significant figures ("0.00512"). */
export function formatIonicStrength(value: number) {
  return numberFormat({ maximumSignificantDigits: 3 }).format(value);
}

export function formatCoefficient(value: number) {
  return numberFormat({ minimumFractionDigits: 4, maximumFractionDigits: 4 }).format(value);
}

export function formatLambda(value: number) {
  return numberFormat({ minimumFractionDigits: 1, maximumFractionDigits: 2 }).format(value);
}
