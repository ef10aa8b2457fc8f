// Demo readings for the invented Marrowby Water Cooperative: a year of logger data per site,
// written as the logger files a technician would bring back (one file per logger per month, in
// each logger model's own layout), so the demo exercises the real import path. Values are made up
// but shaped like the trade knows them: seasonal and daily temperature cycles, tides at the quay,
// and the year's events — a road-salt pulse in winter, storm dilution in autumn, a fouling episode
// and a calibration drift, each found at a field visit, a logger swap and a three-day gap.
import { compensationFactor } from "#app/lib/water/index.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { DEMO_LOGGERS, DEMO_SITES } from "./scenario.ts";

const DAY = 86_400_000;

/** Deterministic pseudo-random numbers (mulberry32), one stream per site. */
function rng(seedText: string) {
  let a = 0;
  for (const ch of seedText) a = (Math.imul(a ^ ch.charCodeAt(0), 2654435761) + 1) >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The most recent occurrence of a month/day at or before `beforeMs`. */
function lastDate(month: number, day: number, beforeMs: number) {
  const y = new Date(beforeMs).getUTCFullYear();
  const thisYear = Date.UTC(y, month - 1, day);
  return thisYear <= beforeMs ? thisYear : Date.UTC(y - 1, month - 1, day);
}

export type DemoEvents = ReturnType<typeof demoEvents>;

/** When the year's events happen, anchored to calendar dates before `endMs`. */
export function demoEvents(endMs: number) {
  const saltPulse = lastDate(1, 22, endMs - 14 * DAY) + 6 * 3_600_000; // a frosty January morning
  const storm = lastDate(10, 9, endMs - 7 * DAY) + 15 * 3_600_000;
  const foulingVisit = lastDate(7, 14, endMs - 7 * DAY) + 10 * 3_600_000; // QT3 cleaned at this visit
  const driftVisit = lastDate(9, 3, endMs - 7 * DAY) + 11 * 3_600_000; // HR5 recalibrated at this visit
  const gapStart = lastDate(3, 11, endMs - 7 * DAY) + 9 * 3_600_000; // QH1: flat battery, three days lost
  const swap = lastDate(6, 17, endMs - 7 * DAY) + 10 * 3_600_000 + 45 * 60_000; // AB8: RQ-3108 replaced by RQ-3109
  return {
    saltPulse,
    storm,
    foulingStart: foulingVisit - 42 * DAY,
    foulingVisit,
    driftStart: driftVisit - 56 * DAY,
    driftVisit,
    gapStart,
    gapEnd: gapStart + 3 * DAY,
    swap,
  };
}

type Sample = { sc25: number; temperatureC: number; ph: number; depthM: number };

/** The "true" water at a site at time t (specific conductance at 25 °C, temperature, pH, level). */
function truth(code: string, t: number, ev: DemoEvents, noise: () => number): Sample {
  const doy = (t / DAY) % 365.25;
  const season = Math.cos(((doy - 200) / 365.25) * 2 * Math.PI); // +1 mid-July, −1 mid-January
  const hourOfDay = (t % DAY) / 3_600_000;
  const diurnal = Math.cos(((hourOfDay - 15) / 24) * 2 * Math.PI); // warmest mid-afternoon
  const n = () => noise() - 0.5;
  const since = (x: number) => (t - x) / DAY;
  // A pulse that rises over `riseDays` and decays with time constant `decayDays`.
  const pulse = (at: number, riseDays: number, decayDays: number) => {
    const d = since(at);
    if (d < 0) return 0;
    return d < riseDays ? d / riseDays : Math.exp(-(d - riseDays) / decayDays);
  };
  switch (code) {
    case "QH1":
      return { sc25: 96 + 4 * season + 2 * n(), temperatureC: 8.6 + 1.2 * season + 0.2 * diurnal + 0.05 * n(), ph: 6.6 + 0.05 * n(), depthM: NaN };
    case "QF2":
    case "QT3": {
      const base = code === "QF2" ? 420 : 610;
      const dilution = 1 - 0.55 * pulse(ev.storm, 0.4, 2.5);
      const salt = (code === "QF2" ? 2300 : 2500) * pulse(ev.saltPulse, 0.3, 0.9);
      const temperatureC = 10.5 + 7.5 * season + 1.1 * diurnal * (0.6 + 0.4 * season) + 0.1 * n();
      return { sc25: (base - 60 * season + 8 * n()) * dilution + salt, temperatureC, ph: 7.6 + 0.2 * diurnal + 0.05 * n(), depthM: NaN };
    }
    case "QS4": {
      // Semi-diurnal tide (M2, 12.42 h) with a spring–neap cycle (14.77 days): brackish at high water.
      const tide = Math.cos((t / 3_600_000 / 12.42) * 2 * Math.PI);
      const springNeap = 0.65 + 0.35 * Math.cos((t / DAY / 14.77) * 2 * Math.PI);
      const mix = Math.max(0, tide) ** 2 * springNeap;
      return { sc25: 650 + 21_000 * mix + 40 * n(), temperatureC: 10 + 6.5 * season + 0.6 * diurnal + 0.1 * n(), ph: 7.8 + 0.3 * mix, depthM: 2.4 + 1.8 * tide * springNeap + 0.02 * n() };
    }
    case "HR5":
      return { sc25: 262 + 10 * season + 2 * n(), temperatureC: 9.5 + 5.5 * Math.cos(((doy - 225) / 365.25) * 2 * Math.PI) + 0.05 * n(), ph: 7.4 + 0.15 * season + 0.03 * n(), depthM: NaN };
    case "BW6":
      return { sc25: 305 + 12 * season + 25 * pulse(ev.storm, 0.5, 3) * -1 + 3 * n(), temperatureC: 9.8 + 6 * season + 0.15 * n(), ph: 7.3 + 0.04 * n(), depthM: NaN };
    case "AB7":
      return { sc25: 540 + 3 * n(), temperatureC: 11 + 0.15 * season + 0.02 * n(), ph: 7.1, depthM: 13.2 - 0.9 * season + 0.01 * n() };
    case "AB8": {
      const years = (t - Date.UTC(2024, 0, 1)) / (365.25 * DAY);
      return { sc25: 700 * (1 + 0.08 * years) + 3 * n(), temperatureC: 11.2 + 0.1 * season + 0.02 * n(), ph: 7.0, depthM: 15.8 - 1.1 * season + 0.01 * n() };
    }
    default:
      return { sc25: 400 + 10 * n(), temperatureC: 10, ph: 7, depthM: NaN };
  }
}

/** What the sensor reports: fouling reads low, drift reads high, both prorated until the visit fixed them. */
function sensorBias(code: string, t: number, ev: DemoEvents) {
  if (code === "QT3" && t >= ev.foulingStart && t < ev.foulingVisit) return 1 - 0.12 * ((t - ev.foulingStart) / (ev.foulingVisit - ev.foulingStart));
  if (code === "HR5" && t >= ev.driftStart && t < ev.driftVisit) return 1 + 0.045 * ((t - ev.driftStart) / (ev.driftVisit - ev.driftStart));
  return 1;
}

export type DemoLayout = "four-electrode" | "tidal-ctd" | "sonde" | "well";

export function layoutOf(serial: string): DemoLayout {
  if (serial.startsWith("RQ-52")) return "tidal-ctd";
  if (serial === "RQ-4105" || serial === "RQ-4106") return "sonde";
  if (serial.startsWith("RQ-31")) return "well";
  return "four-electrode";
}

/** The import profile of each demo logger layout (what a technician would save once per layout). */
export const DEMO_PROFILES: Record<DemoLayout, { name: string; profile: ImportProfile }> = {
  "four-electrode": {
    name: "Four-electrode logger, comma CSV, UTC",
    profile: {
      delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
      timestamp: { kind: "single", column: 0, order: "iso" }, utcOffsetMinutes: 0,
      missingValues: ["", "NaN", "-9999"],
      columns: [
        { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
        { index: 1, header: "Temp (C)", parameter: "temperature", unit: "°C" },
        { index: 2, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
        { index: 3, header: "Batt (V)", parameter: "battery", unit: "V" },
      ],
    },
  },
  "tidal-ctd": {
    name: "Tidal CTD export, semicolon, day-first",
    profile: {
      delimiter: ";", decimalMark: ",", headerRow: 4, dataStartRow: 5,
      timestamp: { kind: "split", dateColumn: 0, timeColumn: 1, order: "dmy" }, utcOffsetMinutes: 0,
      missingValues: ["", "ERR"],
      columns: [
        { index: 0, header: "Date", parameter: "date", unit: null },
        { index: 1, header: "Time", parameter: "time", unit: null },
        { index: 2, header: "Temperature [°C]", parameter: "temperature", unit: "°C" },
        { index: 3, header: "Conductivity [mS/cm]", parameter: "conductivity", unit: "mS/cm" },
        { index: 4, header: "Depth [m]", parameter: "depth", unit: "m" },
      ],
    },
  },
  sonde: {
    name: "Sonde export, tab-separated, °F",
    profile: {
      delimiter: "\t", decimalMark: ".", headerRow: 0, dataStartRow: 1,
      timestamp: { kind: "single", column: 0, order: "ymd" }, utcOffsetMinutes: 0,
      missingValues: ["", "NaN"],
      columns: [
        { index: 0, header: "Date Time", parameter: "timestamp", unit: null },
        { index: 1, header: "Temp °F", parameter: "temperature", unit: "°F" },
        { index: 2, header: "Cond µS/cm", parameter: "conductivity", unit: "µS/cm" },
        { index: 3, header: "pH", parameter: "ph", unit: null },
        { index: 4, header: "Battery V", parameter: "battery", unit: "V" },
      ],
    },
  },
  well: {
    name: "Well logger, epoch seconds, mS/cm",
    profile: {
      delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
      timestamp: { kind: "epoch", column: 0, unit: "s" }, utcOffsetMinutes: 0,
      missingValues: [""],
      columns: [
        { index: 0, header: "Unix time", parameter: "timestamp", unit: null },
        { index: 1, header: "Level (m)", parameter: "depth", unit: "m" },
        { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
        { index: 3, header: "EC (mS/cm)", parameter: "conductivity", unit: "mS/cm" },
      ],
    },
  },
};

const pad = (x: number) => String(x).padStart(2, "0");

/**
 * One demo logger file: the readings of `serial` at `siteCode` from `fromMs` (inclusive) to
 * `toMs` (exclusive), in that logger's layout.
 */
export function demoLoggerFile(siteCode: string, serial: string, fromMs: number, toMs: number, ev: DemoEvents): { text: string; rows: number } {
  const site = DEMO_SITES.find((s) => s.code === siteCode)!;
  const logger = DEMO_LOGGERS.find((l) => l.serial === serial)!;
  const step = logger.intervalS * 1000;
  const method = site.compensationMethod === "natural-water" ? ({ kind: "natural-water", referenceC: site.referenceC } as const) : ({ kind: "linear", alphaPerC: 0.0191, referenceC: site.referenceC } as const);
  const noise = rng(`${siteCode}:${serial}:${fromMs}`);
  const layout = layoutOf(serial);
  const lines: string[] = [];
  if (layout === "four-electrode") lines.push("Timestamp (UTC),Temp (C),Cond (uS/cm),Batt (V)");
  if (layout === "tidal-ctd") {
    lines.push(`Logger;${serial}`, `Site;${site.name}`, "Clock;UTC", "Export;monthly", "Date;Time;Temperature [°C];Conductivity [mS/cm];Depth [m]");
  }
  if (layout === "sonde") lines.push("Date Time\tTemp °F\tCond µS/cm\tpH\tBattery V");
  if (layout === "well") lines.push("Unix time,Level (m),Temp (C),EC (mS/cm)");
  let rows = 0;
  const start = Math.ceil(fromMs / step) * step;
  for (let t = start; t < toMs; t += step) {
    if (siteCode === "QH1" && t >= ev.gapStart && t < ev.gapEnd) continue; // flat battery: no data
    const w = truth(siteCode, t, ev, noise);
    // Raw conductivity at temperature: invert the site's own compensation (SC25 = f × C_t).
    let f = 1;
    try {
      f = compensationFactor(Math.max(0, w.temperatureC), method);
    } catch {
      f = 1;
    }
    const condUs = (w.sc25 / f) * sensorBias(siteCode, t, ev);
    const d = new Date(t);
    const battery = 12.6 - 0.8 * (((t / DAY) % 90) / 90);
    rows++;
    switch (layout) {
      case "four-electrode":
        lines.push(`${d.toISOString().slice(0, 19)}Z,${w.temperatureC.toFixed(2)},${condUs.toFixed(1)},${battery.toFixed(2)}`);
        break;
      case "tidal-ctd":
        lines.push(
          `${pad(d.getUTCDate())}.${pad(d.getUTCMonth() + 1)}.${d.getUTCFullYear()};${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:00;` +
            `${w.temperatureC.toFixed(2).replace(".", ",")};${(condUs / 1000).toFixed(3).replace(".", ",")};${w.depthM.toFixed(2).replace(".", ",")}`,
        );
        break;
      case "sonde":
        lines.push(
          `${d.getUTCFullYear()}/${pad(d.getUTCMonth() + 1)}/${pad(d.getUTCDate())} ${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:00\t` +
            `${(w.temperatureC * 1.8 + 32).toFixed(2)}\t${condUs.toFixed(1)}\t${w.ph.toFixed(2)}\t${battery.toFixed(2)}`,
        );
        break;
      case "well":
        lines.push(`${Math.round(t / 1000)},${w.depthM.toFixed(3)},${w.temperatureC.toFixed(2)},${(condUs / 1000).toFixed(4)}`);
        break;
    }
  }
  return { text: lines.join(layout === "tidal-ctd" ? "\r\n" : "\n") + "\n", rows };
}

/** The monthly files of the demo year: which logger, which site, which month. */
export function demoFiles(endMs: number, days: number) {
  const startMs = endMs - days * DAY;
  const files: { serial: string; siteCode: string; fromMs: number; toMs: number; fileName: string }[] = [];
  const ev = demoEvents(endMs);
  for (const logger of DEMO_LOGGERS) {
    if (!logger.site) continue;
    // The AB8 swap happens inside the demo year: RQ-3108 until the swap, RQ-3109 after it.
    let from = startMs;
    let to = endMs;
    if (logger.serial === "RQ-3108") to = Math.min(endMs, ev.swap - 5 * 60_000);
    if (logger.serial === "RQ-3109") from = Math.max(startMs, ev.swap);
    let cursor = from;
    while (cursor < to) {
      const d = new Date(cursor);
      const monthEnd = Math.min(to, Date.UTC(d.getUTCFullYear(), d.getUTCMonth() + 1, 1));
      const tag = `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}`;
      files.push({ serial: logger.serial, siteCode: logger.site, fromMs: cursor, toMs: monthEnd, fileName: `${logger.serial}_${tag}.${layoutOf(logger.serial) === "sonde" ? "txt" : "csv"}` });
      cursor = monthEnd;
    }
  }
  return { files, events: ev, startMs };
}
