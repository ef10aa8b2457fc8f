// The exceedance-detection step of the `readings-changed` job: after readings of a site change (an
// ingest, a re-process, a recompute, a correction, readings flagged by a review), every enabled
// alert rule covering the site is evaluated over the changed stretch, widened on both sides by the
// rule's reach (minimum duration, window, run length) and by any stored event open at its start.
// Events are reconciled with the stored ones (app/lib/quality/reconcile.ts): re-evaluating the same
// readings changes nothing, a later file extends the same event, and a new event notifies the
// people the rule names and, when the rule asks for it, queues an e-mail — all in one transaction
// per rule and site, taken under an advisory lock so two workers cannot write the same events.
import { sql, type RawBuilder, type Transaction } from "kysely";
import type { AlertRuleTable, DB, SiteKind } from "#db/schema.ts";
import type { Selectable } from "kysely";
import {
  compensationRangeC,
  levelAtSiteReference,
  parseRuleCondition,
  type AlertParameterName,
  type RuleCondition,
} from "#app/lib/quality/alert-rules.ts";
import {
  defaultMaxGapMs,
  detectFlatLine,
  detectMissingData,
  detectOutOfRange,
  detectRateOfChange,
  detectSpikes,
  detectThreshold,
  FALLBACK_INTERVAL_MS,
  medianIntervalMs,
  type DetectedEvent,
  type Reading,
} from "#app/lib/quality/detection.ts";
import { reconcileEvents, type StoredEvent } from "#app/lib/quality/reconcile.ts";
import { db } from "#app/utils/db.server.ts";
import { queueAlertEmail } from "./alert-email.server.ts";
import type { ReadingsChange, ReadingsChangedStep } from "./readings-changed.server.ts";
import { notifyAboutEvent } from "#app/models/notification.server.ts";
import { enqueueSummariseWeeks } from "#app/models/weekly-summary.server.ts";

const HOUR_MS = 3_600_000;
const DAY_MS = 86_400_000;
/** When an event is still open at the window's end and more readings follow, look this much further. */
const EXTEND_STEP_MS = 30 * DAY_MS;

/** Reading columns by parameter: identifiers come only from this list. */
const COLUMN: Record<AlertParameterName, string> = {
  sc25: "sc25_us_cm",
  conductivity: "conductivity_us_cm",
  temperature: "temperature_c",
  tds: "tds_mg_l",
  salinity: "salinity_psu",
  ph: "ph",
  depth: "depth_m",
  battery: "battery_v",
};

type Rule = Selectable<AlertRuleTable>;
type SiteRow = {
  id: string;
  kind: SiteKind;
  compensation_method: "linear" | "natural-water";
  alpha_per_c: number;
  reference_c: number;
};

export type DetectOptions = {
  /** Queue e-mail for new events of rules that ask for it (ingests and corrections do; back-fills and the demo seed do not). */
  sendEmail: boolean;
  /** Only these rules (e.g. a rule just saved); default every enabled rule covering the site. */
  ruleIds?: readonly string[];
};

export type DetectSummary = {
  rules: number;
  inserted: number;
  updated: number;
  withdrawn: number;
  unchanged: number;
  /** The stretch of the events that were added, changed or withdrawn (null when none was). */
  changedFromMs: number | null;
  changedToMs: number | null;
};

const NOTHING: DetectSummary = { rules: 0, inserted: 0, updated: 0, withdrawn: 0, unchanged: 0, changedFromMs: null, changedToMs: null };

function widen(s: DetectSummary, fromMs: number, toMs: number) {
  s.changedFromMs = s.changedFromMs === null ? fromMs : Math.min(s.changedFromMs, fromMs);
  s.changedToMs = s.changedToMs === null ? toMs : Math.max(s.changedToMs, toMs);
}

export const detectExceedancesStep: ReadingsChangedStep = {
  name: "detect-exceedances",
  run: async (change) => {
    await detectExceedances(change, { sendEmail: change.reason === "ingest" || change.reason === "correction" });
  },
};

/** Enabled rules whose scope covers the site: listed, of its kind, or every site. */
export async function rulesCoveringSite(site: { id: string; kind: SiteKind }, ruleIds?: readonly string[]) {
  let q = db
    .selectFrom("alert_rule")
    .selectAll()
    .where("enabled", "=", true)
    .where((eb) =>
      eb.or([
        eb.and([eb("site_ids", "is", null), eb("site_kinds", "is", null)]),
        eb(eb.val(site.id), "=", eb.fn.any("site_ids")),
        eb(eb.val(site.kind), "=", eb.fn.any("site_kinds")),
      ]),
    );
  if (ruleIds) {
    if (!ruleIds.length) return [];
    q = q.where("id", "in", [...ruleIds]);
  }
  return q.orderBy("created_at").execute();
}

/** The site's logging interval over a stretch: the shortest among loggers deployed there (ms), or null. */
async function loggingIntervalMs(siteId: string, fromMs: number, toMs: number): Promise<number | null> {
  const row = await db
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select((eb) => eb.fn.min("l.logging_interval_s").as("s"))
    .where("d.site_id", "=", siteId)
    .where("d.deployed_from", "<=", new Date(toMs))
    .where((eb) => eb.or([eb("d.deployed_until", "is", null), eb("d.deployed_until", ">=", new Date(fromMs))]))
    .executeTakeFirst();
  const s = row?.s === null || row?.s === undefined ? null : Number(row.s);
  return s && s > 0 ? s * 1000 : null;
}

type Loaded = { times: number[]; values: number[]; flagged: boolean[] };

/**
 * One parameter's readings in [from, to], oldest first, one per instant (two loggers overlapping at a
 * swap: the first by id), with whether each is flagged. Fetched as three arrays in one row: far less
 * work for the driver than one row per reading (a year of 1-minute readings is half a million).
 */
async function loadReadings(siteId: string, parameter: AlertParameterName, fromMs: number, toMs: number): Promise<Loaded> {
  const c: RawBuilder<unknown> = sql.ref(`r.${COLUMN[parameter]}`);
  const { rows } = await sql<{ t: number[] | null; v: number[] | null; f: boolean[] | null }>`
    select array_agg(s.t order by s.time) as t, array_agg(s.v order by s.time) as v, array_agg(s.f order by s.time) as f
    from (
      select distinct on (r.time) r.time, (date_part('epoch', r.time) * 1000)::float8 as t, ${c}::float8 as v, (r.quality_flag is not null) as f
      from readings r
      where r.site_id = ${siteId} and r.time >= ${new Date(fromMs)} and r.time <= ${new Date(toMs)} and ${c} is not null
      order by r.time, r.logger_id
    ) s`.execute(db);
  const row = rows[0];
  return { times: row?.t ?? [], values: row?.v ?? [], flagged: row?.f ?? [] };
}

function toReadings(l: Loaded, includeFlagged: boolean): Reading[] {
  const out: Reading[] = [];
  for (let i = 0; i < l.times.length; i++) {
    if (!includeFlagged && l.flagged[i]) continue;
    out.push({ timeMs: Math.round(l.times[i]), value: l.values[i] });
  }
  return out;
}

function sliceByTime(readings: Reading[], fromMs: number, toMs: number) {
  let lo = 0;
  let hi = readings.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (readings[mid].timeMs < fromMs) lo = mid + 1;
    else hi = mid;
  }
  let end = lo;
  while (end < readings.length && readings[end].timeMs <= toMs) end++;
  return readings.slice(lo, end);
}

type Loader = (parameter: AlertParameterName, fromMs: number, toMs: number, includeFlagged: boolean) => Promise<Reading[]>;

/**
 * Several rules usually watch the same parameter (the sensor checks all read conductivity): one
 * load per parameter serves them all. Loads are padded so the slightly different windows of the
 * rules fall inside the first one.
 */
function cachedLoader(siteId: string): Loader {
  type Entry = { fromMs: number; toMs: number; loaded: Loaded; views: Map<boolean, Reading[]> };
  const cache = new Map<AlertParameterName, Entry>();
  return async (parameter, fromMs, toMs, includeFlagged) => {
    let c = cache.get(parameter);
    if (!c || c.fromMs > fromMs || c.toMs < toMs) {
      const from = Math.min(fromMs, c?.fromMs ?? fromMs) - 2 * DAY_MS;
      const to = Math.max(toMs, c?.toMs ?? toMs) + 2 * DAY_MS;
      c = { fromMs: from, toMs: to, loaded: await loadReadings(siteId, parameter, from, to), views: new Map() };
      cache.set(parameter, c);
    }
    let view = c.views.get(includeFlagged);
    if (!view) {
      view = toReadings(c.loaded, includeFlagged);
      c.views.set(includeFlagged, view);
    }
    return sliceByTime(view, fromMs, toMs);
  };
}

async function hasReadingsAfter(siteId: string, parameter: AlertParameterName, afterMs: number) {
  const c: RawBuilder<unknown> = sql.ref(`r.${COLUMN[parameter]}`);
  const { rows } = await sql`select 1 from readings r where r.site_id = ${siteId} and r.time > ${new Date(afterMs)} and ${c} is not null limit 1`.execute(db);
  return rows.length > 0;
}

/** How far a rule looks across readings: what a window must add on each side to see an event whole. */
export function ruleReachMs(rc: RuleCondition, intervalMs: number): number {
  switch (rc.condition) {
    case "above":
    case "below":
      return rc.params.minDurationMin * 60_000;
    case "rate-of-change":
      return rc.params.windowMin * 60_000;
    case "flat-line":
      return rc.params.readings * intervalMs;
    case "missing-data":
      return rc.params.intervals * intervalMs;
    default:
      return 2 * intervalMs;
  }
}

/** The levels a rule applies at a site (thresholds stated at another reference temperature converted). */
export function levelsAtSite(rule: Pick<Rule, "parameter">, rc: RuleCondition, site: SiteRow): { threshold: number | null; clear: number | null } {
  if (rc.condition === "above" || rc.condition === "below") {
    const at = rule.parameter === "sc25" ? rc.params.referenceC : undefined;
    return { threshold: levelAtSiteReference(rc.params.threshold, at, site), clear: levelAtSiteReference(rc.params.clear, at, site) };
  }
  if (rc.condition === "out-of-range") return { threshold: rc.params.max, clear: rc.params.min };
  if (rc.condition === "temperature-range") {
    const [min, max] = compensationRangeC(site);
    return { threshold: max, clear: min };
  }
  return { threshold: null, clear: null };
}

function runCondition(rc: RuleCondition, readings: Reading[], levels: { threshold: number | null; clear: number | null }, intervalMs: number): DetectedEvent[] {
  const maxGapMs = defaultMaxGapMs(intervalMs);
  switch (rc.condition) {
    case "above":
    case "below":
      return detectThreshold(
        readings,
        { direction: rc.condition, threshold: levels.threshold!, clear: levels.clear!, minDurationMs: rc.params.minDurationMin * 60_000 },
        { maxGapMs },
      );
    case "rate-of-change":
      return detectRateOfChange(readings, { change: rc.params.change, windowMs: rc.params.windowMin * 60_000, direction: rc.params.direction }, { maxGapMs });
    case "flat-line":
      return detectFlatLine(readings, { readings: rc.params.readings, tolerance: rc.params.tolerance }, { maxGapMs });
    case "spike":
      return detectSpikes(readings, { jump: rc.params.jump }, { maxGapMs });
    case "out-of-range":
      return detectOutOfRange(readings, { min: rc.params.min, max: rc.params.max }, { maxGapMs });
    case "temperature-range":
      return detectOutOfRange(readings, { min: levels.clear!, max: levels.threshold! }, { maxGapMs });
    case "missing-data":
      return detectMissingData(readings, { intervals: rc.params.intervals, intervalMs });
  }
}

async function storedEvents(trx: Transaction<DB> | typeof db, ruleId: string, siteId: string, fromMs: number, toMs: number): Promise<StoredEvent[]> {
  const rows = await trx
    .selectFrom("exceedance")
    .select(["id", "started_at", "ended_at", "last_reading_at", "peak_value", "peak_at", "status", "outcome", "comment", "closed_at"])
    .where("rule_id", "=", ruleId)
    .where("site_id", "=", siteId)
    .where("started_at", "<=", new Date(toMs))
    .where((eb) => eb(eb.fn.coalesce("ended_at", "last_reading_at"), ">=", new Date(fromMs)))
    .orderBy("started_at")
    .execute();
  return rows.map((r) => ({
    id: r.id,
    startMs: r.started_at.getTime(),
    endMs: r.ended_at ? r.ended_at.getTime() : null,
    lastMs: r.last_reading_at.getTime(),
    peakValue: r.peak_value,
    peakMs: r.peak_at.getTime(),
    status: r.status,
    reviewed: r.outcome !== null || r.comment !== "" || r.closed_at !== null,
  }));
}

/** The earliest stored, not withdrawn event of the rule at the site still reaching `atMs` from before it. */
async function openBefore(ruleId: string, siteId: string, atMs: number) {
  return db
    .selectFrom("exceedance")
    .select("started_at")
    .where("rule_id", "=", ruleId)
    .where("site_id", "=", siteId)
    .where("status", "<>", "withdrawn")
    .where("started_at", "<", new Date(atMs))
    .where((eb) => eb.or([eb("ended_at", "is", null), eb("ended_at", ">=", new Date(atMs))]))
    .orderBy("started_at")
    .limit(1)
    .executeTakeFirst();
}

function eventColumns(e: DetectedEvent) {
  return {
    started_at: new Date(e.startMs),
    ended_at: e.endMs === null ? null : new Date(e.endMs),
    last_reading_at: new Date(e.lastMs),
    duration_s: ((e.endMs ?? e.lastMs) - e.startMs) / 1000,
    peak_value: e.peakValue,
    peak_at: new Date(e.peakMs),
  };
}

function auditValues(e: { started_at: Date; ended_at: Date | null; peak_value: number; peak_at: Date; status?: string }) {
  return {
    started_at: e.started_at.toISOString(),
    ended_at: e.ended_at ? e.ended_at.toISOString() : null,
    peak_value: e.peak_value,
    peak_at: e.peak_at.toISOString(),
    ...(e.status ? { status: e.status } : {}),
  };
}

/** Evaluates one rule at one site around a change and writes the outcome. */
async function detectRule(
  site: SiteRow,
  rule: Rule,
  change: ReadingsChange,
  intervalHintMs: number | null,
  options: DetectOptions,
  load: Loader,
): Promise<DetectSummary> {
  const summary: DetectSummary = { ...NOTHING, rules: 1 };
  const rc = parseRuleCondition(rule.condition, rule.params);
  if (!rc || !(rule.parameter in COLUMN)) {
    console.error(`[detect] rule ${rule.id} has settings that do not fit its condition; skipped`);
    return summary;
  }
  const includeFlagged = rc.condition === "missing-data"; // a flagged reading was still logged
  let intervalMs = intervalHintMs ?? FALLBACK_INTERVAL_MS;
  const margin = () => ruleReachMs(rc, intervalMs) + 2 * defaultMaxGapMs(intervalMs) + HOUR_MS;

  // Widen: back over any stored event still open at the window's start (and a margin before it).
  let fromMs = change.fromMs - margin();
  for (let k = 0; k < 20; k++) {
    const open = await openBefore(rule.id, site.id, fromMs);
    if (!open) break;
    fromMs = open.started_at.getTime() - margin();
  }
  let toMs = change.toMs + margin();
  let readings = await load(rule.parameter, fromMs, toMs, includeFlagged);
  if (intervalHintMs === null) intervalMs = medianIntervalMs(readings) ?? FALLBACK_INTERVAL_MS;
  const levels = levelsAtSite(rule, rc, site);
  let events = runCondition(rc, readings, levels, intervalMs);
  // Forward: an event still open at the window's end continues into later readings.
  while (events.length && events[events.length - 1].endMs === null && (await hasReadingsAfter(site.id, rule.parameter, toMs))) {
    const more = await load(rule.parameter, toMs + 1, toMs + EXTEND_STEP_MS, includeFlagged);
    toMs += EXTEND_STEP_MS;
    const last = readings.length ? readings[readings.length - 1].timeMs : -Infinity;
    readings = readings.concat(more.filter((r) => r.timeMs > last));
    events = runCondition(rc, readings, levels, intervalMs);
  }

  await db.transaction().execute(async (trx) => {
    await sql`select pg_advisory_xact_lock(hashtext(${`detect:${rule.id}:${site.id}`}))`.execute(trx);
    const stored = await storedEvents(trx, rule.id, site.id, fromMs, toMs);
    // Only events that start among the changed readings may be withdrawn; the margins are context.
    const plan = reconcileEvents(stored, events, { fromMs: change.fromMs, toMs: change.toMs });
    summary.unchanged = plan.unchanged.length;

    for (const s of plan.unchanged) {
      // Same times and peak; the levels may differ after the rule was edited.
      const row = await trx.selectFrom("exceedance").select(["threshold_value", "clear_value"]).where("id", "=", s.id).executeTakeFirstOrThrow();
      if (row.threshold_value !== levels.threshold || row.clear_value !== levels.clear) {
        await trx.updateTable("exceedance").set({ threshold_value: levels.threshold, clear_value: levels.clear, updated_at: new Date() }).where("id", "=", s.id).execute();
        await trx
          .insertInto("exceedance_audit")
          .values({
            exceedance_id: s.id,
            person_id: null,
            action: "levels",
            before: JSON.stringify({ threshold_value: row.threshold_value, clear_value: row.clear_value }),
            after: JSON.stringify({ threshold_value: levels.threshold, clear_value: levels.clear }),
          })
          .execute();
      }
    }

    for (const { stored: s, event } of plan.updates) {
      const cols = eventColumns(event);
      const status = s.status === "withdrawn" ? "open" : s.status;
      await trx
        .updateTable("exceedance")
        .set({ ...cols, status, threshold_value: levels.threshold, clear_value: levels.clear, updated_at: new Date() })
        .where("id", "=", s.id)
        .execute();
      await trx
        .insertInto("exceedance_audit")
        .values({
          exceedance_id: s.id,
          person_id: null,
          action: s.status === "withdrawn" ? "found-again" : "extended",
          before: JSON.stringify(
            auditValues({ started_at: new Date(s.startMs), ended_at: s.endMs === null ? null : new Date(s.endMs), peak_value: s.peakValue, peak_at: new Date(s.peakMs), status: s.status }),
          ),
          after: JSON.stringify(auditValues({ ...cols, status })),
        })
        .execute();
      summary.updated++;
      widen(summary, Math.min(s.startMs, event.startMs), Math.max(s.endMs ?? s.lastMs, event.endMs ?? event.lastMs));
    }

    for (const s of plan.withdrawals) {
      await trx.updateTable("exceedance").set({ status: "withdrawn", updated_at: new Date() }).where("id", "=", s.id).execute();
      await trx
        .insertInto("exceedance_audit")
        .values({ exceedance_id: s.id, person_id: null, action: "withdrawn", before: JSON.stringify({ status: s.status }), after: JSON.stringify({ status: "withdrawn" }) })
        .execute();
      summary.withdrawn++;
      widen(summary, s.startMs, s.endMs ?? s.lastMs);
    }

    for (const event of plan.inserts) {
      const cols = eventColumns(event);
      const row = await trx
        .insertInto("exceedance")
        .values({
          ...cols,
          rule_id: rule.id,
          site_id: site.id,
          parameter: rule.parameter,
          condition: rule.condition,
          threshold_value: levels.threshold,
          clear_value: levels.clear,
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      await trx
        .insertInto("exceedance_audit")
        .values({ exceedance_id: row.id, person_id: null, action: "detected", before: null, after: JSON.stringify(auditValues({ ...cols, status: "open" })) })
        .execute();
      await notifyAboutEvent(trx, { exceedanceId: row.id, siteId: site.id, roles: rule.notify_roles });
      if (rule.email && options.sendEmail) await queueAlertEmail(trx, rule, row.id);
      summary.inserted++;
      widen(summary, event.startMs, event.endMs ?? event.lastMs);
    }
  });
  return summary;
}

/** Evaluates the rules covering a site over a changed stretch of its readings. */
export async function detectExceedances(change: ReadingsChange, options: DetectOptions): Promise<DetectSummary> {
  const total: DetectSummary = { ...NOTHING };
  const site = await db
    .selectFrom("site")
    .select(["id", "kind", "compensation_method", "alpha_per_c", "reference_c"])
    .where("id", "=", change.siteId)
    .executeTakeFirst();
  if (!site) return total;
  const rules = await rulesCoveringSite(site, options.ruleIds);
  if (!rules.length) return total;
  const intervalMs = await loggingIntervalMs(site.id, change.fromMs, change.toMs);
  const load = cachedLoader(site.id);
  for (const rule of rules) {
    const t0 = performance.now();
    const s = await detectRule(site, rule, change, intervalMs, options, load);
    if (process.env.DETECT_TIMINGS === "1") console.error(`[detect] ${site.id} ${rule.name}: ${Math.round(performance.now() - t0)} ms`, s);
    total.rules += s.rules;
    total.inserted += s.inserted;
    total.updated += s.updated;
    total.withdrawn += s.withdrawn;
    total.unchanged += s.unchanged;
    if (s.changedFromMs !== null && s.changedToMs !== null) widen(total, s.changedFromMs, s.changedToMs);
  }
  return total;
}

/** Every rule (or the given ones) over a site's whole record: the demo seed and a newly saved rule use this. */
export async function detectOverSiteHistory(siteId: string, options: DetectOptions) {
  const range = await db
    .selectFrom("readings")
    .select((eb) => [eb.fn.min("time").as("first"), eb.fn.max("time").as("last")])
    .where("site_id", "=", siteId)
    .executeTakeFirst();
  if (!range?.first || !range.last) return { ...NOTHING };
  return detectExceedances(
    { siteId, fromMs: new Date(range.first as Date).getTime(), toMs: new Date(range.last as Date).getTime(), reason: "manual" },
    options,
  );
}

/**
 * One rule over the whole record of every site it covers: after a rule is created or changed, so
 * its events reflect the settings now in force. No e-mail: the events are history, listed in the app.
 */
export async function evaluateRuleOverHistory(ruleId: string) {
  const rule = await db.selectFrom("alert_rule").select(["id", "enabled"]).where("id", "=", ruleId).executeTakeFirst();
  if (!rule?.enabled) return;
  const sites = await db.selectFrom("site").select("id").orderBy("code").execute();
  for (const s of sites) {
    const result = await detectOverSiteHistory(s.id, { sendEmail: false, ruleIds: [ruleId] });
    // The weekly summaries count events: bring the weeks whose events changed up to date.
    if (result.changedFromMs !== null && result.changedToMs !== null) await enqueueSummariseWeeks(s.id, result.changedFromMs, result.changedToMs);
  }
}
