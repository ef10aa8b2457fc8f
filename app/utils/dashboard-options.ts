// Choices of the overview and compare pages that both the server (parsing the URL) and the browser
// (drawing the controls) need. Plain module: no server code.

export const OVERVIEW_SORTS = ["status", "name", "code", "latest"] as const;
export type OverviewSort = (typeof OVERVIEW_SORTS)[number];

export const MAX_COMPARE_SITES = 6;
