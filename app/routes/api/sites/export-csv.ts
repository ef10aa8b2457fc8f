import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/export-csv";
import { csvSafeCell, toCsvLine } from "#app/lib/import/csv.ts";
import { MAX_RANGE_MS, parseInstant } from "#app/lib/series/ranges.ts";
import { describeCompensation } from "#app/jobs/derive.server.ts";
import { deploymentsOverlapping, exportPages, loggingIntervalOf, settingsSnapshots } from "#app/models/series.server.ts";
import { findSite } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";

// GET /api/sites/:siteId/export.csv?from=…&to=… — every reading of the range at full resolution,
// raw and derived, streamed page by page (consecutive time windows of the primary key) so a
// site-year never sits in memory. A few "#" lines name the site, the range, the units and the compensation method of
// each settings snapshot; then one header row and one row per reading. Every text cell goes through
// csvSafeCell, so a value that looks like a spreadsheet formula is neutralised.
export const EXPORT_COLUMNS = [
  "time_utc",
  "time_local",
  "logger",
  "conductivity_at_temperature_us_cm",
  "logger_specific_conductance_us_cm",
  "temperature_c",
  "ph",
  "depth_m",
  "battery_v",
  "specific_conductance_us_cm",
  "specific_conductance_uncorrected_us_cm",
  "correction_us_cm",
  "tds_estimate_mg_l",
  "salinity_estimate_pss78",
  "settings_snapshot",
  "approved",
  "quality_flag",
] as const;

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: ANY_ROLE });
  const id = z.uuid().safeParse(params.siteId);
  if (!id.success) throw data({ error: "No such site." }, { status: 404 });
  const site = await findSite(id.data);
  if (!site) throw data({ error: "No such site." }, { status: 404 });
  const url = new URL(request.url);
  const fromMs = parseInstant(url.searchParams.get("from"), site.time_zone);
  const toMs = parseInstant(url.searchParams.get("to"), site.time_zone);
  if (fromMs === null || toMs === null || toMs <= fromMs || toMs - fromMs > MAX_RANGE_MS) {
    return Response.json({ error: "Give from and to as ISO date-times (to after from, at most 20 years apart)." }, { status: 400 });
  }
  const snapshots = await settingsSnapshots(site.id);
  const from = new Date(fromMs).toISOString();
  const to = new Date(toMs).toISOString();
  const preamble = [
    `# Ripplemark export: ${site.code} ${site.name}`,
    `# Readings from ${from} to ${to} (end excluded); time_utc in UTC, time_local at the site's clock (${site.time_zone})`,
    `# Units: conductivity and specific conductance µS/cm; temperature °C; depth m; battery V; TDS mg/L; salinity on the practical salinity scale (PSS-78, no unit)`,
    `# Specific conductance at the reference temperature, TDS and salinity are derived from the raw values; specific_conductance_us_cm = uncorrected + correction (field-visit corrections); settings_snapshot names the settings used:`,
    ...snapshots.map((s) => `#   snapshot ${s.id}: ${describeCompensation(s)}; TDS factor ${s.tds_factor}`),
    `# Current settings: ${describeCompensation(site)}; TDS factor ${site.tds_factor}`,
    `# TDS and salinity are screening estimates; accredited laboratories and local regulations govern.`,
    `# quality_flag empty = no flag`,
    `# approved = yes inside a period of record (between two field visits) an officer has reviewed and approved; empty otherwise`,
  ].map((l) => csvSafeCell(l));

  const encoder = new TextEncoder();
  const loggingIntervalS = loggingIntervalOf(await deploymentsOverlapping(site.id, fromMs, toMs));
  const pages = exportPages(site.id, fromMs, toMs, site.time_zone, { loggingIntervalS });
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      controller.enqueue(encoder.encode("\uFEFF" + preamble.join("\r\n") + "\r\n" + toCsvLine(EXPORT_COLUMNS) + "\r\n"));
    },
    async pull(controller) {
      try {
        const next = await pages.next();
        if (next.done) {
          controller.close();
          return;
        }
        let chunk = "";
        for (const r of next.value) {
          // Times and numbers come ready from SQL (see ExportRow); the two text cells are neutralised
          // against formulas and quoted as needed.
          chunk += `${r.times},${toCsvLine([csvSafeCell(r.serial ?? "")])},${r.numbers},${r.approved ? "yes" : ""},${toCsvLine([csvSafeCell(r.quality_flag ?? "")])}\r\n`;
        }
        controller.enqueue(encoder.encode(chunk));
      } catch (error) {
        controller.error(error);
      }
    },
    async cancel() {
      await pages.return(undefined);
    },
  });
  const name = `${site.code}-${from.slice(0, 10)}-to-${to.slice(0, 10)}.csv`.replace(/[^\w.-]+/g, "_");
  return new Response(stream, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${name}"`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "no-store",
    },
  });
}
