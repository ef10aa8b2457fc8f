import { describe, expect, it } from "vitest";
import { guessColumn, headerSignature, resolveDraft, sniffFile } from "#app/lib/import/sniff.ts";
import { fixture } from "./support.ts";

function guesses(name: string, options = {}) {
  return sniffFile(fixture(name), options).columns.map((c) => [c.header, c.guess.parameter, c.guess.unit]);
}

describe("sniffFile on good layouts", () => {
  it("comma + ISO 8601 with Z: everything decided, no questions", () => {
    const s = sniffFile(fixture("comma-iso-utc.csv"));
    expect(s).toMatchObject({
      bom: false,
      lineEnding: "LF",
      delimiter: ",",
      decimalMark: ".", // 12.5 proves a decimal point
      headerRow: 0,
      unitsRow: null,
      dataStartRow: 1,
      dataRowCount: 5,
      ambiguousDates: false,
      problem: null,
      questions: [],
    });
    // Every value ends in Z, so the offset is in the data and no UTC question is needed.
    expect(s.timestamp).toEqual({ kind: "single", column: 0, order: "iso", hasOffset: true });
    expect(guesses("comma-iso-utc.csv")).toEqual([
      ["Timestamp", "timestamp", null],
      ["Cond (mS/cm)", "conductivity", "mS/cm"],
      ["Temperature (C)", "temperature", "°C"],
      ["pH", "ph", null],
      ["Depth (m)", "depth", "m"],
      ["Batt (V)", "battery", "V"],
    ]);
    expect(s.columns[1].samples).toEqual(["1.234", "1.241", "1.250", "1.262", "1.270"]);
    expect(s.columns.every((c) => c.guess.confidence === "high")).toBe(true);
    expect(s.profile).not.toBeNull();
    expect(s.profile?.utcOffsetMinutes).toBe(0);
  });

  it("semicolon + decimal comma + day-first dates after a preamble", () => {
    const s = sniffFile(fixture("semicolon-decimal-comma-dmy.csv"));
    expect(s.delimiter).toBe(";");
    expect(s.decimalMark).toBe(","); // 412,5 and 6,8 cannot be thousands groups
    // Lines 0–3 are preamble, line 4 is blank, line 5 the header.
    expect(s.headerRow).toBe(5);
    expect(s.dataStartRow).toBe(6);
    expect(s.preamble).toEqual([
      "Marrowby Water Cooperative - field logger export",
      "Logger export 2025-03-14",
      "Serial: RQ-4102",
      "Site: Holloway Brook footbridge",
    ]);
    expect(s.serialHint).toBe("RQ-4102");
    // 13.03.2025: 13 cannot be a month, so day-first is proven.
    expect(s.timestamp).toMatchObject({ kind: "single", column: 0, order: "dmy" });
    expect(s.ambiguousDates).toBe(false);
    expect(guesses("semicolon-decimal-comma-dmy.csv")).toEqual([
      ["Date Time", "timestamp", null],
      ["EC[uS/cm]", "conductivity", "µS/cm"],
      ["T[degC]", "temperature", "°C"],
      ["Level", "depth", null],
    ]);
    // No offset in the values or header, and "Level" names no unit: two questions.
    expect(s.questions.map((q) => q.kind)).toEqual(["utc-offset", "unit"]);
    const unit = s.questions[1];
    expect(unit).toMatchObject({ kind: "unit", column: 3, parameter: "depth", suggestion: "m" });
    expect(s.profile).toBeNull();
    const resolved = resolveDraft(s.draftProfile, { utcOffsetMinutes: 60, units: { 3: "m" } });
    expect(resolved.success).toBe(true);
  });

  it("tab-separated with split date and time, °F and mS/cm", () => {
    const s = sniffFile(fixture("tab-split-fahrenheit-ms.tsv"), { fileName: "RQ-4107_march.tsv" });
    expect(s.delimiter).toBe("\t");
    expect(s.decimalMark).toBe(".");
    expect(s.timestamp).toEqual({ kind: "split", dateColumn: 0, timeColumn: 1, order: "iso" });
    expect(guesses("tab-split-fahrenheit-ms.tsv")).toEqual([
      ["Date", "date", null],
      ["Time", "time", null],
      ["Cond (mS/cm)", "conductivity", "mS/cm"],
      ["Temp °F", "temperature", "°F"],
      ["Batt (V)", "battery", "V"],
    ]);
    expect(s.serialHint).toBe("RQ-4107"); // from the file name
    expect(s.questions.map((q) => q.kind)).toEqual(["utc-offset"]);
    // With the logger's offset known from its record, there is nothing left to ask.
    const known = sniffFile(fixture("tab-split-fahrenheit-ms.tsv"), { utcOffsetMinutes: -300 });
    expect(known.questions).toEqual([]);
    expect(known.profile?.utcOffsetMinutes).toBe(-300);
  });

  it("epoch seconds: 10-digit integers in the 2001–2039 range under a 'Unix time' header", () => {
    const s = sniffFile(fixture("epoch-seconds.csv"));
    expect(s.timestamp).toEqual({ kind: "epoch", column: 0, unit: "s" });
    expect(s.columns[1].guess).toEqual({ parameter: "specific-conductance", unit: "µS/cm", confidence: "high" });
    expect(s.questions).toEqual([]); // Unix time is UTC by definition
    expect(s.profile?.timestamp).toEqual({ kind: "epoch", column: 0, unit: "s" });
  });

  it("CRLF line endings and a UTF-8 byte order mark", () => {
    const text = fixture("crlf-bom.csv");
    expect(text.charCodeAt(0)).toBe(0xfeff); // the fixture really starts with a BOM
    const s = sniffFile(text);
    expect(s.bom).toBe(true);
    expect(s.lineEnding).toBe("CRLF");
    expect(s.columns[0].header).toBe("Date Time (UTC)"); // BOM stripped from the first header
    expect(s.columns[1].guess).toMatchObject({ parameter: "conductivity", unit: "µS/cm" });
    expect(s.columns[2].guess).toMatchObject({ parameter: "temperature", unit: "°C" });
    // "2025-03-02 00:00" has no offset, but the header says UTC.
    expect(s.timestamp).toMatchObject({ kind: "single", order: "iso", hasOffset: false });
    expect(s.draftProfile.utcOffsetMinutes).toBe(0);
    expect(s.questions).toEqual([]);
  });

  it("trailing delimiters: the empty last field is not a column", () => {
    const s = sniffFile(fixture("trailing-delimiters.csv"));
    expect(s.trailingDelimiter).toBe(true);
    expect(s.columns.map((c) => c.header)).toEqual(["Timestamp", "Cond (µS/cm)", "Temperature (C)"]);
    expect(s.headerSignature).toBe("timestamp|cond (μs/cm)|temperature (c)");
    expect(s.profile?.columns).toHaveLength(3);
  });

  it("month-first dates proven by 03/13/2025, with AM/PM times; serial from the preamble", () => {
    const s = sniffFile(fixture("month-first-proving.csv"));
    expect(s.headerRow).toBe(1);
    expect(s.serialHint).toBe("RQ-4215"); // "Logger RQ-4215": serial shape, no label
    expect(s.timestamp).toMatchObject({ kind: "single", column: 0, order: "mdy" });
    expect(s.ambiguousDates).toBe(false);
  });

  it("a units line under the header", () => {
    const s = sniffFile(fixture("units-row.csv"));
    expect(s.headerRow).toBe(0);
    expect(s.unitsRow).toBe(1);
    expect(s.dataStartRow).toBe(2);
    expect(s.columns.map((c) => c.unitText)).toEqual([null, "mS/cm", "°C", "m"]);
    expect(guesses("units-row.csv")).toEqual([
      ["Timestamp", "timestamp", null],
      ["Cond", "conductivity", "mS/cm"],
      ["Temp", "temperature", "°C"],
      ["Depth", "depth", "m"],
    ]);
    // +01:00 on every value: no offset question.
    expect(s.questions).toEqual([]);
    expect(s.profile?.dataStartRow).toBe(2);
  });
});

describe("sniffFile on bad input", () => {
  it("an empty file", () => {
    const s = sniffFile(fixture("empty.csv"));
    expect(s.problem).toEqual({ kind: "empty", message: "The file is empty." });
    expect(s.columns).toEqual([]);
    expect(s.profile).toBeNull();
  });

  it("a file with only a header line", () => {
    const s = sniffFile(fixture("header-only.csv"));
    expect(s.problem?.kind).toBe("no-data");
    expect(s.problem?.message).toBe("The file has a header line but no data lines.");
    expect(s.headerRow).toBe(0);
    expect(s.dataStartRow).toBe(1);
    expect(s.columns.map((c) => c.guess.parameter)).toEqual(["timestamp", "conductivity", "temperature"]);
    expect(s.profile).toBeNull();
  });

  it("a binary file renamed .csv", () => {
    const text = fixture("binary-renamed.csv");
    expect(text).toContain("\u0000"); // the generator wrote NUL bytes
    const s = sniffFile(text);
    expect(s.problem?.kind).toBe("binary");
    expect(s.problem?.message).toMatch(/not a text file/);
  });

  it("a file whose saved profile had the wrong delimiter is still sniffed as semicolon", () => {
    const s = sniffFile(fixture("wrong-delimiter.csv"));
    expect(s.delimiter).toBe(";");
    expect(s.columns).toHaveLength(3);
  });

  it("ragged rows: the modal field count wins and the odd lines are counted", () => {
    const s = sniffFile(fixture("ragged-rows.csv"));
    expect(s.columns).toHaveLength(3);
    expect(s.trailingDelimiter).toBe(false); // only one line ends with a comma
    expect(s.warnings).toContain("2 of 5 data lines do not have 3 fields; they will be rejected.");
  });

  it("sentinels are recognised as 'no value' and added to the draft", () => {
    const s = sniffFile(fixture("sentinel-values.csv"));
    expect(s.columns[1].guess).toMatchObject({ parameter: "conductivity", confidence: "high" });
    // "nan" is covered by "NaN" (case-insensitive); nothing new beyond the defaults.
    expect(s.draftProfile.missingValues).toEqual(["", "NaN", "N/A", "-9999", "ERR", "---"]);
  });

  it("a column with formula text is still conductivity by its header, flagged as doubtful", () => {
    const s = sniffFile(fixture("formula-injection.csv"));
    // 4 of 6 values are not numbers, so the header and values disagree.
    expect(s.columns[1].guess).toEqual({ parameter: "conductivity", unit: "µS/cm", confidence: "low" });
    expect(s.warnings.some((w) => w.startsWith('Column 2 ("Cond (µS/cm)") was guessed as conductivity'))).toBe(true);
  });

  it("ambiguous dates (every day and month ≤ 12) are never guessed", () => {
    const s = sniffFile(fixture("ambiguous-dates.csv"));
    expect(s.ambiguousDates).toBe(true);
    expect(s.timestamp).toMatchObject({ kind: "single", column: 0, order: null });
    // 03/04/2025 read day-first is 3 April, month-first 4 March.
    expect(s.dateMessage).toBe("Dates like 03/04/2025 could be 3 April or 4 March: choose day-first or month-first.");
    expect(s.questions[0]).toMatchObject({ kind: "date-order", example: "03/04/2025", options: ["dmy", "mdy"] });
    expect(s.draftProfile.timestamp).toEqual({ kind: "single", column: 0, order: null });
    expect(s.profile).toBeNull();
    const unanswered = resolveDraft(s.draftProfile, { utcOffsetMinutes: 0 });
    expect(unanswered).toEqual({ success: false, problems: ["Choose whether dates are day-first or month-first."] });
  });

  it("dates that contradict each other (13/03 and 03/13) are reported, not guessed", () => {
    const text = "Date Time,Cond (µS/cm)\n13/03/2025 10:00,500\n03/14/2025 10:00,501\n";
    const s = sniffFile(text);
    expect(s.ambiguousDates).toBe(true);
    expect(s.dateMessage).toMatch(/mix day-first \(13\/03\/2025\) and month-first \(03\/14\/2025\)/);
  });

  it("split date column with a proving date: day-first", () => {
    const s = sniffFile(fixture("invalid-dates.csv"));
    expect(s.delimiter).toBe(";");
    // 14/02/2025 proves day-first (14 is no month); the split columns are found by their values.
    expect(s.timestamp).toEqual({ kind: "split", dateColumn: 0, timeColumn: 1, order: "dmy" });
  });
});

describe("sniffFile details", () => {
  it("a truncated sample ignores its cut last line", () => {
    const whole = fixture("comma-iso-utc.csv");
    const cut = whole.slice(0, whole.length - 10); // last line cut in the middle
    expect(sniffFile(cut, { truncated: true }).dataRowCount).toBe(4);
    // Without the flag the cut line counts, and is reported as ragged.
    expect(sniffFile(cut).warnings.some((w) => /do not have 6 fields/.test(w))).toBe(true);
  });

  it("a header with a UTC offset sets utcOffsetMinutes", () => {
    const s = sniffFile("Date Time (UTC+01:00),Cond (µS/cm)\n2025-03-01 10:00,500\n2025-03-01 10:10,501\n");
    expect(s.draftProfile.utcOffsetMinutes).toBe(60);
    const west = sniffFile("Timestamp GMT-5,Cond (µS/cm)\n2025-03-01 10:00,500\n");
    expect(west.draftProfile.utcOffsetMinutes).toBe(-300);
  });

  it("an unlabelled conductivity column becomes a question", () => {
    const s = sniffFile("Timestamp,Reading\n2025-03-01T10:00:00Z,500\n2025-03-01T10:10:00Z,501\n");
    expect(s.columns[1].guess).toEqual({ parameter: "ignore", unit: null, confidence: "low" });
    expect(s.questions.map((q) => q.kind)).toEqual(["conductivity-column"]);
    const resolved = resolveDraft(s.draftProfile, { parameters: { 1: "conductivity" }, units: { 1: "µS/cm" } });
    expect(resolved.success).toBe(true);
  });

  it("epoch milliseconds are told from seconds by their 13 digits", () => {
    const s = sniffFile("time,Cond (µS/cm)\n1740823200000,500\n1740823800000,501\n");
    expect(s.timestamp).toEqual({ kind: "epoch", column: 0, unit: "ms" });
    // The header is only "time", so the values decided: medium confidence.
    expect(s.columns[0].guess).toEqual({ parameter: "timestamp", unit: null, confidence: "medium" });
  });

  it("a file name with 'serial' and a preamble label 'Serial No.' both give the serial", () => {
    expect(sniffFile(fixture("comma-iso-utc.csv"), { fileName: "export_serial_RQ5518.csv" }).serialHint).toBe("RQ5518");
    const text = "Serial No.: MW-00231\nTimestamp,Cond (µS/cm)\n2025-03-01T10:00:00Z,500\n";
    expect(sniffFile(text).serialHint).toBe("MW-00231");
    expect(sniffFile(fixture("comma-iso-utc.csv")).serialHint).toBeNull();
  });

  it("a single-column text is refused with a clear message", () => {
    const s = sniffFile("just some notes\nabout the site visit\n");
    expect(s.problem?.kind).toBe("single-column");
  });

  it("a headerless file gets numbered columns and a warning", () => {
    const s = sniffFile("2025-03-01T10:00:00Z,500,7.1\n2025-03-01T10:10:00Z,501,7.2\n");
    expect(s.headerRow).toBe(-1);
    expect(s.dataStartRow).toBe(0);
    expect(s.columns.map((c) => c.header)).toEqual(["Column 1", "Column 2", "Column 3"]);
    expect(s.warnings).toContain("No header line was found: columns are numbered instead of named.");
  });
});

describe("guessColumn from header text", () => {
  // [header, expected parameter, expected unit]: the header spellings the brief lists.
  const cases: [string, string, string | null][] = [
    ["Cond (mS/cm)", "conductivity", "mS/cm"],
    ["EC[uS/cm]", "conductivity", "µS/cm"],
    ["Conductivity µS/cm", "conductivity", "µS/cm"],
    ["SpCond", "specific-conductance", null],
    ["Specific Conductance (uS/cm @25C)", "specific-conductance", "µS/cm"],
    ["Temp °F", "temperature", "°F"],
    ["Temperature (C)", "temperature", "°C"],
    ["T[degC]", "temperature", "°C"],
    ["pH", "ph", null],
    ["Depth (m)", "depth", "m"],
    ["Level", "depth", null],
    ["Batt (V)", "battery", "V"],
    ["Date", "date", null],
    ["Time", "time", null],
    ["Date Time", "timestamp", null],
    ["Timestamp (UTC)", "timestamp", null],
    ["Unix time", "timestamp", null],
    ["Notes", "ignore", null],
  ];
  it.each(cases)("%s → %s (%s)", (header, parameter, unit) => {
    const guess = guessColumn(header);
    expect(guess.parameter).toBe(parameter);
    expect(guess.unit).toBe(unit);
  });

  it("values decide when the header says nothing", () => {
    expect(guessColumn("x", null, ["2025-03-01T10:00:00Z", "2025-03-01T10:10:00Z"]).parameter).toBe("timestamp");
    expect(guessColumn("x", null, ["1740823200", "1740823800"]).parameter).toBe("timestamp");
    expect(guessColumn("x", null, ["500", "501"]).parameter).toBe("ignore");
  });
});

describe("headerSignature", () => {
  it("lowercases, trims, collapses whitespace and joins with |", () => {
    expect(headerSignature(["  Date   Time ", "Cond (mS/cm)", "TEMP\t°C"])).toBe("date time|cond (ms/cm)|temp °c");
  });

  it("matches across micro sign spellings and trailing delimiters", () => {
    // U+00B5 MICRO SIGN and U+03BC GREEK SMALL LETTER MU are the same after NFKC.
    expect(headerSignature(["Cond (\u00b5S/cm)", ""])).toBe(headerSignature(["cond (\u03bcS/cm)"]));
  });

  it("differs when a column is added", () => {
    expect(headerSignature(["Timestamp", "Cond"])).not.toBe(headerSignature(["Timestamp", "Cond", "Temp"]));
  });
});
