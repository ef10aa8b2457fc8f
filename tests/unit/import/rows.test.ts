import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import {
  compileProfile,
  createDuplicateChecker,
  createParsedRow,
  csvSafeCell,
  isBlankRow,
  toCsvLine,
  type ParsedRow,
} from "#app/lib/import/rows.ts";
import { parseDecimal } from "#app/lib/import/numbers.ts";
import { daysFromCivil } from "#app/lib/import/timestamps.ts";
import { GENERATED_START_MS, GENERATED_STEP_MS, generatedRows } from "#tests/fixtures/logger-files/generate.ts";
import { importFixture, iso, NOW } from "./support.ts";

/** A three-column profile: timestamp, conductivity (µS/cm), temperature (°C), overridable. */
function profileOf(overrides: Partial<ImportProfile> = {}): ImportProfile {
  return {
    delimiter: ",",
    decimalMark: ".",
    headerRow: 0,
    dataStartRow: 1,
    timestamp: { kind: "single", column: 0, order: "iso" },
    utcOffsetMinutes: 0,
    missingValues: ["", "NaN", "-9999", "ERR", "---"],
    columns: [
      { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
      { index: 1, header: "Cond", parameter: "conductivity", unit: "µS/cm" },
      { index: 2, header: "Temp", parameter: "temperature", unit: "°C" },
    ],
    ...overrides,
  };
}

/** Parse one row; returns the row values or the error reasons. */
function parse(profile: ImportProfile, fields: string[], options = { now: NOW }) {
  const parser = compileProfile(profile, options);
  const out = createParsedRow();
  const ok = parser.parseRow(fields, 7, out);
  return { ok, out: { ...out }, errors: parser.lastErrors.map((e) => ({ ...e })), reasons: parser.lastErrors.map((e) => e.reason) };
}

function timeOf(profile: ImportProfile, value: string) {
  const r = parse(profile, [value, "500", "10"]);
  return r.ok ? iso(r.out.timeMs) : r.reasons.join("; ");
}

function values(rows: (ParsedRow & { row: number })[]) {
  return rows.map((r) => ({
    row: r.row,
    time: iso(r.timeMs),
    cond: r.conductivityUsPerCm,
    spc: r.specificConductanceUsPerCm,
    temp: r.temperatureC,
    ph: r.ph,
    depth: r.depthM,
    batt: r.batteryV,
  }));
}

describe("fixtures through sniff → answers → compiled profile", () => {
  it("comma + ISO with Z: mS/cm × 1000 = µS/cm", () => {
    const r = importFixture("comma-iso-utc.csv");
    expect(r.rejected).toBe(0);
    expect(r.accepted).toBe(5);
    expect(values(r.rows)[0]).toEqual({
      row: 2, // header is line 1
      time: "2025-03-01T10:00:00.000Z", // Z: UTC as written
      cond: 1234, // 1.234 mS/cm × 1000
      spc: Number.NaN,
      temp: 12.5,
      ph: 7.42,
      depth: 1.85,
      batt: 12.6,
    });
    expect(r.rows.map((x) => x.conductivityUsPerCm)).toEqual([1234, 1241, 1250, 1262, 1270]);
    expect(r.rows.map((x) => iso(x.timeMs).slice(11, 16))).toEqual(["10:00", "10:15", "10:30", "10:45", "11:00"]);
  });

  it("semicolon + decimal comma + day-first at UTC+1", () => {
    const r = importFixture("semicolon-decimal-comma-dmy.csv", { utcOffsetMinutes: 60, units: { 3: "m" } });
    expect(r.rejected).toBe(0);
    expect(values(r.rows)).toEqual([
      // 13.03.2025 08:00 at UTC+1 is 07:00 UTC (UTC = local − offset); line 7 of the file.
      { row: 7, time: "2025-03-13T07:00:00.000Z", cond: 412.5, spc: NaN, temp: 6.8, ph: NaN, depth: 0.42, batt: NaN },
      { row: 8, time: "2025-03-13T07:30:00.000Z", cond: 415, spc: NaN, temp: 6.9, ph: NaN, depth: 0.42, batt: NaN },
      { row: 9, time: "2025-03-13T08:00:00.000Z", cond: 418.25, spc: NaN, temp: 7.1, ph: NaN, depth: 0.43, batt: NaN },
      // 1.204,5: a dot before a group of three digits and then the decimal comma: 1204.5.
      { row: 10, time: "2025-03-13T08:30:00.000Z", cond: 1204.5, spc: NaN, temp: 7.4, ph: NaN, depth: 0.44, batt: NaN },
    ]);
  });

  it("tab-separated split date/time, °F → °C and mS/cm → µS/cm", () => {
    const r = importFixture("tab-split-fahrenheit-ms.tsv", { utcOffsetMinutes: 60 });
    expect(r.rejected).toBe(0);
    const v = values(r.rows);
    expect(v.map((x) => x.time)).toEqual([
      "2025-03-01T09:00:00.000Z", // 2025-03-01 + 10:00:00 local at UTC+1
      "2025-03-01T09:10:00.000Z",
      "2025-03-01T09:20:00.000Z",
      "2025-03-01T09:30:00.000Z",
    ]);
    expect(v[0].cond).toBe(1234); // 1.234 mS/cm = 1234 µS/cm
    expect(v[0].temp).toBe(15); // 59 °F: (59 − 32) × 5/9 = 15 °C
    expect(v[1].cond).toBe(850); // 0.850 mS/cm
    expect(v[1].temp).toBe(10); // 50 °F: 18 × 5/9 = 10 °C
    expect(v[2].cond).toBe(2500); // 2.5 mS/cm
    expect(v[2].temp).toBe(20); // 68 °F: 36 × 5/9 = 20 °C
    expect(v[3].cond).toBeCloseTo(45.6, 10); // 0.0456 mS/cm = 45.6 µS/cm
    expect(v[3].temp).toBe(0); // 32 °F is the freezing point, 0 °C
    expect(v[0].batt).toBe(3.61);
  });

  it("epoch seconds: 1740823200 s is 2025-03-01T10:00:00Z", () => {
    const r = importFixture("epoch-seconds.csv");
    expect(r.accepted).toBe(4);
    // 1740823200 / 86400 = 20148 days + 36000 s: 20148 days after 1970-01-01 is 2025-03-01, 36000 s is 10:00.
    expect(iso(r.rows[0].timeMs)).toBe("2025-03-01T10:00:00.000Z");
    expect(iso(r.rows[1].timeMs)).toBe("2025-03-01T10:15:00.000Z"); // +900 s
    expect(r.rows[0].specificConductanceUsPerCm).toBe(845.2);
    expect(r.rows[0].conductivityUsPerCm).toBeNaN(); // the file has only specific conductance
    // Line 4 has an empty specific conductance but a temperature: accepted with NaN.
    expect(r.rows[2]).toMatchObject({ row: 4, temperatureC: 11.2 });
    expect(r.rows[2].specificConductanceUsPerCm).toBeNaN();
  });

  it("CRLF + BOM, header in UTC", () => {
    const r = importFixture("crlf-bom.csv");
    expect(r.accepted).toBe(3);
    expect(values(r.rows)[0]).toMatchObject({ row: 2, time: "2025-03-02T00:00:00.000Z", cond: 523, temp: 4.5 });
  });

  it("trailing delimiters: the empty extra field is ignored", () => {
    const r = importFixture("trailing-delimiters.csv");
    expect(r.rejected).toBe(0);
    expect(r.rows.map((x) => x.conductivityUsPerCm)).toEqual([512, 515, 519]);
  });

  it("month-first with AM/PM at UTC−5", () => {
    const r = importFixture("month-first-proving.csv", { utcOffsetMinutes: -300 });
    expect(r.rejected).toBe(0);
    expect(values(r.rows).map((x) => [x.row, x.time])).toEqual([
      [3, "2025-03-13T04:00:00.000Z"], // 03/12 11:00 PM = 23:00 local; + 5 h = 04:00 UTC next day
      [4, "2025-03-13T04:30:00.000Z"],
      [5, "2025-03-13T05:00:00.000Z"], // 03/13 12:00 AM is midnight
      [6, "2025-03-13T05:30:00.000Z"],
    ]);
  });

  it("units line: data start on line 3, offsets in the values", () => {
    const r = importFixture("units-row.csv");
    expect(values(r.rows)[0]).toMatchObject({
      row: 3,
      time: "2025-03-04T08:00:00.000Z", // 09:00+01:00 is 08:00 UTC
      cond: 512, // 0.512 mS/cm
      temp: 8.5,
      depth: 2.1,
    });
  });

  it("ambiguous dates read both ways once the person chooses", () => {
    const dayFirst = importFixture("ambiguous-dates.csv", { dateOrder: "dmy", utcOffsetMinutes: 0 });
    const monthFirst = importFixture("ambiguous-dates.csv", { dateOrder: "mdy", utcOffsetMinutes: 0 });
    expect(iso(dayFirst.rows[0].timeMs)).toBe("2025-04-03T09:00:00.000Z"); // 03/04 = 3 April
    expect(iso(monthFirst.rows[0].timeMs)).toBe("2025-03-04T09:00:00.000Z"); // 03/04 = March 4
  });

  it("non-numeric values", () => {
    const r = importFixture("non-numeric-values.csv");
    expect(r.rows.map((x) => [x.row, x.conductivityUsPerCm])).toEqual([
      [2, 610],
      [7, 1234.5], // "1,234.5": comma groups three digits before the decimal point
      [9, 615],
    ]);
    expect(r.errors.map((e) => [e.row, e.column, e.reason])).toEqual([
      [3, "Cond (µS/cm)", "'abc' is not a number"],
      [4, "Temperature (C)", "'warm' is not a number"],
      [5, "Cond (µS/cm)", "'6.1.3' is not a number"],
      [6, "Cond (µS/cm)", "'1,234' is ambiguous: the comma could be a decimal mark or a thousands separator (this profile's decimal mark is '.')"],
      [8, "Cond (µS/cm)", "'12,5' uses ',' but this profile's decimal mark is '.'"],
    ]);
  });

  it("sentinel values are missing, not errors", () => {
    const r = importFixture("sentinel-values.csv");
    const v = values(r.rows);
    expect(v.map((x) => x.row)).toEqual([2, 3, 4, 5, 6, 8]);
    expect(v.find((x) => x.row === 3)?.cond).toBeNaN(); // -9999
    expect(v.find((x) => x.row === 4)?.cond).toBeNaN(); // NaN
    expect(v.find((x) => x.row === 5)?.temp).toBeNaN(); // ERR
    expect(v.find((x) => x.row === 6)?.cond).toBeNaN(); // empty
    expect(v.find((x) => x.row === 8)).toMatchObject({ cond: 708 }); // "---" temperature
    expect(v.find((x) => x.row === 8)?.batt).toBeNaN(); // -9999.0 equals the sentinel -9999 as a number
    expect(r.errors.map((e) => [e.row, e.column, e.reason])).toEqual([
      [7, "(row)", "no measurement in this row"], // -9999, nan, empty
      [9, "Timestamp", "timestamp is missing"],
    ]);
  });

  it("impossible values", () => {
    const r = importFixture("impossible-values.csv");
    expect(r.rows.map((x) => x.row)).toEqual([2, 8]);
    expect(r.errors.map((e) => [e.row, e.column, e.reason])).toEqual([
      [3, "Cond (µS/cm)", "conductivity cannot be negative"],
      [4, "Temperature (C)", "150 °C is outside the plausible range −5 to 60 °C for water"],
      [5, "pH", "pH 15.2 is outside the range 0 to 14"],
      [6, "Cond (µS/cm)", "250,000 µS/cm is outside the plausible range 0 to 200,000 µS/cm"],
      [7, "Depth (m)", "2500 m is outside the plausible range −5 to 2000 m"],
    ]);
  });

  it("rows with too many or too few fields", () => {
    const r = importFixture("ragged-rows.csv");
    expect(r.rows.map((x) => x.row)).toEqual([2, 5, 6]); // line 5 has one trailing empty field: fine
    expect(r.errors.map((e) => [e.row, e.column, e.reason])).toEqual([
      [3, "(row)", "expected 3 fields, found 6"],
      [4, "(row)", "expected 3 fields, found 2"],
    ]);
  });

  it("duplicate timestamps keep the first row", () => {
    const r = importFixture("duplicate-timestamps.csv");
    expect(r.accepted).toBe(4);
    expect(r.duplicates).toBe(2);
    expect(r.errors.map((e) => [e.row, e.reason])).toEqual([
      [4, "same timestamp as row 3; the first one is kept"], // repeated at once
      [6, "same timestamp as row 2; the first one is kept"], // repeated out of order
    ]);
  });

  it("timestamps in the future (year 2099)", () => {
    const r = importFixture("future-timestamps.csv");
    expect(r.rows.map((x) => x.row)).toEqual([2, 5]);
    expect(r.errors).toEqual([
      { row: 3, column: "Timestamp", value: "2099-03-11T09:10:00Z", reason: "timestamp is in the future" },
      { row: 4, column: "Timestamp", value: "2099-03-11T09:20:00Z", reason: "timestamp is in the future" },
    ]);
  });

  it("formula text is an ordinary 'not a number' and is neutralised for reports", () => {
    const r = importFixture("formula-injection.csv");
    expect(r.rows.map((x) => x.row)).toEqual([2, 7]);
    expect(r.errors.map((e) => e.value)).toEqual([
      '=HYPERLINK("http://example.invalid","x")', // papaparse undid the CSV quote doubling
      "@SUM(1+1)",
      "+1+1",
      "-2+3",
    ]);
    expect(r.errors.every((e) => e.reason.endsWith("is not a number"))).toBe(true);
    expect(r.errors.map((e) => csvSafeCell(e.value))).toEqual([
      `'=HYPERLINK("http://example.invalid","x")`,
      "'@SUM(1+1)",
      "'+1+1",
      "'-2+3",
    ]);
  });

  it("invalid dates and times, and dates before 1980", () => {
    const r = importFixture("invalid-dates.csv", { utcOffsetMinutes: 0 });
    expect(values(r.rows).map((x) => [x.row, x.time])).toEqual([
      [2, "2025-02-14T10:00:00.000Z"],
      [5, "2024-02-29T10:00:00.000Z"], // 2024 is a leap year (divisible by 4, not by 100)
    ]);
    expect(r.errors.map((e) => [e.row, e.column, e.reason])).toEqual([
      [3, "Date", "'31/02/2025' is not a valid date: February 2025 has 28 days"],
      [4, "Time", "'25:00' is not a valid time: there is no hour 25"],
      [6, "Date", "timestamp is before 1980: was the logger clock set?"],
      [7, "Time", "'10:61' is not a valid time: there is no minute 61"],
    ]);
  });
});

describe("timestamps", () => {
  it("a local-standard-time value at UTC+1 (offset +60) is one hour earlier in UTC", () => {
    // local = UTC + offset, so UTC = 12:00 − 1 h = 11:00.
    expect(timeOf(profileOf({ utcOffsetMinutes: 60 }), "2025-03-01 12:00")).toBe("2025-03-01T11:00:00.000Z");
    expect(timeOf(profileOf({ utcOffsetMinutes: -300 }), "2025-03-01 12:00")).toBe("2025-03-01T17:00:00.000Z");
  });

  it("ISO 8601 values with Z or an offset ignore utcOffsetMinutes", () => {
    const p = profileOf({ utcOffsetMinutes: 60 });
    expect(timeOf(p, "2025-03-01T12:00Z")).toBe("2025-03-01T12:00:00.000Z");
    expect(timeOf(p, "2025-03-01T12:00:00+02:00")).toBe("2025-03-01T10:00:00.000Z");
    expect(timeOf(p, "2025-03-01T12:00:00.250-0130")).toBe("2025-03-01T13:30:00.250Z"); // basic-format offset
    expect(timeOf(p, "2025-03-01T12:00:00,5+01")).toBe("2025-03-01T11:00:00.500Z"); // comma fraction, hour-only offset
    expect(timeOf(p, "2025-03-01T12:00:30")).toBe("2025-03-01T11:00:30.000Z"); // no offset: profile's +60
  });

  it("each date order with /, . and - separators", () => {
    const at = (order: "dmy" | "mdy" | "ymd", value: string) =>
      timeOf(profileOf({ timestamp: { kind: "single", column: 0, order } }), value);
    expect(at("dmy", "01/03/2025 08:15")).toBe("2025-03-01T08:15:00.000Z");
    expect(at("dmy", "1.3.2025 08:15:30")).toBe("2025-03-01T08:15:30.000Z");
    expect(at("dmy", "01-03-2025 08:15")).toBe("2025-03-01T08:15:00.000Z");
    expect(at("dmy", "01/03/25 08:15")).toBe("2025-03-01T08:15:00.000Z"); // two-digit year: 20yy
    expect(at("mdy", "03/01/2025 8:15")).toBe("2025-03-01T08:15:00.000Z");
    expect(at("mdy", "03.01.2025 08:15")).toBe("2025-03-01T08:15:00.000Z");
    expect(at("ymd", "2025/03/01 08:15")).toBe("2025-03-01T08:15:00.000Z");
    expect(at("ymd", "2025.3.1 08:15")).toBe("2025-03-01T08:15:00.000Z");
  });

  it("12-hour clock with AM/PM", () => {
    const at = (value: string) => timeOf(profileOf({ timestamp: { kind: "single", column: 0, order: "mdy" } }), value);
    expect(at("3/1/2025 12:00 AM")).toBe("2025-03-01T00:00:00.000Z"); // midnight
    expect(at("3/1/2025 12:30 PM")).toBe("2025-03-01T12:30:00.000Z"); // just after noon
    expect(at("3/1/2025 1:05pm")).toBe("2025-03-01T13:05:00.000Z");
    expect(at("3/1/2025 11:59:59 p.m.")).toBe("2025-03-01T23:59:59.000Z");
    expect(at("3/1/2025 13:00 PM")).toBe("'3/1/2025 13:00 PM' is not a valid time: hour 13 with AM/PM");
  });

  it("invalid dates and times are rejected with the reason", () => {
    const dmy = profileOf({ timestamp: { kind: "single", column: 0, order: "dmy" } });
    expect(timeOf(dmy, "31/02/2025 10:00")).toBe("'31/02/2025 10:00' is not a valid date: February 2025 has 28 days");
    expect(timeOf(dmy, "29/02/2023 10:00")).toBe("'29/02/2023 10:00' is not a valid date: February 2023 has 28 days");
    expect(timeOf(dmy, "01/13/2025 10:00")).toBe("'01/13/2025 10:00' is not a valid date: there is no month 13");
    expect(timeOf(dmy, "01/03/2025 25:00")).toBe("'01/03/2025 25:00' is not a valid time: there is no hour 25");
    expect(timeOf(dmy, "01/03/2025")).toBe("'01/03/2025' has a date but no time of day");
    expect(timeOf(profileOf(), "2025-03-01T10:00+25:00")).toBe("'2025-03-01T10:00+25:00' has an unreadable time zone: use Z or ±hh:mm");
    expect(timeOf(profileOf(), "20250301T1000")).toBe("'20250301T1000' is not a date in the form YYYY-MM-DD");
    expect(timeOf(profileOf(), "yesterday")).toBe("'yesterday' is not a date in the form YYYY-MM-DD");
  });

  it("2000-02-29 exists (divisible by 400), 2100-02-29 does not (by 100)", () => {
    const p = profileOf({ timestamp: { kind: "single", column: 0, order: "iso" } });
    expect(timeOf(p, "2000-02-29 00:00")).toBe("2000-02-29T00:00:00.000Z");
    expect(timeOf(p, "2100-02-29 00:00")).toBe("'2100-02-29 00:00' is not a valid date: February 2100 has 28 days");
  });

  it("epoch milliseconds", () => {
    const p = profileOf({
      timestamp: { kind: "epoch", column: 0, unit: "ms" },
      columns: [
        { index: 0, header: "ms", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond", parameter: "conductivity", unit: "µS/cm" },
        { index: 2, header: "Temp", parameter: "temperature", unit: "°C" },
      ],
    });
    expect(timeOf(p, "1740823200123")).toBe("2025-03-01T10:00:00.123Z");
    expect(timeOf(p, "17408x")).toBe("'17408x' is not a Unix time in milliseconds");
  });

  it("the future check allows 10 minutes of clock drift by default", () => {
    const p = profileOf();
    const now = Date.UTC(2025, 5, 1, 12, 0);
    const at = (value: string, options: { now: number; futureToleranceMs?: number }) => parse(p, [value, "500", "10"], options);
    expect(at("2025-06-01T12:09:00Z", { now }).ok).toBe(true);
    expect(at("2025-06-01T12:11:00Z", { now }).reasons).toEqual(["timestamp is in the future"]);
    expect(at("2025-06-01T12:01:00Z", { now, futureToleranceMs: 0 }).reasons).toEqual(["timestamp is in the future"]);
  });

  it("1980-01-01T00:00:00Z is the earliest accepted instant", () => {
    expect(parse(profileOf(), ["1980-01-01T00:00:00Z", "500", "10"]).ok).toBe(true);
    expect(parse(profileOf(), ["1979-12-31T23:59:59Z", "500", "10"]).reasons).toEqual([
      "timestamp is before 1980: was the logger clock set?",
    ]);
  });

  it("a sentinel in the timestamp column means the timestamp is missing", () => {
    expect(parse(profileOf(), ["NaN", "500", "10"]).reasons).toEqual(["timestamp is missing"]);
    expect(parse(profileOf(), ["  ", "500", "10"]).reasons).toEqual(["timestamp is missing"]);
  });

  it("daysFromCivil agrees with Date.UTC on every day from 1970 to 2100", () => {
    const wrong: string[] = [];
    for (let ms = 0; ms < Date.UTC(2100, 11, 31); ms += 86_400_000) {
      const d = new Date(ms);
      if (daysFromCivil(d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate()) !== ms / 86_400_000) wrong.push(d.toISOString());
    }
    expect(wrong).toEqual([]);
  });
});

describe("numbers", () => {
  const comma = profileOf({ delimiter: ";", decimalMark: "," });
  const cond = (profile: ImportProfile, value: string) => {
    const r = parse(profile, ["2025-03-01T10:00:00Z", value, "10"]);
    return r.ok ? r.out.conductivityUsPerCm : r.reasons[0];
  };

  it("decimal comma", () => {
    expect(cond(comma, "12,5")).toBe(12.5);
    expect(cond(comma, "1.234,5")).toBe(1234.5); // dot groups three digits before the comma: unambiguous
    expect(parseDecimal("1.234.567", ",")).toBe(1234567); // two separators cannot both be decimal marks
    expect(parseDecimal("1,234,567", ".")).toBe(1234567);
    expect(cond(comma, ",5")).toBe(0.5);
    expect(cond(comma, "1.234")).toBe(
      "'1.234' is ambiguous: the point could be a decimal mark or a thousands separator (this profile's decimal mark is ',')",
    );
    expect(cond(comma, "12.5")).toBe("'12.5' uses '.' but this profile's decimal mark is ','");
    expect(cond(comma, "1.23,5")).toBe("'1.23,5' uses '.' but this profile's decimal mark is ','"); // groups must be 3 digits
  });

  it("parseDecimal equals Number() on 100,000 pseudo-random decimals, with either mark", () => {
    // Oracle: JavaScript's own correctly rounded string-to-number conversion.
    let seed = 20250301;
    const random = () => {
      // mulberry32 (public-domain PRNG), seeded so a failure can be replayed
      seed = (seed + 0x6d2b79f5) | 0;
      let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
      t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const mismatches: string[] = [];
    for (let i = 0; i < 100_000; i++) {
      const digits = Math.floor(random() * 9);
      const text = ((random() - 0.3) * 10 ** Math.floor(random() * 7)).toFixed(digits);
      if (parseDecimal(text, ".") !== Number(text)) mismatches.push(text);
      if (parseDecimal(text.replace(".", ","), ",") !== Number(text)) mismatches.push(`${text} (comma)`);
    }
    expect(mismatches).toEqual([]);
    // 16+ significant digits leave the fast path and still match.
    expect(parseDecimal("0.12345678901234567", ".")).toBe(0.12345678901234567);
  });

  it("decimal point, exponent, whitespace and quotes", () => {
    const p = profileOf();
    expect(cond(p, "412.5")).toBe(412.5);
    expect(cond(p, " 412.5 ")).toBe(412.5);
    expect(cond(p, ' "412.5" ')).toBe(412.5); // a quoted cell after a space, left quoted by the splitter
    expect(cond(p, "4.125E2")).toBe(412.5);
    expect(cond(p, "+412")).toBe(412);
    expect(cond(p, "0x1F")).toBe("'0x1F' is not a number");
    expect(cond(p, "Infinity")).toBe("'Infinity' is not a number");
    expect(cond(p, "1 234")).toBe("'1 234' is not a number");
    expect(cond(p, "-")).toBe("'-' is not a number");
  });

  it("long values are shortened in the reason but kept whole in the value", () => {
    const long = "x".repeat(60);
    const r = parse(profileOf(), ["2025-03-01T10:00:00Z", long, "10"]);
    expect(r.errors[0].value).toBe(long);
    expect(r.errors[0].reason).toBe(`'${"x".repeat(37)}…' is not a number`);
  });

  it("sentinels match after trimming, case-insensitively, and numerically", () => {
    const p = profileOf({ missingValues: ["n/a", "-9999"] });
    const r = (v: string) => parse(p, ["2025-03-01T10:00:00Z", v, "10"]);
    for (const v of ["N/A", " n/a ", "-9999", "-9999.00"]) {
      expect(r(v).ok).toBe(true);
      expect(r(v).out.conductivityUsPerCm).toBeNaN();
    }
    expect(r("ERR").reasons).toEqual(["'ERR' is not a number"]); // not a sentinel in this profile
  });
});

describe("units and ranges", () => {
  const withUnits = (condUnit: string, tempUnit: string, fields: [string, string]) => {
    const p = profileOf({
      columns: [
        { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond", parameter: "conductivity", unit: condUnit },
        { index: 2, header: "Temp", parameter: "temperature", unit: tempUnit },
      ],
    });
    return parse(p, ["2025-03-01T10:00:00Z", ...fields]);
  };

  it("conductivity units to µS/cm (1 S/m = 0.01 S/cm = 10 000 µS/cm)", () => {
    expect(withUnits("S/m", "°C", ["0.05", "10"]).out.conductivityUsPerCm).toBe(500); // 0.05 × 10 000
    expect(withUnits("mS/m", "°C", ["50", "10"]).out.conductivityUsPerCm).toBe(500); // 50 × 10
    expect(withUnits("µS/m", "°C", ["50000", "10"]).out.conductivityUsPerCm).toBe(500); // 50 000 ÷ 100
    expect(withUnits("uS/cm", "°C", ["500", "10"]).out.conductivityUsPerCm).toBe(500); // "u" for micro
  });

  it("temperature units to °C", () => {
    expect(withUnits("µS/cm", "K", ["500", "288.15"]).out.temperatureC).toBeCloseTo(15, 10); // 288.15 − 273.15
    expect(withUnits("µS/cm", "°F", ["500", "41"]).out.temperatureC).toBe(5); // (41 − 32) × 5/9
    // 302 °F = 150 °C: the reason shows both.
    expect(withUnits("µS/cm", "°F", ["500", "302"]).reasons).toEqual([
      "302 °F (150 °C) is outside the plausible range −5 to 60 °C for water",
    ]);
  });

  it("depth and battery units", () => {
    const p = profileOf({
      columns: [
        { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond", parameter: "conductivity", unit: "µS/cm" },
        { index: 2, header: "Level", parameter: "depth", unit: "ft" },
        { index: 3, header: "Batt", parameter: "battery", unit: "mV" },
      ],
    });
    const r = parse(p, ["2025-03-01T10:00:00Z", "500", "10", "3600"]);
    expect(r.out.depthM).toBeCloseTo(3.048, 12); // 10 ft × 0.3048 m/ft (international foot)
    expect(r.out.batteryV).toBe(3.6); // 3600 mV ÷ 1000
    const cm = profileOf({
      columns: [
        { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond", parameter: "conductivity", unit: "µS/cm" },
        { index: 2, header: "Depth", parameter: "depth", unit: "cm" },
      ],
    });
    expect(parse(cm, ["2025-03-01T10:00:00Z", "500", "150"]).out.depthM).toBe(1.5); // 150 cm ÷ 100
  });

  it("range limits are inclusive", () => {
    const t = (v: string) => withUnits("µS/cm", "°C", ["500", v]);
    expect(t("-5").ok).toBe(true);
    expect(t("60").ok).toBe(true);
    expect(t("60.1").reasons).toEqual(["60.1 °C is outside the plausible range −5 to 60 °C for water"]);
    expect(t("-5.5").reasons).toEqual(["−5.5 °C is outside the plausible range −5 to 60 °C for water"]);
    expect(withUnits("µS/cm", "°C", ["0", "10"]).ok).toBe(true);
    expect(withUnits("µS/cm", "°C", ["200000", "10"]).ok).toBe(true);
    // 250 mS/cm = 250 000 µS/cm: above the limit; the reason shows the file's unit too.
    expect(withUnits("mS/cm", "°C", ["250", "10"]).reasons).toEqual([
      "250 mS/cm (250,000 µS/cm) is outside the plausible range 0 to 200,000 µS/cm",
    ]);
  });
});

describe("row shape and parser state", () => {
  it("field counts: one trailing empty field is fine, anything else is reported", () => {
    const p = profileOf();
    expect(parse(p, ["2025-03-01T10:00:00Z", "500", "10", ""]).ok).toBe(true);
    expect(parse(p, ["2025-03-01T10:00:00Z", "500", "10", " "]).ok).toBe(true);
    expect(parse(p, ["2025-03-01T10:00:00Z", "500", "10", "", ""]).reasons).toEqual(["expected 3 fields, found 5"]);
    expect(parse(p, ["2025-03-01T10:00:00Z", "500", "10", "x"]).reasons).toEqual(["expected 3 fields, found 4"]);
    expect(parse(p, ["2025-03-01T10:00:00Z"]).errors[0]).toMatchObject({ row: 7, column: "(row)" });
  });

  it("collects every problem of a row", () => {
    const r = parse(profileOf(), ["2099-01-01T00:00:00Z", "abc", "150"]);
    expect(r.errors.map((e) => e.column)).toEqual(["Timestamp", "Cond", "Temp"]);
  });

  it("reuses `out` and lastErrors without leaking values between rows", () => {
    const parser = compileProfile(profileOf(), { now: NOW });
    const out = createParsedRow();
    expect(parser.parseRow(["2025-03-01T10:00:00Z", "500", "10"], 2, out)).toBe(true);
    expect(out.temperatureC).toBe(10);
    expect(parser.parseRow(["2025-03-01T10:10:00Z", "abc", "10"], 3, out)).toBe(false);
    expect(parser.lastErrors).toHaveLength(1);
    expect(parser.parseRow(["2025-03-01T10:20:00Z", "501", ""], 4, out)).toBe(true);
    expect(parser.lastErrors).toHaveLength(0); // cleared for the accepted row
    expect(out.temperatureC).toBeNaN(); // not the 10 from row 2
    expect(out.conductivityUsPerCm).toBe(501);
  });

  it("compileProfile refuses an invalid profile", () => {
    expect(() => compileProfile(profileOf({ decimalMark: "," }), { now: NOW })).toThrow(
      /decimal mark cannot be the same character as the delimiter/,
    );
  });

  it("isBlankRow", () => {
    expect(isBlankRow([""])).toBe(true);
    expect(isBlankRow(["", "  ", ""])).toBe(true);
    expect(isBlankRow(["", "1"])).toBe(false);
  });
});

describe("createDuplicateChecker", () => {
  it("finds repeats in order and out of order", () => {
    const check = createDuplicateChecker();
    expect(check.check(1000, 2)).toBe(0);
    expect(check.check(2000, 3)).toBe(0);
    expect(check.check(2000, 4)).toBe(3); // same as the row before
    expect(check.check(500, 5)).toBe(0); // earlier but new
    expect(check.check(500, 6)).toBe(5); // repeat of an out-of-order time
    expect(check.check(1000, 7)).toBe(2); // repeat far back
  });

  it("grows past its first buffer", () => {
    const check = createDuplicateChecker();
    for (let i = 0; i < 5000; i++) expect(check.check(i * 1000, i + 2)).toBe(0);
    expect(check.check(4321 * 1000, 9999)).toBe(4323);
  });
});

describe("csvSafeCell and toCsvLine", () => {
  it("neutralises cells a spreadsheet would run as formulas (OWASP CSV injection)", () => {
    expect(csvSafeCell('=HYPERLINK("http://example.invalid","x")')).toBe(`'=HYPERLINK("http://example.invalid","x")`);
    expect(csvSafeCell("+1+1")).toBe("'+1+1");
    expect(csvSafeCell("-2+3")).toBe("'-2+3");
    expect(csvSafeCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(csvSafeCell("\t=1")).toBe("'\t=1");
    expect(csvSafeCell("\r=1")).toBe("'\r=1");
    expect(csvSafeCell("  =1+1")).toBe("'  =1+1"); // leading spaces do not hide it
  });

  it("leaves ordinary text and plain numbers alone, and is idempotent", () => {
    expect(csvSafeCell("-12.5")).toBe("-12.5");
    expect(csvSafeCell("+3")).toBe("+3");
    expect(csvSafeCell("'abc' is not a number")).toBe("'abc' is not a number");
    expect(csvSafeCell("Cond (µS/cm)")).toBe("Cond (µS/cm)");
    expect(csvSafeCell("")).toBe("");
    expect(csvSafeCell(csvSafeCell("=1"))).toBe("'=1");
  });

  it("quotes per RFC 4180 and round-trips through papaparse", () => {
    const fields = ["plain", "a,b", 'say "hi"', "two\nlines", " padded ", "", "-2+3"];
    const line = toCsvLine(fields);
    expect(line).toBe('plain,"a,b","say ""hi""","two\nlines"," padded ",,-2+3');
    expect(Papa.parse<string[]>(line, { delimiter: "," }).data[0]).toEqual(fields);
  });
});

describe("throughput", () => {
  it("parses 200,000 generated rows (figure printed, not asserted)", () => {
    const rows = generatedRows(200_000);
    const profile: ImportProfile = {
      delimiter: ",",
      decimalMark: ".",
      headerRow: 0,
      dataStartRow: 1,
      timestamp: { kind: "single", column: 0, order: "iso" },
      utcOffsetMinutes: 0,
      missingValues: ["", "NaN", "-9999"],
      columns: [
        { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond (mS/cm)", parameter: "conductivity", unit: "mS/cm" },
        { index: 2, header: "Temperature (C)", parameter: "temperature", unit: "°C" },
        { index: 3, header: "pH", parameter: "ph", unit: null },
        { index: 4, header: "Depth (m)", parameter: "depth", unit: "m" },
        { index: 5, header: "Batt (V)", parameter: "battery", unit: "V" },
      ],
    };
    // 200,000 rows × 10 min ≈ 3.8 years from 2024-01-01: all before this "now".
    const parser = compileProfile(profile, { now: Date.UTC(2030, 0, 1) });
    const out = createParsedRow();
    let best = Number.POSITIVE_INFINITY;
    let accepted = 0;
    for (let pass = 0; pass < 3; pass++) {
      accepted = 0;
      const start = performance.now();
      for (let i = 0; i < rows.length; i++) if (parser.parseRow(rows[i], i + 2, out)) accepted++;
      best = Math.min(best, performance.now() - start);
    }
    console.log(`parseRow: ${rows.length} rows × 6 columns in ${best.toFixed(1)} ms = ${Math.round(rows.length / (best / 1000)).toLocaleString("en-GB")} rows/s (best of 3)`);
    expect(accepted).toBe(200_000);
    // The last row: i = 199,999 → 0.499 mS/cm = 499 µS/cm, 4 + 49/10 = 8.9 °C.
    expect(out.timeMs).toBe(GENERATED_START_MS + 199_999 * GENERATED_STEP_MS);
    expect(out.conductivityUsPerCm).toBe(499);
    expect(out.temperatureC).toBe(8.9);
  });
});
