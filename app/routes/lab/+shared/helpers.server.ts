import { data } from "react-router";
import { z } from "zod";
import { listSiteOptions } from "#app/models/site.server.ts";

/** A record id from the URL: anything but a UUID is a page that does not exist (not a SQL error). */
export function sampleIdParam(value: string | undefined): string {
  const parsed = z.uuid().safeParse(value);
  if (!parsed.success) throw data("No such lab sample.", { status: 404 });
  return parsed.data;
}

export function sampleNotFound(): never {
  throw data("No such lab sample.", { status: 404 });
}

/** Every site for the entry form's picker, with the zone its wall times are read in. */
export async function entrySites() {
  const rows = await listSiteOptions();
  return rows.map((s) => ({ id: s.id, code: s.code, name: s.name, timeZone: s.time_zone }));
}
