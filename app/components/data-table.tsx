import type { ReactNode } from "react";
import { Form, Link, useLocation } from "react-router";
import { PAGE_SIZES, withParams, type SortDir, type TableState } from "#app/utils/table-params.ts";

// A server-driven table: every sort header and page link is an ordinary link to the same page with
// new search parameters, so it works without JavaScript, can be bookmarked, and the loader does the
// sorting and paging in SQL. Other filters in the URL are kept; changing the sort goes back to page 1.

export type Column<Row> = {
  /** The sort key sent in `?sort=`; must be in the loader's allow-list when `sortable`. */
  key: string;
  /** Plain text: also used in the sort link's label for screen readers. */
  header: string;
  sortable?: boolean;
  render: (row: Row) => ReactNode;
  /** Marks the cell that names the row (rendered as a row header). */
  rowHeader?: boolean;
  /** Right-aligns numbers. */
  numeric?: boolean;
  className?: string;
  /** The direction a first click on this header sorts in (dates usually newest first). */
  firstDir?: SortDir;
};

type Props<Row> = {
  columns: Column<Row>[];
  rows: Row[];
  rowKey: (row: Row) => string;
  table: TableState;
  /** Names what the table lists, e.g. "People"; used in the caption and the page navigation. */
  caption: string;
  /** Extra words after the caption, e.g. "with role Technician". */
  captionDetail?: string;
  empty?: ReactNode;
  /** Extra search parameters for every link (defaults to the current URL's). */
  search?: string;
};

function sortLabel(dir: SortDir) {
  return dir === "asc" ? "ascending" : "descending";
}

export function DataTable<Row>({ columns, rows, rowKey, table, caption, captionDetail, empty, search }: Props<Row>) {
  const location = useLocation();
  const current = search ?? location.search;
  const sortedColumn = columns.find((c) => c.key === table.sort && c.sortable);
  const first = table.total === 0 ? 0 : (table.page - 1) * table.pageSize + 1;
  const last = Math.min(table.total, table.page * table.pageSize);

  return (
    <div className="space-y-3">
      <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
        <table className="data-table">
          <caption className="px-3 pt-2 text-left text-sm text-ink-700">
            <span className="font-semibold text-ink-900">{caption}</span>
            {captionDetail ? ` ${captionDetail}` : null}
            {table.total > 0 ? `: ${first}–${last} of ${table.total}` : ": none"}
            {sortedColumn ? <span className="sr-only">, sorted by {sortedColumn.header}, {sortLabel(table.dir)}</span> : null}
          </caption>
          <thead>
            <tr>
              {columns.map((c) => {
                const active = sortedColumn?.key === c.key;
                const nextDir: SortDir = active ? (table.dir === "asc" ? "desc" : "asc") : (c.firstDir ?? "asc");
                return (
                  <th
                    key={c.key}
                    scope="col"
                    aria-sort={c.sortable ? (active ? (table.dir === "asc" ? "ascending" : "descending") : "none") : undefined}
                    className={`${c.numeric ? "text-right" : ""} ${c.className ?? ""}`}
                  >
                    {c.sortable ? (
                      <Link
                        to={withParams(current, { sort: c.key, dir: nextDir, page: null })}
                        aria-label={`${c.header}: sort ${sortLabel(nextDir)}`}
                        className="inline-flex items-center gap-1 rounded hover:text-lake-700 hover:underline"
                        preventScrollReset
                      >
                        {c.header}
                        <SortMark state={active ? table.dir : null} />
                      </Link>
                    ) : (
                      c.header
                    )}
                  </th>
                );
              })}
            </tr>
          </thead>
          <tbody>
            {rows.length === 0 ? (
              <tr>
                <td colSpan={columns.length} className="py-6 text-center text-ink-500">
                  {empty ?? "Nothing to show."}
                </td>
              </tr>
            ) : (
              rows.map((row) => (
                <tr key={rowKey(row)} className="hover:bg-ink-50">
                  {columns.map((c) => {
                    const cls = `${c.numeric ? "text-right tabular-nums" : ""} ${c.className ?? ""}`;
                    return c.rowHeader ? (
                      <th key={c.key} scope="row" className={`border-b border-ink-100 font-normal ${cls}`}>{c.render(row)}</th>
                    ) : (
                      <td key={c.key} className={cls}>{c.render(row)}</td>
                    );
                  })}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      <Pager table={table} caption={caption} search={current} />
    </div>
  );
}

/** An arrow that shows the current direction; decorative (the header's aria-sort says it). */
function SortMark({ state }: { state: SortDir | null }) {
  return (
    <span aria-hidden="true" className={`text-xs ${state ? "text-lake-700" : "text-ink-300"}`}>
      {state === "asc" ? "▲" : state === "desc" ? "▼" : "◇"}
    </span>
  );
}

function PageLink({ to, label, children, disabled }: { to: string; label: string; children: ReactNode; disabled: boolean }) {
  if (disabled) {
    return (
      <span className="btn-quiet cursor-not-allowed opacity-50" aria-disabled="true">
        {children}
      </span>
    );
  }
  return (
    <Link to={to} className="btn-quiet" aria-label={label} preventScrollReset>
      {children}
    </Link>
  );
}

export function Pager({ table, caption, search }: { table: TableState; caption: string; search: string }) {
  const { page, pageCount } = table;
  const sizeId = `page-size-${caption.toLowerCase().replace(/[^a-z0-9]+/g, "-")}`;
  const keep = new URLSearchParams(search);
  keep.delete("page");
  keep.delete("size");
  return (
    <div className="flex flex-wrap items-center justify-between gap-3 text-sm">
      <nav aria-label={`Pages of ${caption.toLowerCase()}`} className="flex flex-wrap items-center gap-1.5">
        <PageLink to={withParams(search, { page: 1 })} label="First page" disabled={page <= 1}>« First</PageLink>
        <PageLink to={withParams(search, { page: page - 1 })} label={`Previous page, page ${page - 1}`} disabled={page <= 1}>‹ Previous</PageLink>
        <span className="px-2" aria-current="page">
          Page {page} of {pageCount}
        </span>
        <PageLink to={withParams(search, { page: page + 1 })} label={`Next page, page ${page + 1}`} disabled={page >= pageCount}>Next ›</PageLink>
        <PageLink to={withParams(search, { page: pageCount })} label={`Last page, page ${pageCount}`} disabled={page >= pageCount}>Last »</PageLink>
      </nav>
      {/* A plain GET form: without JavaScript the button submits it; other filters ride along hidden. */}
      <Form method="get" className="flex items-center gap-2" preventScrollReset>
        {[...keep.entries()].map(([k, v]) => (
          <input key={k} type="hidden" name={k} value={v} />
        ))}
        <label htmlFor={sizeId} className="text-ink-700">Rows per page</label>
        <select id={sizeId} name="size" defaultValue={table.pageSize} className="field-input w-auto py-1">
          {PAGE_SIZES.map((n) => (
            <option key={n} value={n}>{n}</option>
          ))}
        </select>
        <button type="submit" className="btn-quiet py-1">Show</button>
      </Form>
    </div>
  );
}
