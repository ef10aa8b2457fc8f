import { useCallback, useEffect, useRef, useState } from "react";
import { spliceWindow, type SeriesPoint } from "#app/lib/series/bucketing.ts";
import type { SeriesParameter } from "#app/lib/series/parameters.ts";

// Fetches chart series from the series API in the browser: the whole range first, then — when a
// chart is zoomed — finer points for the zoomed window, spliced into the overview. No page
// navigation: the page's loader is not involved, only GET /api/sites/:siteId/series.

export type SeriesRequest = { key: string; siteId: string; parameter: SeriesParameter };

export type SeriesPayload = {
  parameter: SeriesParameter;
  unit: string;
  from: string;
  to: string;
  bucketSeconds: number;
  readings: number;
  gapSeconds: number;
  points: SeriesPoint[];
};

export type Range = { fromMs: number; toMs: number };

/** The point budget per series asked of the API (the API never sends more than 2,000). */
export const POINTS_PER_SERIES = 1500;

async function fetchSeries(r: SeriesRequest, range: Range, signal: AbortSignal): Promise<SeriesPayload> {
  const q = new URLSearchParams({
    parameter: r.parameter,
    from: new Date(Math.floor(range.fromMs)).toISOString(),
    to: new Date(Math.ceil(range.toMs)).toISOString(),
    points: String(POINTS_PER_SERIES),
  });
  const res = await fetch(`/api/sites/${encodeURIComponent(r.siteId)}/series?${q}`, { headers: { Accept: "application/json" }, signal });
  if (res.status === 401) throw new Error("Your session has ended: sign in again to load the charts.");
  if (!res.ok) throw new Error(`The chart data could not be loaded (${res.status}).`);
  return (await res.json()) as SeriesPayload;
}

export type SeriesState = {
  /** What each series shows now (the overview with the zoomed window's finer points spliced in). */
  shown: Record<string, SeriesPoint[]>;
  /** The latest answer per series (overview or zoomed window), for its resolution and counts. */
  meta: Record<string, SeriesPayload>;
  zoom: Range | null;
  status: "loading" | "ready" | "error";
  error: string | null;
  /** Call with the visible window whenever a chart's zoom changes (debounced here). */
  onZoom: (window: Range) => void;
};

export function useZoomableSeries(requests: readonly SeriesRequest[], range: Range): SeriesState {
  const [shown, setShown] = useState<Record<string, SeriesPoint[]>>({});
  const [meta, setMeta] = useState<Record<string, SeriesPayload>>({});
  const [zoom, setZoom] = useState<Range | null>(null);
  const [status, setStatus] = useState<SeriesState["status"]>("loading");
  const [error, setError] = useState<string | null>(null);
  const coarse = useRef<Record<string, SeriesPayload>>({});
  const zoomAbort = useRef<AbortController | null>(null);
  const zoomTimer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const requestsRef = useRef(requests);
  requestsRef.current = requests;
  const key = `${requests.map((r) => r.key).join(",")}|${range.fromMs}|${range.toMs}`;

  useEffect(() => {
    const ac = new AbortController();
    zoomAbort.current?.abort();
    setStatus("loading");
    setError(null);
    setZoom(null);
    Promise.all(requestsRef.current.map((r) => fetchSeries(r, range, ac.signal).then((p) => [r.key, p] as const)))
      .then((answers) => {
        coarse.current = Object.fromEntries(answers);
        setMeta(Object.fromEntries(answers));
        setShown(Object.fromEntries(answers.map(([k, p]) => [k, p.points])));
        setStatus("ready");
      })
      .catch((e: unknown) => {
        if (ac.signal.aborted) return;
        setError(e instanceof Error ? e.message : String(e));
        setStatus("error");
      });
    return () => ac.abort();
    // `key` stands for requests and range.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [key]);

  useEffect(() => () => {
    zoomAbort.current?.abort();
    if (zoomTimer.current) clearTimeout(zoomTimer.current);
  }, []);

  const onZoom = useCallback(
    (w: Range) => {
      if (zoomTimer.current) clearTimeout(zoomTimer.current);
      zoomTimer.current = setTimeout(() => {
        zoomAbort.current?.abort();
        const span = range.toMs - range.fromMs;
        if (w.toMs - w.fromMs >= span * 0.98) {
          // Back to the whole range: the overview already has it.
          setZoom(null);
          setMeta({ ...coarse.current });
          setShown(Object.fromEntries(Object.entries(coarse.current).map(([k, p]) => [k, p.points])));
          return;
        }
        const ac = new AbortController();
        zoomAbort.current = ac;
        setZoom(w);
        setStatus("loading");
        Promise.all(requestsRef.current.map((r) => fetchSeries(r, w, ac.signal).then((p) => [r.key, p] as const)))
          .then((answers) => {
            setMeta(Object.fromEntries(answers));
            setShown(
              Object.fromEntries(
                answers.map(([k, fine]) => [k, spliceWindow(coarse.current[k]?.points ?? [], fine.points, w.fromMs, w.toMs)]),
              ),
            );
            setStatus("ready");
          })
          .catch((e: unknown) => {
            if (ac.signal.aborted) return;
            setError(e instanceof Error ? e.message : String(e));
            setStatus("error");
          });
      }, 300);
    },
    [range.fromMs, range.toMs],
  );

  return { shown, meta, zoom, status, error, onZoom };
}

/** "every reading (672)" or "35,040 readings as the lowest and highest of each 2 h" — what a series shows. */
export function describeResolution(p: SeriesPayload | undefined): string {
  if (!p) return "loading";
  if (p.bucketSeconds === 0) return `every reading (${p.readings.toLocaleString("en-GB")})`;
  return `${p.readings.toLocaleString("en-GB")} readings, drawn as the lowest and highest of each ${formatSeconds(p.bucketSeconds)}`;
}

export function formatSeconds(s: number): string {
  if (s % 86_400 === 0) return s === 86_400 ? "day" : `${s / 86_400} days`;
  if (s % 3600 === 0) return s === 3600 ? "hour" : `${s / 3600} h`;
  if (s % 60 === 0) return s === 60 ? "minute" : `${s / 60} min`;
  return `${s} s`;
}
