import type { Route } from "./+types/template-csv";
import { labCsvTemplate } from "#app/lib/lab/csv.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";

// The CSV template for importing lab analyses: the column names and one invented example row.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  return new Response("\uFEFF" + labCsvTemplate(), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": 'attachment; filename="ripplemark-lab-analyses-template.csv"',
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "no-store",
    },
  });
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  return Response.json({ error: "This address takes no submissions." }, { status: 405, headers: { Allow: "GET, HEAD" } });
}
