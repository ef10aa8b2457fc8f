import { data } from "react-router";
import { z } from "zod";
import { describeAuditEvents, listAuditEvents, type AuditEntity } from "#app/models/audit.server.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";

/** A record id from the URL: anything but a UUID is a page that does not exist (not a SQL error). */
export function idParam(value: string | undefined): string {
  const parsed = z.uuid().safeParse(value);
  if (!parsed.success) throw data("No such record.", { status: 404 });
  return parsed.data;
}

export function notFound(what: string): never {
  throw data(`No such ${what}.`, { status: 404 });
}

/** The record's recent audit events as plain lines, times in UTC (stated on the page). */
export async function auditLines(entity: AuditEntity, id: string) {
  return describeAuditEvents(await listAuditEvents(entity, id), (at) => formatInZone(at, "UTC"));
}

/**
 * For pages that take no form posts: still checks the role first (so a stray POST is a clean 403
 * for other roles), then answers 405 instead of React Router's "no action" error.
 */
export async function refusePost(request: Request) {
  await requireUser(request, { roles: ADMIN_ONLY });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}
