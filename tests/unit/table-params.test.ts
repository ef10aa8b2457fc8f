import { describe, expect, it } from "vitest";
import { likeContains, loadPage, pageWindow, parseTableParams, withParams } from "#app/utils/table-params.ts";

const options = { sortable: ["name", "email"] as const, defaultSort: "name" as const };
const parse = (qs: string) => parseTableParams(new URLSearchParams(qs), options);

describe("table parameters from the URL", () => {
  it("uses the defaults when nothing is given (page size 25)", () => {
    expect(parse("")).toEqual({ sort: "name", dir: "asc", page: 1, pageSize: 25 });
  });

  it("reads allow-listed sort keys, direction, page and size", () => {
    expect(parse("sort=email&dir=desc&page=3&size=50")).toEqual({ sort: "email", dir: "desc", page: 3, pageSize: 50 });
  });

  it("falls back per parameter for unknown or malformed values", () => {
    expect(parse("sort=password_hash&dir=desc")).toEqual({ sort: "name", dir: "asc", page: 1, pageSize: 25 });
    expect(parse("sort=name;drop table person&dir=sideways&page=-2&size=7")).toEqual({ sort: "name", dir: "asc", page: 1, pageSize: 25 });
    expect(parse("sort=email&page=1.5&size=abc").page).toBe(1);
    expect(parse("page=99999999999").page).toBe(1);
  });

  it("honours a column's own default direction", () => {
    const p = parseTableParams(new URLSearchParams(""), { sortable: ["at"] as const, defaultSort: "at", defaultDir: "desc" });
    expect(p.dir).toBe("desc");
  });

  it("clamps a page past the end to the last page", () => {
    expect(pageWindow({ sort: "name", dir: "asc", page: 9, pageSize: 25 }, 60)).toEqual({ page: 3, pageCount: 3, limit: 25, offset: 50 });
    expect(pageWindow({ sort: "name", dir: "asc", page: 1, pageSize: 25 }, 0)).toEqual({ page: 1, pageCount: 1, limit: 25, offset: 0 });
  });

  it("loads the clamped page and reports the totals", async () => {
    const seen: unknown[] = [];
    const result = await loadPage({ sort: "name", dir: "desc", page: 5, pageSize: 10 }, async () => 23, async (q) => {
      seen.push(q);
      return ["row"];
    });
    expect(seen).toEqual([{ sort: "name", dir: "desc", limit: 10, offset: 20 }]);
    expect(result.table).toEqual({ sort: "name", dir: "desc", page: 3, pageSize: 10, total: 23, pageCount: 3 });
  });

  it("builds links that keep other filters", () => {
    expect(withParams("?role=admin&page=4", { sort: "email", dir: "asc", page: null })).toBe("?role=admin&sort=email&dir=asc");
    expect(withParams("", { page: 2 })).toBe("?page=2");
  });

  it("escapes LIKE wildcards so a search is literal", () => {
    expect(likeContains("50%_off\\")).toBe("%50\\%\\_off\\\\%");
    expect(likeContains("O'Brien")).toBe("%O'Brien%");
  });
});
