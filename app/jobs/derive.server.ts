import {
  practicalSalinityInto,
  specificConductanceInto,
  tdsInto,
  type CompensationMethod,
} from "#app/lib/water/index.ts";
import type { CompensationMethodName } from "#db/schema.ts";

export type SiteSettings = {
  compensation_method: CompensationMethodName;
  alpha_per_c: number;
  reference_c: number;
  tds_factor: number;
};

export function compensationMethodOf(s: SiteSettings): CompensationMethod {
  return s.compensation_method === "natural-water"
    ? { kind: "natural-water", referenceC: s.reference_c === 20 ? 20 : 25 }
    : { kind: "linear", alphaPerC: s.alpha_per_c, referenceC: s.reference_c };
}

export function describeCompensation(s: SiteSettings): string {
  return s.compensation_method === "natural-water"
    ? `non-linear natural-water compensation (ISO 7888) to ${s.reference_c} °C`
    : `linear compensation, α = ${s.alpha_per_c}/°C, to ${s.reference_c} °C`;
}

/**
 * Derived values for a batch of readings, computed in place into preallocated arrays (no
 * allocation per reading). Specific conductance comes from raw conductivity at temperature by the
 * site's method; where a logger reports only an already compensated value, that value is used.
 * Salinity (PSS-78) needs the in-situ conductivity; from a logger's compensated value it is
 * taken at 25 °C.
 */
export class Deriver {
  readonly cond: Float64Array;
  readonly temp: Float64Array;
  readonly loggerSc: Float64Array;
  readonly sc25: Float64Array;
  readonly tds: Float64Array;
  readonly salinity: Float64Array;
  private readonly method: CompensationMethod;
  private readonly tdsFactor: number;
  private readonly scratchCond: Float64Array;
  private readonly scratchTemp: Float64Array;

  constructor(settings: SiteSettings, readonly capacity: number) {
    this.method = compensationMethodOf(settings);
    this.tdsFactor = settings.tds_factor;
    this.cond = new Float64Array(capacity);
    this.temp = new Float64Array(capacity);
    this.loggerSc = new Float64Array(capacity);
    this.sc25 = new Float64Array(capacity);
    this.tds = new Float64Array(capacity);
    this.salinity = new Float64Array(capacity);
    this.scratchCond = new Float64Array(capacity);
    this.scratchTemp = new Float64Array(capacity);
  }

  /** Computes sc25, tds and salinity for the first n readings. */
  run(n: number) {
    const cond = this.cond.subarray(0, n);
    const temp = this.temp.subarray(0, n);
    const sc25 = this.sc25.subarray(0, n);
    specificConductanceInto(cond, temp, this.method, sc25);
    const sCond = this.scratchCond.subarray(0, n);
    const sTemp = this.scratchTemp.subarray(0, n);
    let anyLoggerOnly = false;
    for (let i = 0; i < n; i++) {
      const c = cond[i];
      if (c !== c) {
        // No raw conductivity: fall back to the logger's own compensated value.
        const l = this.loggerSc[i];
        sc25[i] = l;
        sCond[i] = l;
        sTemp[i] = 25;
        if (l === l) anyLoggerOnly = true;
      } else {
        sCond[i] = c;
        sTemp[i] = temp[i];
      }
    }
    tdsInto(sc25, this.tdsFactor, this.tds.subarray(0, n));
    practicalSalinityInto(anyLoggerOnly ? sCond : cond, anyLoggerOnly ? sTemp : temp, this.salinity.subarray(0, n));
  }
}
