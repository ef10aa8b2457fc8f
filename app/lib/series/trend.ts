// Long-term trend of a series of weekly medians: the Mann–Kendall test for a monotonic trend with
// Sen's slope as its size. Pure: no I/O, runs in browser and server.
//
// Methods (published):
//  - Mann, H. B. (1945) Nonparametric tests against trend. Econometrica 13, 245–259.
//  - Kendall, M. G. (1975) Rank Correlation Methods, 4th ed. Griffin, London.
//  - Sen, P. K. (1968) Estimates of the regression coefficient based on Kendall's tau. JASA 63, 1379–1389.
//  - Helsel, D. R., Hirsch, R. M., Ryberg, K. R., Archfield, S. A., Gilroy, E. J. (2020) Statistical
//    Methods in Water Resources. USGS Techniques and Methods 4-A3, chapters 8 and 12 (Kendall's S,
//    the tie correction of its variance, the continuity correction, the Theil–Sen slope).
//  - Gilbert, R. O. (1987) Statistical Methods for Environmental Pollution Monitoring, ch. 16.
//
// Weekly medians are serially correlated and often seasonal, which the plain test does not allow
// for: the result is a screening indication of a long-term change, not a regulatory finding.

/** Significance level for calling a trend rising or falling (two-sided). */
export const TREND_ALPHA = 0.05;
/** Fewest weekly medians worth testing: about ten months (the normal approximation wants n > 10; a season of data tells little about a long-term trend). */
export const TREND_MIN_POINTS = 40;
/** How far back the trend looks. */
export const TREND_MAX_YEARS = 3;

const MS_PER_YEAR = 365.25 * 86_400_000;

/**
 * erfc(x), the complementary error function, by the Chebyshev fit of Press, Teukolsky, Vetterling
 * & Flannery, Numerical Recipes in C, 2nd ed. (1992), §6.2 `erfcc`: fractional error below 1.2e-7
 * everywhere.
 */
export function erfc(x: number): number {
  const z = Math.abs(x);
  const t = 1 / (1 + 0.5 * z);
  const ans =
    t *
    Math.exp(
      -z * z -
        1.26551223 +
        t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))),
    );
  return x >= 0 ? ans : 2 - ans;
}

/** Φ(z), the standard normal cumulative distribution: Φ(z) = erfc(−z/√2)/2. */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z / Math.SQRT2);
}

export type MannKendall = {
  n: number;
  /** Kendall's S: Σ over pairs i < j of sign(x_j − x_i). */
  s: number;
  /** Var(S) with the correction for tied groups. */
  varS: number;
  /** The standardised statistic with the continuity correction: (S − sign(S)) / √Var(S). */
  z: number;
  /** Two-sided p-value from the normal approximation. */
  pValue: number;
  /** Kendall's tau-a, S / (n(n − 1)/2). */
  tau: number;
};

/**
 * The Mann–Kendall test of values in time order (Helsel et al. 2020, chapters 8 and 12; Gilbert 1987,
 * chapter 16). Var(S) = [n(n−1)(2n+5) − Σ t(t−1)(2t+5)] / 18 over groups of t tied values;
 * Z = (S − 1)/σ for S > 0, 0 for S = 0, (S + 1)/σ for S < 0; p = 2(1 − Φ(|Z|)).
 */
export function mannKendall(values: readonly number[]): MannKendall {
  const x = values.filter((v) => Number.isFinite(v));
  const n = x.length;
  let s = 0;
  for (let i = 0; i < n - 1; i++) {
    const xi = x[i];
    for (let j = i + 1; j < n; j++) {
      const d = x[j] - xi;
      if (d > 0) s++;
      else if (d < 0) s--;
    }
  }
  const ties = new Map<number, number>();
  for (const v of x) ties.set(v, (ties.get(v) ?? 0) + 1);
  let tieTerm = 0;
  for (const t of ties.values()) if (t > 1) tieTerm += t * (t - 1) * (2 * t + 5);
  const varS = (n * (n - 1) * (2 * n + 5) - tieTerm) / 18;
  const sigma = Math.sqrt(varS);
  const z = sigma > 0 ? (s > 0 ? (s - 1) / sigma : s < 0 ? (s + 1) / sigma : 0) : 0;
  const pValue = sigma > 0 ? Math.min(1, 2 * (1 - normalCdf(Math.abs(z)))) : 1;
  const pairs = (n * (n - 1)) / 2;
  return { n, s, varS, z, pValue, tau: pairs > 0 ? s / pairs : 0 };
}

function medianOf(sorted: readonly number[]): number | null {
  if (!sorted.length) return null;
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

/**
 * Sen's slope (the Theil–Sen estimator, Sen 1968; Helsel et al. 2020 chapter 10): the median of the
 * slopes (y_j − y_i)/(x_j − x_i) over all pairs with x_j ≠ x_i, and the intercept that goes with it,
 * median(y) − slope · median(x) (Conover 1980, as given by Helsel et al. 2020 chapter 10). Null with fewer than two
 * distinct x.
 */
export function senSlope(points: readonly { x: number; y: number }[]): { slope: number; intercept: number } | null {
  const p = points.filter((q) => Number.isFinite(q.x) && Number.isFinite(q.y));
  // A typed array sorts numerically without a comparator: several times faster for the ~12,000
  // slopes of three years of weekly medians.
  const slopes = new Float64Array((p.length * (p.length - 1)) / 2);
  let k = 0;
  for (let i = 0; i < p.length - 1; i++) {
    for (let j = i + 1; j < p.length; j++) {
      const dx = p[j].x - p[i].x;
      if (dx !== 0) slopes[k++] = (p[j].y - p[i].y) / dx;
    }
  }
  if (k === 0) return null;
  const sorted = slopes.subarray(0, k).sort();
  const mid = k >> 1;
  const slope = k % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
  const mx = medianOf(p.map((q) => q.x).sort((a, b) => a - b))!;
  const my = medianOf(p.map((q) => q.y).sort((a, b) => a - b))!;
  return { slope, intercept: my - slope * mx };
}

export type TrendDirection = "rising" | "falling" | "no-trend" | "too-few";

export const TREND_LABELS: Record<TrendDirection, string> = {
  rising: "Rising",
  falling: "Falling",
  "no-trend": "No significant trend",
  "too-few": "Too few weeks to test",
};

export type Trend = {
  direction: TrendDirection;
  n: number;
  /** Sen's slope in the value's unit per year; null when too few points. */
  slopePerYear: number | null;
  /** The fitted line's value at `fromMs` and `toMs` (for drawing it), null when too few points. */
  line: { fromMs: number; toMs: number; fromValue: number; toValue: number } | null;
  pValue: number | null;
  s: number | null;
  tau: number | null;
  fromMs: number | null;
  toMs: number | null;
};

/**
 * The trend of weekly values (time in ms, value): Mann–Kendall at `alpha` for the verdict, Sen's
 * slope per year for its size. The verdict follows the test's sign (S), so a significant test
 * with a zero median slope still reads as rising or falling.
 */
export function weeklyTrend(
  points: readonly { tMs: number; value: number | null }[],
  options: { alpha?: number; minPoints?: number } = {},
): Trend {
  const alpha = options.alpha ?? TREND_ALPHA;
  const minPoints = options.minPoints ?? TREND_MIN_POINTS;
  const p = points
    .filter((q): q is { tMs: number; value: number } => q.value !== null && Number.isFinite(q.value))
    .sort((a, b) => a.tMs - b.tMs);
  const empty: Trend = { direction: "too-few", n: p.length, slopePerYear: null, line: null, pValue: null, s: null, tau: null, fromMs: p[0]?.tMs ?? null, toMs: p.at(-1)?.tMs ?? null };
  if (p.length < minPoints) return empty;
  const t0 = p[0].tMs;
  const mk = mannKendall(p.map((q) => q.value));
  const sen = senSlope(p.map((q) => ({ x: (q.tMs - t0) / MS_PER_YEAR, y: q.value })));
  if (!sen) return empty;
  const direction: TrendDirection = mk.pValue < alpha ? (mk.s > 0 ? "rising" : "falling") : "no-trend";
  const last = p[p.length - 1].tMs;
  return {
    direction,
    n: p.length,
    slopePerYear: sen.slope,
    line: { fromMs: t0, toMs: last, fromValue: sen.intercept, toValue: sen.intercept + sen.slope * ((last - t0) / MS_PER_YEAR) },
    pValue: mk.pValue,
    s: mk.s,
    tau: mk.tau,
    fromMs: t0,
    toMs: last,
  };
}

/** "+12.5 µS/cm a year" / "−3.1 µS/cm a year"; "—" when null. */
export function formatSlope(slopePerYear: number | null, unit = "µS/cm"): string {
  if (slopePerYear === null || !Number.isFinite(slopePerYear)) return "—";
  const abs = Math.abs(slopePerYear);
  const digits = abs >= 100 ? 0 : abs >= 10 ? 1 : 2;
  const sign = slopePerYear > 0 ? "+" : slopePerYear < 0 ? "−" : "";
  return `${sign}${abs.toLocaleString("en-GB", { maximumFractionDigits: digits, minimumFractionDigits: digits })} ${unit} a year`;
}

/** "p = 0.003", "p < 0.001". */
export function formatPValue(p: number | null): string {
  if (p === null) return "—";
  if (p < 0.001) return "p < 0.001";
  return `p = ${p.toFixed(3)}`;
}
