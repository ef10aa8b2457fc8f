import { describe, expect, test } from "vitest";
import {
  fromMicrosiemensPerCm,
  parseConductivityUnit,
  parseTemperatureUnit,
  toCelsius,
  toMicrosiemensPerCm,
} from "#app/lib/water/index.ts";

describe("conductivity units", () => {
  // SI definitions: 1 S/m = 0.01 S/cm = 10 000 µS/cm; 1 mS/m = 10 µS/cm; 1 µS/m = 0.01 µS/cm.
  test.each([
    [1, "µS/cm", 1],
    [1.413, "mS/cm", 1413],
    [0.1413, "S/m", 1413],
    [141.3, "mS/m", 1413],
    [141_300, "µS/m", 1413],
  ])("%d %s is %d µS/cm (SI definitions)", (value, unit, expected) => {
    expect(toMicrosiemensPerCm(value, unit)).toBeCloseTo(expected, 9);
  });

  test("accepts the spellings seen in logger files (common practice)", () => {
    expect(toMicrosiemensPerCm(250, "uS/cm")).toBe(250);
    expect(toMicrosiemensPerCm(250, "us/cm")).toBe(250);
    expect(toMicrosiemensPerCm(250, "μS/cm")).toBe(250); // Greek mu U+03BC
    expect(toMicrosiemensPerCm(250, "\u00b5S/cm")).toBe(250); // micro sign U+00B5
    expect(toMicrosiemensPerCm(2, "ms/cm")).toBe(2000);
    expect(toMicrosiemensPerCm(2, "mmho/cm")).toBe(2000); // 1 mho = 1 S
  });

  test("round-trips through fromMicrosiemensPerCm", () => {
    expect(fromMicrosiemensPerCm(1413, "mS/cm")).toBeCloseTo(1.413, 12);
    expect(fromMicrosiemensPerCm(1413, "S/m")).toBeCloseTo(0.1413, 12);
  });

  test("rejects negative conductivity and unknown units with RangeError", () => {
    expect(() => toMicrosiemensPerCm(-1, "µS/cm")).toThrow(RangeError);
    expect(() => toMicrosiemensPerCm(Number.NaN, "µS/cm")).toThrow(RangeError);
    expect(() => toMicrosiemensPerCm(1, "ppm")).toThrow(/Unknown conductivity unit/);
  });

  test("parses units out of CSV headers (invented headers)", () => {
    expect(parseConductivityUnit("Cond (mS/cm)")).toBe("mS/cm");
    expect(parseConductivityUnit("SpCond [uS/cm]")).toBe("µS/cm");
    expect(parseConductivityUnit("EC_μS/cm")).toBe("µS/cm");
    expect(parseConductivityUnit("Conductivity, S/m")).toBe("S/m");
    expect(parseConductivityUnit("cond mS/m")).toBe("mS/m");
    expect(parseConductivityUnit("cond µS/m")).toBe("µS/m");
    expect(parseConductivityUnit("Temp °C")).toBeNull();
    expect(parseConductivityUnit("Site name")).toBeNull();
  });
});

describe("temperature units", () => {
  test("converts °F and K to °C (definitions of the scales)", () => {
    expect(toCelsius(32, "°F")).toBeCloseTo(0, 12);
    expect(toCelsius(77, "F")).toBeCloseTo(25, 12);
    expect(toCelsius(68, "deg F")).toBeCloseTo(20, 12);
    expect(toCelsius(298.15, "K")).toBeCloseTo(25, 12);
    expect(toCelsius(12.5, "degC")).toBe(12.5);
    expect(toCelsius(12.5, "C")).toBe(12.5);
  });

  test("parses temperature units in headers and refuses to guess", () => {
    expect(parseTemperatureUnit("Temp °F")).toBe("°F");
    expect(parseTemperatureUnit("Temperature (°C)")).toBe("°C");
    expect(parseTemperatureUnit("Water temp ºC")).toBe("°C"); // ordinal sign used for degree
    expect(parseTemperatureUnit("T ℃")).toBe("°C");
    expect(parseTemperatureUnit("Temp_C")).toBe("°C");
    expect(parseTemperatureUnit("temp degF")).toBe("°F");
    expect(parseTemperatureUnit("Temperature [K]")).toBe("K");
    expect(parseTemperatureUnit("Kelvin")).toBe("K");
    expect(parseTemperatureUnit("Cond (mS/cm)")).toBeNull();
    expect(parseTemperatureUnit("Depth (m)")).toBeNull();
  });

  test("rejects temperatures below absolute zero and unknown units", () => {
    expect(() => toCelsius(-1, "K")).toThrow(RangeError);
    expect(() => toCelsius(-500, "°F")).toThrow(RangeError);
    expect(() => toCelsius(10, "Rankine?")).toThrow(RangeError);
  });
});
