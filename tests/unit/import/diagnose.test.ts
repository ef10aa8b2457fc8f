import { describe, expect, it } from "vitest";
import { previewImport } from "#app/lib/import/preview.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { diagnoseMostlyFailing } from "#app/lib/import/rows.ts";
import { sniffFile } from "#app/lib/import/sniff.ts";
import { fixture, NOW } from "./support.ts";

/** Run `profile` over a fixture and diagnose, as the ingest job does when most rows fail. */
function diagnose(name: string, profile: ImportProfile) {
  const result = previewImport(fixture(name), profile, { now: NOW });
  return { result, message: diagnoseMostlyFailing(result.errors, profile, result.sampleRows) };
}

/** The profile the sniffer proposes for a fixture (which must need no answers). */
function sniffedProfile(name: string): ImportProfile {
  const profile = sniffFile(fixture(name)).profile;
  if (!profile) throw new Error(`${name} needs answers`);
  return profile;
}

describe("diagnoseMostlyFailing", () => {
  it("wrong delimiter: a semicolon file read with a comma profile", () => {
    const profile = { ...sniffedProfile("wrong-delimiter.csv"), delimiter: "," as const };
    const { result, message } = diagnose("wrong-delimiter.csv", profile);
    expect(result.accepted).toBe(0);
    expect(result.errors[0].reason).toBe("expected 3 fields, found 1");
    expect(message).toBe("Every row has 1 field: the delimiter is probably ';', not ','");
  });

  it("wrong column: the logger moved the timestamp to the end, the saved profile expects it first", () => {
    // The profile that fitted the old layout "Timestamp,Cond (mS/cm),Temp (C)".
    const oldLayout: ImportProfile = {
      delimiter: ",",
      decimalMark: ".",
      headerRow: 0,
      dataStartRow: 1,
      timestamp: { kind: "single", column: 0, order: "iso" },
      utcOffsetMinutes: 0,
      missingValues: [""],
      columns: [
        { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
        { index: 1, header: "Cond (mS/cm)", parameter: "conductivity", unit: "mS/cm" },
        { index: 2, header: "Temp", parameter: "temperature", unit: "°C" },
      ],
    };
    const { result, message } = diagnose("columns-moved.csv", oldLayout);
    expect(result.accepted).toBe(0);
    // Column 3 of the file now holds "2025-03-15T10:00:00Z"; columns are numbered from 1 for people.
    expect(message).toBe('Column 3 ("Temp") holds dates, not numbers — is the profile right?');
  });

  it("wrong decimal mark: values like 412,5 under a decimal-point profile", () => {
    const sniffed = sniffFile(fixture("semicolon-decimal-comma-dmy.csv"), { utcOffsetMinutes: 60 });
    const profile = {
      ...sniffed.draftProfile,
      decimalMark: "." as const,
      columns: sniffed.draftProfile.columns.map((c) => (c.index === 3 ? { ...c, unit: "m" } : c)),
    } as ImportProfile;
    const { message } = diagnose("semicolon-decimal-comma-dmy.csv", profile);
    expect(message).toBe('Column 2 ("EC[uS/cm]") values look like 412,5: the decimal mark is probably a comma');
  });

  it("wrong date order: month-first dates under a day-first profile", () => {
    const sniffed = sniffFile(fixture("month-first-proving.csv"), { utcOffsetMinutes: 0 });
    const profile = { ...sniffed.profile!, timestamp: { kind: "single" as const, column: 0, order: "dmy" as const } };
    const { result, message } = diagnose("month-first-proving.csv", profile);
    // 03/12/2025 reads as 3 December (in the future, rejected); 03/13/2025 has no month 13.
    expect(result.accepted).toBe(0);
    expect(message).toBe(
      'Dates in column 1 ("Date Time") such as 03/13/2025 12:00 AM read as month-first, but the profile says day-first: change the date order',
    );
  });

  it("temperatures in °F under a °C profile", () => {
    const profile = sniffedProfile("comma-iso-utc.csv");
    const text = "Timestamp,Cond (mS/cm),Temperature (C),pH,Depth (m),Batt (V)\n" +
      ["61.2", "61.5", "62.0"].map((t, i) => `2025-03-01T1${i}:00:00Z,1.2,${t},7.4,1.8,12.5`).join("\n");
    const result = previewImport(text, profile, { now: NOW });
    expect(result.accepted).toBe(0);
    expect(diagnoseMostlyFailing(result.errors, profile, result.sampleRows)).toBe(
      'Column 3 ("Temperature (C)") values such as 61.2 are too warm for °C: is the unit °F?',
    );
  });

  it("most timestamps in the future", () => {
    const profile = sniffedProfile("future-timestamps.csv");
    const text = "Timestamp,Cond (µS/cm),Temperature (C)\n2099-01-01T00:00:00Z,500,7\n2099-01-01T00:10:00Z,500,7\n";
    const result = previewImport(text, profile, { now: NOW });
    expect(diagnoseMostlyFailing(result.errors, profile, result.sampleRows)).toBe(
      "Most timestamps are in the future (e.g. row 2: 2099-01-01T00:00:00Z): check the logger's clock, the date order and the UTC offset",
    );
  });

  it("a layout with a column added says so", () => {
    const profile = sniffedProfile("trailing-delimiters.csv"); // 3 columns
    const text = "Timestamp,Cond (µS/cm),Temperature (C),pH\n2025-03-03T06:00:00Z,512,9.1,7.2\n2025-03-03T06:30:00Z,515,9.0,7.2\n";
    const result = previewImport(text, profile, { now: NOW });
    expect(diagnoseMostlyFailing(result.errors, profile, result.sampleRows)).toBe(
      "Every row has 4 fields, but the profile expects 3: this file seems to have a different layout (columns added or removed?)",
    );
  });

  it("falls back to the commonest reason", () => {
    const profile = sniffedProfile("formula-injection.csv");
    const text = "Timestamp,Cond (µS/cm),Temperature (C)\n2025-03-12T14:00:00Z,550,9.0\n" +
      "2025-03-12T14:10:00Z,-5,9.0\n2025-03-12T14:20:00Z,-6,9.0\n2025-03-12T14:30:00Z,-7,9.0\n";
    const result = previewImport(text, profile, { now: NOW });
    expect(diagnoseMostlyFailing(result.errors, profile, result.sampleRows)).toBe(
      "Most rows were rejected; the commonest problem in Cond (µS/cm) is: conductivity cannot be negative (first at row 3)",
    );
  });
});
