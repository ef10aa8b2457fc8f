// British-English number formatting with the formatters kept. Number#toLocaleString with options
// builds a new Intl.NumberFormat on every call, which dominated the overview's render time.

const formatters = new Map<string, Intl.NumberFormat>();

/** `value` with between `minDigits` and `maxDigits` decimals and thousands separators, e.g. "1,240.5". */
export function formatNumber(value: number, minDigits: number, maxDigits = minDigits): string {
  const key = `${minDigits}|${maxDigits}`;
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.NumberFormat("en-GB", { minimumFractionDigits: minDigits, maximumFractionDigits: maxDigits });
    formatters.set(key, f);
  }
  return f.format(value);
}
