import { z } from "zod";

// Sorting and paging of server-side tables, read from the URL (`?sort=name&dir=asc&page=2&size=25`)
// so a table works without JavaScript and a view can be bookmarked. Shared by loaders (parsing)
// and the DataTable component (building links). A stale or hand-edited value never errors: each
// parameter falls back to its default on its own, and only allow-listed sort keys get through.
// The sort key is a name, never SQL: model modules map it to a column reference.

export type SortDir = "asc" | "desc";
export const PAGE_SIZES = [10, 25, 50, 100] as const;
export const DEFAULT_PAGE_SIZE = 25;
/** Beyond this a page number is certainly hand-made; it is clamped to the last page anyway. */
const MAX_PAGE = 100_000;

export type TableParams<K extends string = string> = {
  sort: K;
  dir: SortDir;
  page: number;
  pageSize: number;
};

/** What a loader sends to the DataTable besides the rows. */
export type TableState<K extends string = string> = TableParams<K> & { total: number; pageCount: number };

export type TableOptions<K extends string> = {
  sortable: readonly K[];
  defaultSort: K;
  defaultDir?: SortDir;
  defaultPageSize?: number;
};

export function parseTableParams<const K extends string>(
  search: URLSearchParams,
  options: TableOptions<K>,
): TableParams<K> {
  const defaultDir = options.defaultDir ?? "asc";
  const defaultPageSize = options.defaultPageSize ?? DEFAULT_PAGE_SIZE;
  const schema = z.object({
    sort: z
      .string()
      .refine((v): v is K => (options.sortable as readonly string[]).includes(v))
      .catch(options.defaultSort),
    dir: z.enum(["asc", "desc"]).catch(defaultDir),
    page: z.coerce.number().int().min(1).max(MAX_PAGE).catch(1),
    pageSize: z.coerce
      .number()
      .int()
      .refine((n) => (PAGE_SIZES as readonly number[]).includes(n))
      .catch(defaultPageSize),
  });
  const parsed = schema.parse({
    sort: search.get("sort") ?? undefined,
    dir: search.get("dir") ?? undefined,
    page: search.get("page") ?? undefined,
    pageSize: search.get("size") ?? undefined,
  });
  // A direction without its column means nothing; use the column's default direction.
  const sortGiven = parsed.sort === search.get("sort");
  return { ...parsed, sort: parsed.sort as K, dir: sortGiven ? parsed.dir : defaultDir };
}

/** Limit and offset for a page, with the page clamped to the last one that has rows. */
export function pageWindow(params: TableParams, total: number) {
  const pageCount = Math.max(1, Math.ceil(total / params.pageSize));
  const page = Math.min(params.page, pageCount);
  return { page, pageCount, limit: params.pageSize, offset: (page - 1) * params.pageSize };
}

/**
 * Counts, clamps the page and fetches that page. `fetchRows` receives the clamped window and the
 * (already validated) sort key and direction.
 */
export async function loadPage<K extends string, Row>(
  params: TableParams<K>,
  count: () => Promise<number>,
  fetchRows: (q: { sort: K; dir: SortDir; limit: number; offset: number }) => Promise<Row[]>,
): Promise<{ rows: Row[]; table: TableState<K> }> {
  const total = await count();
  const win = pageWindow(params, total);
  const rows = total === 0 ? [] : await fetchRows({ sort: params.sort, dir: params.dir, limit: win.limit, offset: win.offset });
  return { rows, table: { ...params, page: win.page, total, pageCount: win.pageCount } };
}

/** The current search string with some parameters replaced (null removes one). */
export function withParams(search: string | URLSearchParams, changes: Record<string, string | number | null>) {
  const next = new URLSearchParams(search);
  for (const [key, value] of Object.entries(changes)) {
    if (value === null) next.delete(key);
    else next.set(key, String(value));
  }
  const s = next.toString();
  return s ? `?${s}` : "?";
}

/**
 * Escapes `%`, `_` and `\` so a search text is matched literally by LIKE/ILIKE (PostgreSQL's default
 * escape character is the backslash). The result is still passed as a bound parameter.
 */
export function likeContains(text: string) {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}
