// A profile compiled into a row parser. parseRow runs on every data row of files with
// millions of rows: everything that can be decided once (column slots, unit factors,
// sentinel sets, limits) is decided in compileProfile; a row then costs a few string
// scans and no allocation unless it is rejected.

import { conversionFor, type MeasuredParameter } from "./measurement-units.ts";
import { cleanCell, numberProblem, parseDecimal } from "./numbers.ts";
import { describeProfileIssues, importProfileSchema, type ImportProfile } from "./profile.ts";
import {
  combineDateAndTime,
  parseDateOnly,
  parseDateTime,
  parseEpoch,
  parseTimeOfDay,
  timeFailure,
} from "./timestamps.ts";

export { csvSafeCell, toCsvLine } from "./csv.ts";
export { diagnoseMostlyFailing } from "./diagnose.ts";

/** One accepted row in canonical units; NaN where the file has no value. */
export type ParsedRow = {
  timeMs: number;
  conductivityUsPerCm: number;
  specificConductanceUsPerCm: number;
  temperatureC: number;
  ph: number;
  depthM: number;
  batteryV: number;
};

/** Why a row was rejected. `row` is the 1-based line number in the file; `column` the header text or "(row)". */
export type RowError = { row: number; column: string; value: string; reason: string };

export type CompileOptions = {
  /** Current time in ms, for the future check. */
  now: number;
  /** How far ahead of `now` a timestamp may be (logger clocks drift). Default 10 minutes. */
  futureToleranceMs?: number;
};

export type RowParser = {
  /** Fields a row must have (one more is fine when it is an empty field left by a trailing delimiter). */
  readonly expectedFields: number;
  /** The reasons the last rejected row was rejected. Reused: copy entries you keep. */
  readonly lastErrors: RowError[];
  /** Fill `out` from `fields`; true when the row is accepted. */
  parseRow(fields: readonly string[], rowNumber: number, out: ParsedRow): boolean;
};

export function createParsedRow(): ParsedRow {
  return {
    timeMs: Number.NaN,
    conductivityUsPerCm: Number.NaN,
    specificConductanceUsPerCm: Number.NaN,
    temperatureC: Number.NaN,
    ph: Number.NaN,
    depthM: Number.NaN,
    batteryV: Number.NaN,
  };
}

/** A blank line as a CSV splitter returns it ([""] or only empty/space fields): skipped, not an error. */
export function isBlankRow(fields: readonly string[]): boolean {
  for (let i = 0; i < fields.length; i++) if (fields[i].trim() !== "") return false;
  return true;
}

/** 1980-01-01T00:00:00Z: earlier timestamps come from a logger whose clock was never set. */
export const EARLIEST_TIME_MS = Date.UTC(1980, 0, 1);
const DEFAULT_FUTURE_TOLERANCE_MS = 10 * 60_000;

const COND = 0;
const SPEC = 1;
const TEMP = 2;
const PH = 3;
const DEPTH = 4;
const BATT = 5;

const KIND_OF: Record<MeasuredParameter, number> = {
  conductivity: COND,
  "specific-conductance": SPEC,
  temperature: TEMP,
  ph: PH,
  depth: DEPTH,
  battery: BATT,
};

// Plausible ranges in canonical units. Natural and waste waters stay well below
// 200,000 µS/cm (sea water is about 53,000 µS/cm at 25 °C; brines reach ~200,000);
// liquid water in the field is −5 to 60 °C (supercooled brine to hot springs, outfalls).
const LIMITS: Record<number, [min: number, max: number]> = {
  [COND]: [0, 200_000],
  [SPEC]: [0, 200_000],
  [TEMP]: [-5, 60],
  [PH]: [0, 14],
  [DEPTH]: [-5, 2000],
  [BATT]: [0, 50],
};

type Slot = {
  index: number;
  kind: number;
  column: string;
  unit: string;
  canonicalUnit: string;
  add: number;
  multiply: number;
  divide: number;
  min: number;
  max: number;
};

function displayNumber(x: number): string {
  const rounded = Math.round(x * 1000) / 1000;
  const text = Math.abs(rounded) >= 10_000 ? Math.abs(rounded).toLocaleString("en-GB") : String(Math.abs(rounded));
  return rounded < 0 ? `−${text}` : text;
}

function columnLabel(header: string, index: number) {
  return header.trim() ? header.trim() : `Column ${index + 1}`;
}

function rangeProblem(slot: Slot, value: number, canonical: number): string {
  const min = displayNumber(slot.min);
  const max = displayNumber(slot.max);
  const unitSuffix = slot.canonicalUnit ? ` ${slot.canonicalUnit}` : "";
  const original = slot.unit && slot.unit !== slot.canonicalUnit ? `${displayNumber(value)} ${slot.unit} (${displayNumber(canonical)}${unitSuffix})` : `${displayNumber(canonical)}${unitSuffix}`;
  switch (slot.kind) {
    case COND:
      return value < 0 ? "conductivity cannot be negative" : `${original} is outside the plausible range ${min} to ${max} µS/cm`;
    case SPEC:
      return value < 0
        ? "specific conductance cannot be negative"
        : `${original} is outside the plausible range ${min} to ${max} µS/cm`;
    case TEMP:
      return `${original} is outside the plausible range ${min} to ${max} °C for water`;
    case PH:
      return `pH ${displayNumber(canonical)} is outside the range ${min} to ${max}`;
    case DEPTH:
      return `${original} is outside the plausible range ${min} to ${max} m`;
    default:
      return `${original} is outside the plausible range ${min} to ${max} V`;
  }
}

class CompiledParser implements RowParser {
  readonly expectedFields: number;
  readonly lastErrors: RowError[] = [];
  private readonly slots: Slot[];
  private readonly decimalMark: "." | ",";
  private readonly missingLower: Set<string>;
  // Numeric sentinels (-9999 also matches "-9999.0"): a short array, as a linear scan of one
  // or two numbers is cheaper per cell than hashing a double into a Set.
  private readonly missingNumbers: number[];
  private readonly timeKind: number; // 0 single, 1 split, 2 epoch
  private readonly timeColumn: number;
  private readonly secondTimeColumn: number;
  private readonly timeHeader: string;
  private readonly secondTimeHeader: string;
  private readonly order: "iso" | "dmy" | "mdy" | "ymd";
  private readonly epochUnit: "s" | "ms";
  private readonly utcOffsetMinutes: number;
  private readonly latestMs: number;

  constructor(profile: ImportProfile, options: CompileOptions) {
    this.expectedFields = profile.columns.length;
    this.decimalMark = profile.decimalMark;
    this.utcOffsetMinutes = profile.utcOffsetMinutes;
    this.latestMs = options.now + (options.futureToleranceMs ?? DEFAULT_FUTURE_TOLERANCE_MS);

    this.missingLower = new Set(profile.missingValues.map((v) => v.trim().toLowerCase()));
    this.missingNumbers = [];
    for (const sentinel of this.missingLower) {
      const n = parseDecimal(sentinel, profile.decimalMark);
      if (n === n && !this.missingNumbers.includes(n)) this.missingNumbers.push(n);
    }

    const headerOf = (index: number) => {
      const column = profile.columns.find((c) => c.index === index);
      return columnLabel(column?.header ?? "", index);
    };
    const ts = profile.timestamp;
    this.order = ts.kind === "epoch" ? "iso" : ts.order;
    this.epochUnit = ts.kind === "epoch" ? ts.unit : "s";
    if (ts.kind === "split") {
      this.timeKind = 1;
      this.timeColumn = ts.dateColumn;
      this.secondTimeColumn = ts.timeColumn;
    } else {
      this.timeKind = ts.kind === "single" ? 0 : 2;
      this.timeColumn = ts.column;
      this.secondTimeColumn = -1;
    }
    this.timeHeader = headerOf(this.timeColumn);
    this.secondTimeHeader = this.secondTimeColumn >= 0 ? headerOf(this.secondTimeColumn) : "";

    this.slots = [];
    for (const column of [...profile.columns].sort((a, b) => a.index - b.index)) {
      if (!(column.parameter in KIND_OF)) continue;
      const parameter = column.parameter as MeasuredParameter;
      const kind = KIND_OF[parameter];
      const conversion = conversionFor(parameter, column.unit);
      const [min, max] = LIMITS[kind];
      this.slots.push({
        index: column.index,
        kind,
        column: columnLabel(column.header, column.index),
        unit: conversion.canonicalUnit ?? "",
        canonicalUnit: kind === COND || kind === SPEC ? "µS/cm" : kind === TEMP ? "°C" : kind === DEPTH ? "m" : kind === BATT ? "V" : "",
        add: conversion.add,
        multiply: conversion.multiply,
        divide: conversion.divide,
        min,
        max,
      });
    }
  }

  private reject(row: number, column: string, value: string, reason: string) {
    this.lastErrors.push({ row, column, value, reason });
  }

  private isMissingNumber(number: number) {
    const missing = this.missingNumbers;
    for (let i = 0; i < missing.length; i++) if (missing[i] === number) return true;
    return false;
  }

  private isMissing(value: string) {
    return value.length === 0 || this.missingLower.has(value.toLowerCase());
  }

  private readTime(fields: readonly string[], rowNumber: number): number {
    const raw = fields[this.timeColumn];
    const value = cleanCell(raw);
    let time: number;
    if (this.timeKind === 0) {
      time = parseDateTime(value, this.order, this.utcOffsetMinutes);
    } else if (this.timeKind === 2) {
      time = parseEpoch(value, this.epochUnit);
    } else {
      const days = parseDateOnly(value, this.order);
      if (days !== days) {
        this.timeProblem(rowNumber, this.timeHeader, raw, value);
        return days;
      }
      const rawTime = fields[this.secondTimeColumn];
      const timeValue = cleanCell(rawTime);
      const ms = parseTimeOfDay(timeValue);
      if (ms !== ms) {
        this.timeProblem(rowNumber, this.secondTimeHeader, rawTime, timeValue);
        return ms;
      }
      time = combineDateAndTime(days, ms, this.utcOffsetMinutes);
    }
    if (time !== time) {
      this.timeProblem(rowNumber, this.timeHeader, raw, value);
      return time;
    }
    if (time > this.latestMs) {
      this.reject(rowNumber, this.timeHeader, raw, "timestamp is in the future");
      return Number.NaN;
    }
    if (time < EARLIEST_TIME_MS) {
      this.reject(rowNumber, this.timeHeader, raw, "timestamp is before 1980: was the logger clock set?");
      return Number.NaN;
    }
    return time;
  }

  private timeProblem(rowNumber: number, header: string, raw: string, value: string) {
    this.reject(rowNumber, header, raw, this.isMissing(value) ? "timestamp is missing" : timeFailure);
  }

  parseRow(fields: readonly string[], rowNumber: number, out: ParsedRow): boolean {
    const errors = this.lastErrors;
    errors.length = 0;
    out.timeMs = Number.NaN;
    out.conductivityUsPerCm = Number.NaN;
    out.specificConductanceUsPerCm = Number.NaN;
    out.temperatureC = Number.NaN;
    out.ph = Number.NaN;
    out.depthM = Number.NaN;
    out.batteryV = Number.NaN;

    const count = fields.length;
    const expected = this.expectedFields;
    if (count !== expected && !(count === expected + 1 && fields[count - 1].trim() === "")) {
      this.reject(rowNumber, "(row)", fields.join(" | ").slice(0, 200), `expected ${expected} fields, found ${count}`);
      return false;
    }

    out.timeMs = this.readTime(fields, rowNumber);

    const slots = this.slots;
    const mark = this.decimalMark;
    let measured = 0;
    for (let s = 0; s < slots.length; s++) {
      const slot = slots[s];
      const raw = fields[slot.index];
      const value = cleanCell(raw);
      if (value.length === 0) continue;
      const number = parseDecimal(value, mark);
      if (number !== number) {
        if (!this.missingLower.has(value.toLowerCase())) {
          this.reject(rowNumber, slot.column, raw, numberProblem(value, mark));
        }
        continue;
      }
      if (this.isMissingNumber(number)) continue;
      const canonical = ((number + slot.add) * slot.multiply) / slot.divide;
      if (canonical < slot.min || canonical > slot.max) {
        this.reject(rowNumber, slot.column, raw, rangeProblem(slot, number, canonical));
        continue;
      }
      measured++;
      switch (slot.kind) {
        case COND:
          out.conductivityUsPerCm = canonical;
          break;
        case SPEC:
          out.specificConductanceUsPerCm = canonical;
          break;
        case TEMP:
          out.temperatureC = canonical;
          break;
        case PH:
          out.ph = canonical;
          break;
        case DEPTH:
          out.depthM = canonical;
          break;
        default:
          out.batteryV = canonical;
      }
    }
    if (errors.length > 0) return false;
    if (measured === 0) {
      this.reject(rowNumber, "(row)", fields.join(" | ").slice(0, 200), "no measurement in this row");
      return false;
    }
    return true;
  }
}

/**
 * Compile a profile into a row parser. Validates the profile first (throws an Error
 * listing the problems when it is invalid), so the ingest job never runs a bad profile.
 */
export function compileProfile(profile: ImportProfile, options: CompileOptions): RowParser {
  const checked = importProfileSchema.safeParse(profile);
  if (!checked.success) throw new Error(`The import profile is not valid:\n${describeProfileIssues(checked.error)}`);
  return new CompiledParser(checked.data, options);
}

/**
 * Finds timestamps seen earlier in the same file. Logger files are almost always in time
 * order, so times are kept in a sorted Float64Array (8 bytes a row, binary search);
 * the rare out-of-order times go to a Map. `check` returns the row number of the earlier
 * row with the same time, or 0 when the time is new (and records it).
 */
export function createDuplicateChecker() {
  let times = new Float64Array(1024);
  let rows = new Int32Array(1024);
  let size = 0;
  const outOfOrder = new Map<number, number>();
  function find(timeMs: number): number {
    let lo = 0;
    let hi = size - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >>> 1;
      const t = times[mid];
      if (t === timeMs) return rows[mid];
      if (t < timeMs) lo = mid + 1;
      else hi = mid - 1;
    }
    return 0;
  }
  return {
    check(timeMs: number, rowNumber: number): number {
      if (size > 0 && timeMs <= times[size - 1]) {
        const earlier = find(timeMs) || outOfOrder.get(timeMs) || 0;
        if (earlier === 0) outOfOrder.set(timeMs, rowNumber);
        return earlier;
      }
      const earlier = outOfOrder.get(timeMs);
      if (earlier !== undefined) return earlier;
      if (size === times.length) {
        const grownTimes = new Float64Array(size * 2);
        grownTimes.set(times);
        times = grownTimes;
        const grownRows = new Int32Array(size * 2);
        grownRows.set(rows);
        rows = grownRows;
      }
      times[size] = timeMs;
      rows[size] = rowNumber;
      size++;
      return 0;
    },
  };
}
