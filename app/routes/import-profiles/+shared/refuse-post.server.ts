import { data } from "react-router";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";

/**
 * For upload and profile pages that take no form posts: the role check still comes first (a stray
 * POST from another role is a clean 403), then 405 instead of React Router's "no action" error.
 */
export async function refusePost(request: Request) {
  await requireUser(request, { roles: FIELD_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}
