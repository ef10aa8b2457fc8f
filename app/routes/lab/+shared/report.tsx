import type { ReactNode } from "react";
import type { CalculatedConductivity, CheckResult, IonBalance, LabCheck, SkippedCheck } from "#app/lib/water/index.ts";
import {
  formatBound,
  formatCoefficient,
  formatEc,
  formatIonicStrength,
  formatLambda,
  formatMeq,
  formatMgPerL,
  formatMmol,
  formatPercent,
  formatRatio,
  formatSignedMeq,
} from "./format.ts";

// The lab-check report: the checks with their Standard Methods 1030 E ranges, verdicts and what a
// result outside the range usually means, the ion balance, and the calculated conductivity worked
// step by step. Shared by the live preview (new and edit pages) and the stored result page.

export type VerdictName = "pass" | "warn" | "fail" | "not-run";

const VERDICTS: Record<VerdictName, { icon: string; word: string; className: string }> = {
  pass: { icon: "✓", word: "Pass", className: "border-reed-600 bg-reed-100 text-reed-700" },
  warn: { icon: "!", word: "Warning", className: "border-amber-700 bg-amber-100 text-amber-700" },
  fail: { icon: "✕", word: "Fail", className: "border-brick-600 bg-brick-100 text-brick-700" },
  "not-run": { icon: "–", word: "Not run", className: "border-ink-200 bg-ink-50 text-ink-700" },
};

export const VERDICT_WORDS: Record<VerdictName, string> = Object.fromEntries(
  Object.entries(VERDICTS).map(([k, v]) => [k, v.word]),
) as Record<VerdictName, string>;

/** A verdict as an icon and a word (never colour alone). */
export function VerdictMark({ verdict, large }: { verdict: VerdictName; large?: boolean }) {
  const v = VERDICTS[verdict];
  return (
    <span
      className={`inline-flex items-center gap-1 whitespace-nowrap rounded border font-semibold ${v.className} ${large ? "px-2.5 py-1 text-lg" : "px-1.5 text-sm"}`}
      data-verdict={verdict}
    >
      <span aria-hidden="true">{v.icon}</span>
      {v.word}
    </span>
  );
}

/** The note every lab-check page carries. */
export function LabCaution() {
  return (
    <p className="caution" role="note">
      <strong>Screening estimate.</strong> These checks compare an analysis with itself using the acceptance ranges of
      Standard Methods 1030 E, to catch entry slips, missing ions and mixed-up samples. They do not replace the
      accredited laboratory’s results or the limits in your local regulations: where they differ, the laboratory
      report and the regulator’s requirements apply.
    </p>
  );
}

function balanceRange(b: IonBalance) {
  if (!b.criterion) return "Beyond the table (anion sum above 800 meq/L)";
  const [lo, hi] = b.criterion.anionSumRangeMeqPerL;
  return `${b.criterion.acceptance} (for an anion sum of ${lo}–${hi} meq/L)`;
}

function balanceValue(b: IonBalance) {
  if (b.criterion?.kind === "meq") return `${formatSignedMeq(b.differenceMeqPerL)} (${formatPercent(b.percentDifference)})`;
  return formatPercent(b.percentDifference);
}

function isRun(c: CheckResult | SkippedCheck): c is CheckResult {
  return c.verdict !== "not-run";
}

/** Every check of the analysis in one table. */
export function ChecksTable({ check, caption }: { check: LabCheck; caption: ReactNode }) {
  const b = check.ionBalance;
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
      <table className="data-table">
        <caption className="px-3 pt-2 text-left text-sm text-ink-700">{caption}</caption>
        <thead>
          <tr>
            <th scope="col">Check</th>
            <th scope="col" className="text-right">Result</th>
            <th scope="col">Acceptable (SM 1030 E)</th>
            <th scope="col">Verdict</th>
            <th scope="col">What it usually means</th>
          </tr>
        </thead>
        <tbody>
          <tr>
            <th scope="row" className="font-normal">Anion–cation balance</th>
            <td className="text-right tabular-nums whitespace-nowrap">{balanceValue(b)}</td>
            <td>{balanceRange(b)}</td>
            <td><VerdictMark verdict={b.verdict} /></td>
            <td className="text-sm">{b.explanation}</td>
          </tr>
          {check.checks.map((c) =>
            isRun(c) ? (
              <tr key={c.id} data-check={c.id}>
                <th scope="row" className="font-normal">{c.label}</th>
                <td className="text-right tabular-nums">{formatRatio(c.value)}</td>
                <td className="tabular-nums whitespace-nowrap">{formatBound(c.acceptance.min)}–{formatBound(c.acceptance.max)}</td>
                <td><VerdictMark verdict={c.verdict} /></td>
                <td className="text-sm">{c.verdict === "pass" ? <span className="text-ink-500">Within range. Outside it: </span> : null}{c.explanation}</td>
              </tr>
            ) : (
              <tr key={c.id} data-check={c.id}>
                <th scope="row" className="font-normal">{c.label}</th>
                <td className="text-right">—</td>
                <td>—</td>
                <td><VerdictMark verdict="not-run" /></td>
                <td className="text-sm text-ink-700">{c.reason}</td>
              </tr>
            ),
          )}
        </tbody>
      </table>
      <p className="px-3 py-2 text-sm text-ink-500">
        A warning means the result lies just outside the range: by up to 5 % of the bound for the ratios, or up to
        twice the limit for the balance. That margin is Ripplemark’s, not part of Standard Methods.
      </p>
    </div>
  );
}

/** Cation and anion sums. */
export function BalanceSummary({ balance }: { balance: IonBalance }) {
  return (
    <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 tabular-nums">
      <dt className="font-semibold">Sum of cations</dt>
      <dd>{formatMeq(balance.cationSumMeqPerL)}</dd>
      <dt className="font-semibold">Sum of anions</dt>
      <dd>{formatMeq(balance.anionSumMeqPerL)}</dd>
      <dt className="font-semibold">Difference</dt>
      <dd>{formatSignedMeq(balance.differenceMeqPerL)}</dd>
      <dt className="font-semibold">Percent difference</dt>
      <dd>
        {formatPercent(balance.percentDifference)} <span className="text-sm text-ink-500">= 100 (Σcations − Σanions) ÷ (Σcations + Σanions)</span>
      </dd>
    </dl>
  );
}

/** The calculated conductivity, one row per ion and the steps beneath. */
export function WorkingTable({ conductivity, measuredEc }: { conductivity: CalculatedConductivity; measuredEc?: number | null }) {
  const c = conductivity;
  const y2 = c.monovalentActivityCoefficient ** 2;
  return (
    <div className="space-y-2">
      {c.warnings.length ? (
        <ul className="caution space-y-1" aria-label="Limits of this calculation">
          {c.warnings.map((w) => (
            <li key={w}>{w}</li>
          ))}
        </ul>
      ) : null}
      <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
        <table className="data-table">
          <caption className="px-3 pt-2 text-left text-sm text-ink-700">
            Each ion’s share of the conductivity at infinite dilution (λ° from the CRC Handbook table at 25 °C), then
            the activity correction.
          </caption>
          <thead>
            <tr>
              <th scope="col">Ion</th>
              <th scope="col" className="text-right">mg/L</th>
              <th scope="col" className="text-right">mmol/L</th>
              <th scope="col" className="text-right">meq/L</th>
              <th scope="col" className="text-right">λ° per equivalent (S·cm²/mol)</th>
              <th scope="col" className="text-right">λ° × meq/L (µS/cm)</th>
            </tr>
          </thead>
          <tbody>
            {c.ions.map((line) => (
              <tr key={line.ion}>
                <th scope="row" className="font-normal whitespace-nowrap">
                  {line.formula}
                  {line.fromPH ? <span className="text-sm text-ink-500"> (from the pH)</span> : null}
                </th>
                <td className="text-right tabular-nums">{line.fromPH ? formatMmol(line.mgPerL) : formatMgPerL(line.mgPerL, false)}</td>
                <td className="text-right tabular-nums">{formatMmol(line.mmolPerL)}</td>
                <td className="text-right tabular-nums">{formatMeq(line.meqPerL, false)}</td>
                <td className="text-right tabular-nums">{formatLambda(line.lambdaEqSCm2PerMol)}</td>
                <td className="text-right tabular-nums">{formatEc(line.contributionUsPerCm, false)}</td>
              </tr>
            ))}
          </tbody>
          <tfoot>
            <WorkingStep label="κ⁰, conductivity at infinite dilution" formula="Σ λ° × meq/L" value={formatEc(c.infiniteDilutionUsPerCm)} />
            <WorkingStep label="Ionic strength I" formula="½ Σ c z² (c in mol/L)" value={`${formatIonicStrength(c.ionicStrengthMolPerL)} mol/L`} />
            <WorkingStep label="Davies activity coefficient y (monovalent)" formula="log y = −0.5 (√I ÷ (1 + √I) − 0.3 I)" value={formatCoefficient(c.monovalentActivityCoefficient)} />
            <WorkingStep label="y²" formula="" value={formatCoefficient(y2)} />
            <WorkingStep label="Calculated EC at 25 °C" formula="κ⁰ × y²" value={formatEc(c.calculatedEcUsPerCm)} strong />
            {measuredEc ? <WorkingStep label="Measured EC at 25 °C" formula="from the laboratory" value={formatEc(measuredEc)} /> : null}
          </tfoot>
        </table>
      </div>
      <p className="text-sm text-ink-500">Method: {c.method}.</p>
    </div>
  );
}

function WorkingStep({ label, formula, value, strong }: { label: string; formula: string; value: string; strong?: boolean }) {
  return (
    <tr className={strong ? "font-semibold" : undefined}>
      <th scope="row" colSpan={3} className={strong ? "" : "font-normal"}>{label}</th>
      <td colSpan={2} className="text-sm text-ink-700">{formula}</td>
      <td className="text-right tabular-nums whitespace-nowrap">{value}</td>
    </tr>
  );
}

/** The whole report; `headingLevel` keeps the outline right on each page. */
export function LabCheckReport({
  check,
  measuredEc,
  idPrefix,
  headingLevel = 2,
}: {
  check: LabCheck;
  measuredEc?: number | null;
  idPrefix: string;
  headingLevel?: 2 | 3;
}) {
  const H = headingLevel === 2 ? "h2" : "h3";
  const conductivity = check.calculatedConductivity;
  return (
    <div className="space-y-5">
      <div className="flex flex-wrap items-center gap-3">
        <span className="font-semibold">Overall</span>
        <VerdictMark verdict={check.overall} large />
        <span className="text-sm text-ink-700">the worst verdict among the checks that ran</span>
      </div>
      <dl className="grid gap-3 sm:grid-cols-3">
        <KeyFigure label="Calculated EC" value={formatEc(conductivity.calculatedEcUsPerCm)} />
        <KeyFigure label="Measured EC" value={formatEc(measuredEc)} />
        <KeyFigure label="Calculated TDS" value={formatMgPerL(check.calculatedTdsMgPerL)} />
      </dl>
      <section aria-labelledby={`${idPrefix}-checks`} className="space-y-2">
        <H id={`${idPrefix}-checks`} className="text-lg font-semibold">Checks</H>
        <ChecksTable check={check} caption="Checks of the analysis against itself, Standard Methods 1030 E" />
      </section>
      <section aria-labelledby={`${idPrefix}-balance`} className="space-y-2">
        <H id={`${idPrefix}-balance`} className="text-lg font-semibold">Ion balance</H>
        <BalanceSummary balance={check.ionBalance} />
      </section>
      <section aria-labelledby={`${idPrefix}-working`} className="space-y-2">
        <H id={`${idPrefix}-working`} className="text-lg font-semibold">Calculated conductivity, step by step</H>
        <WorkingTable conductivity={conductivity} measuredEc={measuredEc} />
      </section>
    </div>
  );
}

function KeyFigure({ label, value }: { label: string; value: string }) {
  return (
    <div className="rounded-lg border border-ink-100 bg-ink-50 px-3 py-2">
      <dt className="text-sm text-ink-700">{label}</dt>
      <dd className="text-xl font-semibold tabular-nums">{value}</dd>
    </div>
  );
}
