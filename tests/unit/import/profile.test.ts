import { describe, expect, it } from "vitest";
import { importProfileSchema, type ImportProfile } from "#app/lib/import/profile.ts";

function valid(): ImportProfile {
  return {
    delimiter: ";",
    decimalMark: ",",
    headerRow: 5,
    dataStartRow: 6,
    timestamp: { kind: "split", dateColumn: 0, timeColumn: 1, order: "dmy" },
    utcOffsetMinutes: 60,
    missingValues: ["", "NaN", "-9999", "ERR", "---"],
    columns: [
      { index: 0, header: "Date", parameter: "date", unit: null },
      { index: 1, header: "Time", parameter: "time", unit: null },
      { index: 2, header: "EC[uS/cm]", parameter: "conductivity", unit: "µS/cm" },
      { index: 3, header: "Temp °F", parameter: "temperature", unit: "°F" },
      { index: 4, header: "pH", parameter: "ph", unit: null },
      { index: 5, header: "Level", parameter: "depth", unit: "m" },
      { index: 6, header: "Batt (V)", parameter: "battery", unit: "V" },
      { index: 7, header: "Notes", parameter: "ignore", unit: null },
    ],
  };
}

function messages(profile: unknown) {
  const result = importProfileSchema.safeParse(profile);
  return result.success ? [] : result.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`);
}

describe("importProfileSchema", () => {
  it("accepts a complete profile", () => {
    expect(messages(valid())).toEqual([]);
  });

  it("accepts unit spellings the water module understands ('uS/cm', 'degC')", () => {
    const p = valid();
    p.columns[2].unit = "uS/cm";
    p.columns[3].unit = "degC";
    expect(messages(p)).toEqual([]);
  });

  it("needs a conductivity or specific-conductance column", () => {
    const p = valid();
    p.columns[2].parameter = "ignore";
    expect(messages(p)).toEqual(["columns: Choose the column that holds conductivity or specific conductance"]);
    p.columns[2].parameter = "specific-conductance";
    expect(messages(p)).toEqual([]);
  });

  it("reads the time one way only", () => {
    const p = valid();
    p.columns[7].parameter = "timestamp";
    expect(messages(p)).toEqual([
      'columns.7.parameter: Column 8 ("Notes") is marked as date and time, but the timestamp is read from columns 1 and 2: the time can be read only one way',
    ]);
  });

  it("the timestamp's columns must be marked as such", () => {
    const p = valid();
    p.timestamp = { kind: "single", column: 0, order: "iso" };
    expect(messages(p)).toEqual([
      'columns.0.parameter: Column 1 ("Date") is used for the date and time and must be marked as such',
      'columns.1.parameter: Column 2 ("Time") is marked as time, but the timestamp is read from column 1: the time can be read only one way',
    ]);
  });

  it("column indexes within range and each listed once", () => {
    const p = valid();
    p.timestamp = { kind: "split", dateColumn: 0, timeColumn: 9, order: "dmy" };
    expect(messages(p)).toContain("timestamp.timeColumn: The timestamp refers to column 10, but the file has 8 columns");
    const q = valid();
    q.columns[7].index = 3;
    expect(messages(q)).toContain("columns.7.index: Columns must be numbered 0 to 7, each once (found 3 at position 7)");
  });

  it("each measured column has a unit the importer reads", () => {
    const p = valid();
    p.columns[3].unit = null;
    p.columns[5].unit = "fathoms";
    p.columns[4].unit = "mg/L";
    expect(messages(p)).toEqual([
      'columns.3.unit: Choose the unit of Column 4 ("Temp °F") (°C, °F, K)',
      'columns.4.unit: Column 5 ("pH"): pH has no unit, so leave the unit empty (found "mg/L")',
      'columns.5.unit: Column 6 ("Level"): the unit "fathoms" is not one Ripplemark reads (m, cm, mm, ft)',
    ]);
  });

  it("one column per measured parameter", () => {
    const p = valid();
    p.columns[7] = { index: 7, header: "EC2", parameter: "conductivity", unit: "µS/cm" };
    expect(messages(p)).toEqual([
      'columns.7.parameter: Only one column can hold conductivity (also Column 3 ("EC[uS/cm]"))',
    ]);
  });

  it("delimiter and decimal mark differ; data start after the header; offsets are real", () => {
    const p = { ...valid(), delimiter: ",", headerRow: 6, utcOffsetMinutes: 900 };
    expect(messages(p)).toEqual([
      "utcOffsetMinutes: UTC offsets run from −12:00 to +14:00",
      "decimalMark: The decimal mark cannot be the same character as the delimiter",
      "dataStartRow: Data must start after the header line",
    ]);
  });

  it("rejects unknown delimiters and parameters", () => {
    expect(messages({ ...valid(), delimiter: ":" })).toEqual([
      "delimiter: The delimiter must be a comma, semicolon, tab or pipe",
    ]);
    const p = valid() as unknown as { columns: { parameter: string }[] };
    p.columns[7].parameter = "turbidity";
    expect(messages(p)[0]).toMatch(/^columns\.7\.parameter: /);
  });
});
