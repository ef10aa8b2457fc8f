// British-English number formatting with the formatters kept. Number#toLocaleString with options
// builds a new Intl.NumberFormat on every call, which dominated the overview's render time.

const formatters = new Map<string, Intl.NumberFormat>();

/** The en-GB Intl.NumberFormat for `options`, built once per distinct set of options. */
export function numberFormat(options: Intl.NumberFormatOptions): Intl.NumberFormat {
  const key = JSON.stringify(options);
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.NumberFormat("en-GB", options);
    formatters.set(key, f);
  }
  return f;
}

/** `value` with between `minDigits` and `maxDigits` decimals and thousands separators, e.g. "1,240.5". */
export function formatNumber(value: number, minDigits: number, maxDigits = minDigits): string {
  return numberFormat({ minimumFractionDigits: minDigits, maximumFractionDigits: maxDigits }).format(value);
}
