import { DEFAULT_PAGE_SIZE, type SortDir } from "#app/utils/table-params.ts";

// Pieces of the GET filter forms above sortable tables: the table's own state (sort, direction,
// page size) rides along when it differs from the page's defaults, and each filter is a labelled
// select whose empty choice means "any".

export function TableStateInputs({
  table,
  defaultSort,
  defaultDir = "desc",
}: {
  table: { pageSize: number; sort: string; dir: SortDir };
  defaultSort: string;
  defaultDir?: SortDir;
}) {
  return (
    <>
      {table.pageSize !== DEFAULT_PAGE_SIZE ? <input type="hidden" name="size" value={table.pageSize} /> : null}
      {table.sort !== defaultSort || table.dir !== defaultDir ? (
        <>
          <input type="hidden" name="sort" value={table.sort} />
          <input type="hidden" name="dir" value={table.dir} />
        </>
      ) : null}
    </>
  );
}

export function FilterSelect({
  id,
  name,
  label,
  anyLabel,
  defaultValue,
  options,
}: {
  id: string;
  name: string;
  label: string;
  anyLabel: string;
  defaultValue: string;
  options: readonly { value: string; label: string }[];
}) {
  return (
    <div>
      <label htmlFor={id} className="field-label">{label}</label>
      <select id={id} name={name} defaultValue={defaultValue} className="field-input">
        <option value="">{anyLabel}</option>
        {options.map((o) => (
          <option key={o.value} value={o.value}>{o.label}</option>
        ))}
      </select>
    </div>
  );
}
