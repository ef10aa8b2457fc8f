// The screening caution every summary page and report carries (the digest says the same).
export function ScreeningCaution() {
  return (
    <p className="caution">
      TDS figures are screening estimates calculated from specific conductance, not laboratory measurements. Local regulations and
      accredited laboratories govern compliance decisions. Long-term trends use the Mann–Kendall test (α = 0.05) and Sen's slope of
      weekly medians over up to three years; weekly medians are serially correlated, so read a trend as a screening indication.
    </p>
  );
}
