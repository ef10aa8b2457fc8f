// Throughput of the ingest path of app/lib/water: SC25 by both compensation methods,
// TDS and practical salinity for 1,000,000 invented readings held in Float64Arrays,
// written into preallocated Float64Arrays. Prints readings per second for each part and
// overall; the last line is `water readings_per_s=<n>` (overall, all four parts).
// A figure, not a timed assertion. Run with `npm run bench:water`.

import {
  deriveReadingsInto,
  practicalSalinityInto,
  specificConductanceInto,
  tdsInto,
  type CompensationMethod,
} from "../../app/lib/water/index.ts";

const N = 1_000_000;
const ROUNDS = 7;

// Deterministic invented readings: conductivity log-uniform 20 µS/cm – 55 mS/cm (fresh to
// sea water), temperature 0–32 °C, a few bad readings mixed in as loggers produce them.
function mulberry32(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const random = mulberry32(20240611);
const conductivity = new Float64Array(N);
const temperature = new Float64Array(N);
for (let i = 0; i < N; i++) {
  conductivity[i] = 20 * Math.exp(random() * Math.log(55_000 / 20));
  temperature[i] = random() * 32;
  if (i % 10_000 === 0) conductivity[i] = -1; // a sensor fault
}

const scNatural = new Float64Array(N);
const scLinear = new Float64Array(N);
const tds = new Float64Array(N);
const salinity = new Float64Array(N);
const derived = { specificConductanceUsPerCm: new Float64Array(N), tdsMgPerL: new Float64Array(N), salinity: new Float64Array(N) };

const natural: CompensationMethod = { kind: "natural-water" };
const linear: CompensationMethod = { kind: "linear", alphaPerC: 0.0191 };

// Best of ROUNDS after one warm-up run, in seconds.
function time(run: () => void): number {
  run();
  let best = Number.POSITIVE_INFINITY;
  for (let r = 0; r < ROUNDS; r++) {
    const start = process.hrtime.bigint();
    run();
    const seconds = Number(process.hrtime.bigint() - start) / 1e9;
    if (seconds < best) best = seconds;
  }
  return best;
}

const parts: [string, number][] = [
  ["SC25 natural water (ISO 7888)", time(() => specificConductanceInto(conductivity, temperature, natural, scNatural))],
  ["SC25 linear (α = 0.0191 /°C)", time(() => specificConductanceInto(conductivity, temperature, linear, scLinear))],
  ["TDS (k = 0.65)", time(() => tdsInto(scNatural, 0.65, tds))],
  ["salinity (PSS-78 + Hill)", time(() => practicalSalinityInto(conductivity, temperature, salinity))],
];
const ingestSeconds = time(() => deriveReadingsInto(conductivity, temperature, { method: natural, tdsFactor: 0.65 }, derived));

const rate = (seconds: number) => Math.round(N / seconds);
const format = (n: number) => n.toLocaleString("en-US");
console.log(`water bench: ${format(N)} readings, best of ${ROUNDS}, node ${process.version}`);
for (const [name, seconds] of parts) {
  console.log(`  ${name.padEnd(32)} ${(seconds * 1000).toFixed(1).padStart(7)} ms  ${format(rate(seconds)).padStart(13)} readings/s`);
}
const totalSeconds = parts.reduce((sum, [, seconds]) => sum + seconds, 0);
console.log(`  ${"deriveReadingsInto (ingest)".padEnd(32)} ${(ingestSeconds * 1000).toFixed(1).padStart(7)} ms  ${format(rate(ingestSeconds)).padStart(13)} readings/s`);
console.log(`  ${"overall (all four parts)".padEnd(32)} ${(totalSeconds * 1000).toFixed(1).padStart(7)} ms  ${format(rate(totalSeconds)).padStart(13)} readings/s`);

// Keep the results observable so no engine can drop the work, and sanity-check them.
let nan = 0;
for (let i = 0; i < N; i++) if (Number.isNaN(salinity[i])) nan++;
console.log(`  check: SC25[1] = ${scNatural[1].toFixed(2)} µS/cm, S[1] = ${salinity[1].toFixed(4)}, NaN salinities: ${nan}`);
console.log(`water readings_per_s=${rate(totalSeconds)}`);
