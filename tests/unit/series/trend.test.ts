import { describe, expect, it } from "vitest";
import jstatModule from "jstat";
import { erfc, formatPValue, formatSlope, mannKendall, normalCdf, senSlope, weeklyTrend } from "#app/lib/series/trend.ts";

// The reference normal distribution comes from jStat (a general-purpose statistics package on npm),
// independent of the Numerical Recipes fit in trend.ts.
const { jStat } = jstatModule;
const jstatPhi = (z: number) => jStat.normal.cdf(z, 0, 1);

describe("normalCdf", () => {
  it("agrees with jStat's normal CDF to 2e-7 across the range", () => {
    for (let z = -6; z <= 6; z += 0.05) expect(Math.abs(normalCdf(z) - jstatPhi(z))).toBeLessThan(2e-7);
  });
  it("gives the two-sided 5 % point of the normal table", () => {
    // Φ(1.959964) = 0.975: the standard normal table's 97.5th percentile (from memory, common knowledge).
    expect(normalCdf(1.959964)).toBeCloseTo(0.975, 6);
    expect(normalCdf(0)).toBeCloseTo(0.5, 7);
  });
  it("erfc(0) = 1 and erfc(∞) → 0 (definition)", () => {
    expect(erfc(0)).toBeCloseTo(1, 7);
    expect(erfc(10)).toBeLessThan(1e-20);
    expect(erfc(-10)).toBeCloseTo(2, 7);
  });
});

describe("mannKendall", () => {
  it("matches a by-hand computation without ties", () => {
    // By hand, y = 10, 12, 11, 15, 14 (n = 5): of the 10 pairs, 8 rise and 2 fall (12→11, 15→14),
    // so S = 6; Var(S) = n(n−1)(2n+5)/18 = 5·4·15/18 = 16.667 (Helsel et al. 2020 ch. 8; Gilbert 1987
    // ch. 16); Z = (S − 1)/√Var = 5/4.0825 = 1.2247; tau = 6/10.
    const r = mannKendall([10, 12, 11, 15, 14]);
    expect(r.s).toBe(6);
    expect(r.varS).toBeCloseTo(300 / 18, 10);
    expect(r.z).toBeCloseTo(1.224745, 5);
    expect(r.tau).toBeCloseTo(0.6, 10);
    // p two-sided from jStat's normal CDF at the by-hand Z.
    expect(r.pValue).toBeCloseTo(2 * (1 - jstatPhi(5 / Math.sqrt(300 / 18))), 6);
    expect(r.pValue).toBeCloseTo(0.2207, 3);
  });

  it("matches a by-hand computation with tied groups", () => {
    // By hand, y = 5, 7, 7, 6, 9, 9, 9, 8 (n = 8). Row by row the signs sum to
    // +7 (5), +3 (first 7), +3 (second 7), +4 (6), −1, −1, −1 (the three 9s against 8) → S = 14.
    // Ties: one group of two 7s and one of three 9s: Σ t(t−1)(2t+5) = 2·1·9 + 3·2·11 = 84;
    // Var(S) = (8·7·21 − 84)/18 = 1092/18 = 60.667; Z = 13/√60.667 = 1.66905.
    const r = mannKendall([5, 7, 7, 6, 9, 9, 9, 8]);
    expect(r.s).toBe(14);
    expect(r.varS).toBeCloseTo(1092 / 18, 10);
    expect(r.z).toBeCloseTo(13 / Math.sqrt(1092 / 18), 10);
    expect(r.z).toBeCloseTo(1.66905, 4);
    expect(r.pValue).toBeCloseTo(2 * (1 - jstatPhi(1.669052)), 5);
    expect(r.tau).toBeCloseTo(0.5, 10);
  });

  it("applies the continuity correction towards zero for a falling series", () => {
    // By hand, y = 4, 3, 2, 1: all 6 pairs fall, S = −6; Var = 4·3·13/18 = 8.667; Z = (−6 + 1)/2.944 = −1.6984.
    const r = mannKendall([4, 3, 2, 1]);
    expect(r.s).toBe(-6);
    expect(r.z).toBeCloseTo(-5 / Math.sqrt(156 / 18), 10);
  });

  it("gives S = 0, Z = 0 and p = 1 for a constant series (every value tied)", () => {
    const r = mannKendall([3, 3, 3, 3, 3]);
    expect(r.s).toBe(0);
    expect(r.varS).toBe(0);
    expect(r.z).toBe(0);
    expect(r.pValue).toBe(1);
  });
});

describe("senSlope", () => {
  it("matches a by-hand median of pairwise slopes", () => {
    // By hand, x = 1…5, y = 10, 12, 11, 15, 14: the 10 slopes sorted are
    // −1, −1, 0.5, 0.667, 1, 1.5, 1.5, 1.667, 2, 4 → median (1 + 1.5)/2 = 1.25;
    // intercept median(y) − slope·median(x) = 12 − 1.25·3 = 8.25.
    const r = senSlope([10, 12, 11, 15, 14].map((y, i) => ({ x: i + 1, y })));
    expect(r?.slope).toBeCloseTo(1.25, 12);
    expect(r?.intercept).toBeCloseTo(8.25, 12);
  });

  it("is unmoved by one wild outlier (its purpose), unlike least squares", () => {
    // y = 2x + 1 with the last value replaced by 1000: 9 of the 10 points lie on the line, so more
    // than half of the 45 pairwise slopes are exactly 2 (36 pairs avoid the outlier).
    const pts = Array.from({ length: 10 }, (_, i) => ({ x: i, y: i === 9 ? 1000 : 2 * i + 1 }));
    expect(senSlope(pts)?.slope).toBe(2);
  });

  it("needs two distinct x", () => {
    expect(senSlope([{ x: 1, y: 2 }])).toBeNull();
    expect(senSlope([{ x: 1, y: 2 }, { x: 1, y: 3 }])).toBeNull();
  });
});

describe("weeklyTrend", () => {
  const WEEK = 7 * 86_400_000;
  const YEAR = 365.25 * 86_400_000;
  const t0 = Date.UTC(2024, 0, 1);

  it("calls a steady rise of 25 µS/cm a year rising, with that slope", () => {
    // Constructed: value = 400 + 25 · years since the first week, 104 weeks.
    const pts = Array.from({ length: 104 }, (_, i) => ({ tMs: t0 + i * WEEK, value: 400 + 25 * ((i * WEEK) / YEAR) }));
    const tr = weeklyTrend(pts);
    expect(tr.direction).toBe("rising");
    expect(tr.slopePerYear).toBeCloseTo(25, 9);
    expect(tr.s).toBe((104 * 103) / 2);
    expect(tr.pValue).toBeLessThan(0.001);
    expect(tr.line?.fromValue).toBeCloseTo(400, 6);
  });

  it("calls a fall falling and an alternating series no significant trend", () => {
    const fall = weeklyTrend(Array.from({ length: 60 }, (_, i) => ({ tMs: t0 + i * WEEK, value: 900 - i })));
    expect(fall.direction).toBe("falling");
    expect(fall.slopePerYear).toBeLessThan(0);
    // 500, 510, 500, 510, …: S = 30 over 1770 pairs, Var(S) = [60·59·125 − 2·30·29·65]/18 = 18300,
    // Z = 29/135.3 = 0.214 (by hand), far from significant.
    const flat = weeklyTrend(Array.from({ length: 60 }, (_, i) => ({ tMs: t0 + i * WEEK, value: i % 2 ? 510 : 500 })));
    expect(flat.s).toBe(30);
    expect(flat.direction).toBe("no-trend");
    expect(flat.pValue).toBeGreaterThan(0.8);
  });

  it("skips missing weeks and refuses to test too few", () => {
    const pts = Array.from({ length: 50 }, (_, i) => ({ tMs: t0 + i * WEEK, value: i < 20 ? null : 400 + i }));
    expect(weeklyTrend(pts).direction).toBe("too-few");
    expect(weeklyTrend(pts).n).toBe(30);
    expect(weeklyTrend(pts, { minPoints: 10 }).direction).toBe("rising");
  });

  it("formats the slope and p-value for people", () => {
    expect(formatSlope(12.345)).toBe("+12.3 µS/cm a year");
    expect(formatSlope(-3.14159)).toBe("−3.14 µS/cm a year");
    expect(formatSlope(null)).toBe("—");
    expect(formatPValue(0.0004)).toBe("p < 0.001");
    expect(formatPValue(0.0456)).toBe("p = 0.046");
  });
});
