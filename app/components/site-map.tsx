import { Link } from "react-router";
import { SITE_STATUS_LABELS, type SiteStatus } from "#app/lib/quality/site-status.ts";
import { StatusShape } from "./status-mark.tsx";

// A plain site map with no map tiles: each site placed by its coordinates on an equirectangular
// projection fitted to the sites' bounding box (longitude scaled by the cosine of the middle
// latitude so distances look right at this scale), with a scale bar. Every site is a link
// (focusable, named with its code, name and status).

export type MapSite = { code: string; name: string; latitude: number; longitude: number; status: SiteStatus };

const W = 640;
const H = 360;
const PAD = 36;
const EARTH_KM_PER_DEG = 111.32; // km per degree of latitude (mean; common practice)

export function projection(sites: readonly { latitude: number; longitude: number }[], width = W, height = H, pad = PAD) {
  const lats = sites.map((s) => s.latitude);
  const lons = sites.map((s) => s.longitude);
  const latMin = Math.min(...lats);
  const latMax = Math.max(...lats);
  const lonMin = Math.min(...lons);
  const lonMax = Math.max(...lons);
  const k = Math.cos((((latMin + latMax) / 2) * Math.PI) / 180);
  const spanX = Math.max((lonMax - lonMin) * k, 1e-4);
  const spanY = Math.max(latMax - latMin, 1e-4);
  const scale = Math.min((width - 2 * pad) / spanX, (height - 2 * pad) / spanY); // px per degree of latitude
  const offX = (width - spanX * scale) / 2;
  const offY = (height - spanY * scale) / 2;
  return {
    x: (lon: number) => offX + (lon - lonMin) * k * scale,
    y: (lat: number) => offY + (latMax - lat) * scale,
    kmPerPx: EARTH_KM_PER_DEG / scale,
  };
}

type Box = { x0: number; y0: number; x1: number; y1: number };
const overlaps = (a: Box, b: Box) => a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;

/**
 * Where each code label goes: to the right of its marker if that space is free, else left, above
 * or below — the first spot clear of every marker and of the labels already placed.
 */
export function placeLabels(points: { x: number; y: number; text: string }[], width = W, height = H) {
  const markers: Box[] = points.map((p) => ({ x0: p.x - 16, y0: p.y - 16, x1: p.x + 16, y1: p.y + 16 }));
  const placed: Box[] = [];
  return points.map((p) => {
    const w = p.text.length * 9 + 4;
    const candidates = [
      { x: p.x + 19, y: p.y + 5, anchor: "start" as const, box: { x0: p.x + 18, y0: p.y - 9, x1: p.x + 18 + w, y1: p.y + 8 } },
      { x: p.x - 19, y: p.y + 5, anchor: "end" as const, box: { x0: p.x - 18 - w, y0: p.y - 9, x1: p.x - 18, y1: p.y + 8 } },
      { x: p.x, y: p.y - 21, anchor: "middle" as const, box: { x0: p.x - w / 2, y0: p.y - 35, x1: p.x + w / 2, y1: p.y - 17 } },
      { x: p.x, y: p.y + 31, anchor: "middle" as const, box: { x0: p.x - w / 2, y0: p.y + 17, x1: p.x + w / 2, y1: p.y + 35 } },
    ];
    const inside = (b: Box) => b.x0 >= 0 && b.x1 <= width && b.y0 >= 0 && b.y1 <= height;
    const choice =
      candidates.find((c) => inside(c.box) && !markers.some((m, j) => points[j] !== p && overlaps(c.box, m)) && !placed.some((b) => overlaps(c.box, b))) ??
      candidates[0];
    placed.push(choice.box);
    return { x: choice.x, y: choice.y, anchor: choice.anchor };
  });
}

function niceKm(km: number) {
  const steps = [0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500, 1000];
  return steps.find((s) => s >= km) ?? steps[steps.length - 1];
}

export function SiteMap({ sites, title }: { sites: MapSite[]; title: string }) {
  if (!sites.length) return null;
  const p = projection(sites);
  const barKm = niceKm(p.kmPerPx * 120);
  const labels = placeLabels(sites.map((s) => ({ x: p.x(s.longitude), y: p.y(s.latitude), text: s.code })));
  const barPx = barKm / p.kmPerPx;
  return (
    <figure className="rounded-lg border border-ink-100 bg-white p-2">
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="group" aria-label={title}>
        <rect x={0} y={0} width={W} height={H} fill="#f3f6f8" rx={6} />
        {sites.map((s, i) => {
          const x = p.x(s.longitude);
          const y = p.y(s.latitude);
          const label = `${s.code} ${s.name}: ${SITE_STATUS_LABELS[s.status]}`;
          return (
            <Link key={s.code} to={`/sites/${s.code}`} aria-label={label} className="site-map-link">
              <title>{label}</title>
              <circle cx={x} cy={y} r={15} fill="white" stroke="#c5d1db" />
              <svg x={x - 8} y={y - 8} width={16} height={16} overflow="visible">
                <StatusShape status={s.status} />
              </svg>
              <text x={labels[i].x} y={labels[i].y} textAnchor={labels[i].anchor} fontSize={14} fontWeight={600} fill="#152431" paintOrder="stroke" stroke="#f3f6f8" strokeWidth={4}>
                {s.code}
              </text>
            </Link>
          );
        })}
        <g transform={`translate(${PAD}, ${H - 16})`} aria-hidden="true">
          <line x1={0} x2={barPx} y1={0} y2={0} stroke="#2f4556" strokeWidth={2} />
          <line x1={0} x2={0} y1={-5} y2={5} stroke="#2f4556" strokeWidth={2} />
          <line x1={barPx} x2={barPx} y1={-5} y2={5} stroke="#2f4556" strokeWidth={2} />
          <text x={barPx + 8} y={4} fontSize={12} fill="#2f4556">{barKm} km</text>
        </g>
        <text x={W - PAD} y={H - 12} fontSize={12} fill="#5b7387" textAnchor="end" aria-hidden="true">
          North is up · positions from site coordinates
        </text>
      </svg>
    </figure>
  );
}
