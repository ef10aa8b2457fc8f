import { parseWithZod } from "@conform-to/zod/v4";
import { data } from "react-router";
import { z } from "zod";
import { toWallTime } from "#app/lib/zoned-time.ts";
import { visitSchema, type VisitInput } from "#app/lib/visits/visit-input.ts";
import { RecordLocked } from "#app/models/correction.server.ts";
import { VisitRefused, visitFormChoices, type VisitRecord } from "#app/models/field-visit.server.ts";
import type { VisitDefaults } from "./visit-form.tsx";

/** A visit id from the URL: anything but a UUID is a page that does not exist. */
export function visitIdParam(value: string | undefined): string {
  const parsed = z.uuid().safeParse(value);
  if (!parsed.success) throw data("No such visit.", { status: 404 });
  return parsed.data;
}

export function visitNotFound(): never {
  throw data("No such visit.", { status: 404 });
}

export async function formSites(personId: string) {
  return (await visitFormChoices(personId)).map((s) => ({
    id: s.id,
    code: s.code,
    name: s.name,
    timeZone: s.timeZone,
    loggers: s.loggers,
    currentLoggerId: s.currentLoggerId,
  }));
}

export type FormSites = Awaited<ReturnType<typeof formSites>>;

/**
 * Parses the visit form and runs `save`; refusals from the model (a locked period without a reason,
 * a logger not deployed then, a duplicate time) come back as field errors on the form.
 */
export async function handleVisitSubmit(formData: FormData, sites: FormSites, save: (input: VisitInput) => Promise<string>) {
  const schema = visitSchema(sites.map((s) => ({ id: s.id, timeZone: s.timeZone, loggerIds: s.loggers.map((l) => l.id) })));
  const submission = parseWithZod(formData, { schema });
  if (submission.status !== "success") return { ok: false as const, response: data({ result: submission.reply() }, { status: 400 }) };
  try {
    return { ok: true as const, id: await save(submission.value) };
  } catch (e) {
    if (e instanceof RecordLocked) {
      return { ok: false as const, response: data({ result: submission.reply({ fieldErrors: { reason: [e.message] } }) }, { status: 409 }) };
    }
    if (e instanceof VisitRefused) {
      if (e.status === 404 || e.status === 403) throw data(e.message, { status: e.status });
      const reply = e.field ? submission.reply({ fieldErrors: { [e.field]: [e.message] } }) : submission.reply({ formErrors: [e.message] });
      return { ok: false as const, response: data({ result: reply }, { status: e.status }) };
    }
    throw e;
  }
}

const str = (x: number | null | undefined) => (x === null || x === undefined ? undefined : String(x));

/** A stored visit as the form's strings. */
export function visitDefaults(v: VisitRecord): VisitDefaults {
  return {
    siteId: v.site_id,
    loggerId: v.logger_id,
    visitedAt: toWallTime(v.visited_at, v.site_time_zone),
    beforeSc: str(v.before_sc_us_cm),
    beforeTemperature: str(v.before_temperature_c),
    afterSc: str(v.after_sc_us_cm),
    afterTemperature: str(v.after_temperature_c),
    meterSc: str(v.meter_sc_us_cm),
    meterTemperature: str(v.meter_temperature_c),
    checks: v.checks.map((c) => ({ standard: c.standard, customValue: str(c.custom_value_us_cm), temperature: str(c.standard_temperature_c), sensor: str(c.sensor_us_cm) })),
    recalibrated: v.recalibrated,
    notes: v.notes,
    photoKeys: v.photo_keys,
  };
}
