import type { CalibrationCheckResult, FoulingResult, TemperatureResult } from "#app/lib/quality/calibration.ts";
import { TEMPERATURE_CRITERION_C } from "#app/lib/quality/calibration.ts";
import { celsius, signedCelsius, signedPercent, signedUs, us } from "./format.ts";
import { VerdictMark, type Verdict } from "./verdict.tsx";

// The results of a visit's tests, shown live in the form (computed in the browser) and on the
// visit's page (as stored when it was saved). Each line: the verdict (mark + word), then the numbers.

export type CheckView = Pick<
  CalibrationCheckResult,
  "expectedUsPerCm" | "errorUsPerCm" | "errorPercent" | "allowanceUsPerCm" | "passed" | "cellConstantChangePercent"
> & { label: string; temperatureC: number };

export function FoulingLine({ fouling }: { fouling: Pick<FoulingResult, "errorUsPerCm" | "errorPercent" | "reference" | "allowanceUsPerCm" | "passed"> | null }) {
  return (
    <div className="flex flex-wrap items-center gap-x-3 gap-y-1" data-testid="fouling-result">
      <span className="font-semibold">Fouling</span>
      <VerdictMark verdict={fouling?.passed} />
      {fouling ? (
        <span className="text-ink-700">
          after − before cleaning {signedUs(fouling.errorUsPerCm)} ({signedPercent(fouling.errorPercent)} of the{" "}
          {fouling.reference === "field-meter" ? "field meter" : "cleaned sensor"}); allowed ±{us(fouling.allowanceUsPerCm)}
        </span>
      ) : (
        <span className="text-ink-500">Enter the readings before and after cleaning.</span>
      )}
    </div>
  );
}

export function TemperatureLine({ temperature }: { temperature: TemperatureResult | null }) {
  return (
    <div className="flex flex-wrap items-center gap-x-3 gap-y-1" data-testid="temperature-result">
      <span className="font-semibold">Temperature</span>
      <VerdictMark verdict={temperature?.passed} />
      {temperature ? (
        <span className="text-ink-700">
          field meter − cleaned sensor {signedCelsius(temperature.errorC)}; allowed ±{celsius(TEMPERATURE_CRITERION_C)}
        </span>
      ) : (
        <span className="text-ink-500">Enter the cleaned sensor's and the field meter's temperatures.</span>
      )}
    </div>
  );
}

export function CheckLine({ index, check }: { index: number; check: CheckView | null }) {
  return (
    <div className="flex flex-wrap items-center gap-x-3 gap-y-1" data-testid={`check-result-${index}`}>
      <span className="font-semibold">Calibration check {index + 1}</span>
      <VerdictMark verdict={check?.passed} />
      {check ? (
        <span className="text-ink-700">
          {check.label}: expected {us(check.expectedUsPerCm)} at {celsius(check.temperatureC)}; drift error {signedUs(check.errorUsPerCm)} (
          {signedPercent(check.errorPercent)}); allowed ±{us(check.allowanceUsPerCm)}; cell constant would change {signedPercent(check.cellConstantChangePercent, 2)}
        </span>
      ) : (
        <span className="text-ink-500">Enter the standard's temperature and the sensor's reading in it.</span>
      )}
    </div>
  );
}

/** The overall verdict: pass only when every computed test passes. */
export function OverallVerdict({ verdict, failing, computed }: { verdict: Verdict; failing: string[]; computed: number }) {
  return (
    <div role="status" aria-live="polite" className="flex flex-wrap items-center gap-3 text-lg" data-testid="visit-verdict">
      <VerdictMark verdict={verdict} />
      <span>
        {verdict === true
          ? `All ${computed} test${computed === 1 ? "" : "s"} within the calibration criteria.`
          : verdict === false
            ? `Outside the criteria: ${failing.join(", ")}. Clean or recalibrate and check again before you leave, or note why not.`
            : "Enter readings to see the results."}
      </span>
    </div>
  );
}
