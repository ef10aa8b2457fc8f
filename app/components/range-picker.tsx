import { Form, Link, useLocation } from "react-router";
import { PRESET_LABELS, RANGE_PRESETS, type RangePreset } from "#app/lib/series/ranges.ts";
import { withParams } from "#app/utils/table-params.ts";

// Choosing the shown range: four preset links and a custom from/to form. Both are ordinary links
// and a GET form, so they work from the keyboard (Tab, Enter) and without JavaScript; with it, the
// page updates in place (the charts fetch their data from the series API).

export function RangePicker({
  preset,
  fromWall,
  toWall,
  timeZone,
  anchorNote,
}: {
  preset: RangePreset | "custom";
  /** The shown range as datetime-local values at the site's clock. */
  fromWall: string;
  toWall: string;
  timeZone: string;
  anchorNote?: string;
}) {
  const location = useLocation();
  const keep = new URLSearchParams(location.search);
  for (const k of ["range", "from", "to"]) keep.delete(k);
  return (
    <div className="flex flex-wrap items-end gap-x-6 gap-y-3">
      <nav aria-label="Range shown">
        <p className="field-label" id="range-presets-label">Range</p>
        <div className="range-choice" aria-labelledby="range-presets-label">
          {RANGE_PRESETS.map((p) => (
            <Link
              key={p}
              to={withParams(location.search, { range: p, from: null, to: null })}
              aria-current={preset === p ? "true" : undefined}
              preventScrollReset
              replace
            >
              {PRESET_LABELS[p]}
            </Link>
          ))}
        </div>
        {anchorNote ? <p className="mt-1 text-sm text-ink-500">{anchorNote}</p> : null}
      </nav>
      <Form method="get" preventScrollReset replace className="flex flex-wrap items-end gap-2" aria-label="Custom range">
        {[...keep.entries()].map(([k, v]) => (
          <input key={k} type="hidden" name={k} value={v} />
        ))}
        <input type="hidden" name="range" value="custom" />
        <div>
          <label className="field-label" htmlFor="range-from">From</label>
          <input id="range-from" name="from" type="datetime-local" defaultValue={fromWall} key={`f-${fromWall}`} className="field-input w-auto py-1" required />
        </div>
        <div>
          <label className="field-label" htmlFor="range-to">To</label>
          <input id="range-to" name="to" type="datetime-local" defaultValue={toWall} key={`t-${toWall}`} className="field-input w-auto py-1" required />
        </div>
        <button type="submit" className={preset === "custom" ? "btn py-1" : "btn-quiet py-1"} aria-describedby="range-zone-note">
          Show this range
        </button>
        <p id="range-zone-note" className="w-full text-sm text-ink-500">Times at the site’s clock ({timeZone}).</p>
      </Form>
    </div>
  );
}
