import { describe, expect, it } from "vitest";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { sniffFile } from "#app/lib/import/sniff.ts";
import {
  buildProfile,
  formatUtcOffset,
  profileSignature,
  UTC_OFFSETS_MINUTES,
  valuesFromProfile,
  valuesFromSniff,
  type EditorValues,
} from "#app/routes/import-profiles/+shared/profile-form.ts";
import { columnsFromRecords, sampleRecords } from "#app/routes/import-profiles/+shared/sample.ts";

// The profile editor's form ↔ ImportProfile conversion: what the person must answer, and where
// each problem is shown.

const AMBIGUOUS = ["Date;Time;Cond (uS/cm)", "03/04/2025;10:00;412", "03/04/2025;10:15;415", "03/04/2025;10:30;418"].join("\n") + "\n";

function base(overrides: Partial<EditorValues> = {}): EditorValues {
  return {
    name: "Test",
    delimiter: "comma",
    decimalMark: "point",
    headerLine: 1,
    dataStartLine: 2,
    utcOffset: 60,
    timeFormat: "iso",
    ambiguousDates: false,
    missingValues: ["NaN"],
    columns: [
      { index: 0, header: "Time", parameter: "timestamp", unit: null },
      { index: 1, header: "EC", parameter: "conductivity", unit: "µS/cm" },
    ],
    ...overrides,
  };
}

const paths = (values: EditorValues) => {
  const built = buildProfile(values);
  return built.issues.map((i) => `${i.path.join(".")}: ${i.message}`);
};

describe("the editor's starting values from a sniffed sample", () => {
  it("leaves the date order open when the dates read either way", () => {
    const values = valuesFromSniff(sniffFile(AMBIGUOUS, { fileName: "x.csv" }));
    expect(values.ambiguousDates).toBe(true);
    expect(values.timeFormat).toBe("");
    expect(values.delimiter).toBe("semicolon");
    expect(values.columns.map((c) => c.parameter)).toEqual(["date", "time", "conductivity"]);
    // No time zone in the file: the offset starts at UTC+00:00 (the person may change it).
    expect(values.utcOffset).toBe(0);
  });

  it("then refuses ISO and accepts day-first, as a split date and time", () => {
    const values = valuesFromSniff(sniffFile(AMBIGUOUS, { fileName: "x.csv" }));
    expect(paths({ ...values, timeFormat: "iso" })).toEqual([
      "timeFormat: The dates in this file read either way: choose day-first or month-first",
    ]);
    const built = buildProfile({ ...values, timeFormat: "dmy" });
    expect(built.profile?.timestamp).toEqual({ kind: "split", dateColumn: 0, timeColumn: 1, order: "dmy" });
    expect(built.profile?.delimiter).toBe(";");
  });
});

describe("building a profile from the form", () => {
  it("turns 1-based lines into 0-based rows and always counts the empty cell as missing", () => {
    const built = buildProfile(base({ headerLine: 3, dataStartLine: 5, missingValues: [" -9999 ", "", "NaN", "NaN"] }));
    expect(built.profile).toMatchObject({ headerRow: 2, dataStartRow: 4, utcOffsetMinutes: 60, missingValues: ["", "-9999", "NaN"] });
  });

  it("reads Unix time from the one timestamp column", () => {
    expect(buildProfile(base({ timeFormat: "epoch-ms" })).profile?.timestamp).toEqual({ kind: "epoch", column: 0, unit: "ms" });
  });

  it("asks for one way to read the time", () => {
    const twoStamps = base({
      columns: [
        { index: 0, header: "Time", parameter: "timestamp", unit: null },
        { index: 1, header: "Logged", parameter: "timestamp", unit: null },
        { index: 2, header: "EC", parameter: "conductivity", unit: "µS/cm" },
      ],
    });
    expect(paths(twoStamps)).toEqual([
      "columns: Mark one column as “date and time”, or one as “date” and one as “time”",
    ]);
    const split = base({
      timeFormat: "epoch-s",
      columns: [
        { index: 0, header: "Date", parameter: "date", unit: null },
        { index: 1, header: "Time", parameter: "time", unit: null },
        { index: 2, header: "EC", parameter: "conductivity", unit: "µS/cm" },
      ],
    });
    expect(paths(split)).toEqual(["timeFormat: Unix time is one number: mark a single column as “date and time”"]);
  });

  it("puts the profile schema's problems on the fields that fix them", () => {
    expect(paths(base({ headerLine: 2, dataStartLine: 2 }))).toEqual(["dataStartLine: Data must start after the header line"]);
    const noUnit = paths(base({ columns: [base().columns[0], { index: 1, header: "EC", parameter: "conductivity", unit: null }] }));
    expect(noUnit).toHaveLength(1);
    expect(noUnit[0]).toMatch(/^columns\.1\.unit: Choose the unit of Column 2/);
    expect(paths(base({ delimiter: "comma", decimalMark: "comma" }))).toEqual([
      "decimalMark: The decimal mark cannot be the same character as the delimiter",
    ]);
  });

  it("gives back the same profile it was loaded from", () => {
    const profile: ImportProfile = {
      delimiter: "\t",
      decimalMark: ",",
      headerRow: 1,
      dataStartRow: 3,
      timestamp: { kind: "single", column: 0, order: "mdy" },
      utcOffsetMinutes: -300,
      missingValues: ["", "-9999"],
      columns: [
        { index: 0, header: "Stamp", parameter: "timestamp", unit: null },
        { index: 1, header: "SpC", parameter: "specific-conductance", unit: "mS/cm" },
        { index: 2, header: "pH", parameter: "ph", unit: null },
      ],
    };
    expect(buildProfile(valuesFromProfile(profile, "Round trip")).profile).toEqual(profile);
  });

  it("signs the header line as the sniffer does, and leaves header-less layouts unsigned", () => {
    const built = buildProfile(base({ columns: [{ index: 0, header: " Time  (UTC) ", parameter: "timestamp", unit: null }, base().columns[1]] }));
    expect(profileSignature(built.profile!)).toBe("time (utc)|ec");
    expect(profileSignature({ ...built.profile!, headerRow: -1, dataStartRow: 0 })).toBe("");
  });
});

describe("UTC offsets offered", () => {
  it("run from −12:00 to +14:00 in quarter hours, so +05:45 and +12:45 are there", () => {
    expect(UTC_OFFSETS_MINUTES[0]).toBe(-720);
    expect(UTC_OFFSETS_MINUTES.at(-1)).toBe(840);
    expect(UTC_OFFSETS_MINUTES).toContain(345);
    expect(UTC_OFFSETS_MINUTES).toContain(765);
    expect(formatUtcOffset(-150)).toBe("−02:30");
    expect(formatUtcOffset(0)).toBe("+00:00");
  });
});

describe("the sample's columns", () => {
  it("drops the empty field a trailing delimiter leaves and keeps choices by position", () => {
    const records = sampleRecords({ text: "Time,EC,\n2025-01-01T00:00Z,400,\n2025-01-01T00:15Z,401,\n", fileName: "x.csv", truncated: false }, ",");
    expect(records).toHaveLength(3);
    const columns = columnsFromRecords(records, 0, 1, [{ index: 1, header: "old", parameter: "conductivity", unit: "µS/cm" }]);
    expect(columns).toEqual([
      { index: 0, header: "Time", parameter: "ignore", unit: null },
      { index: 1, header: "EC", parameter: "conductivity", unit: "µS/cm" },
    ]);
  });

  it("leaves out the cut last line of a truncated sample", () => {
    const records = sampleRecords({ text: "Time,EC\n2025-01-01T00:00Z,400\n2025-01-01T00:1", fileName: "x.csv", truncated: true }, ",");
    expect(records.map((r) => r[0])).toEqual(["Time", "2025-01-01T00:00Z"]);
  });
});
