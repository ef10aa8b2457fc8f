import { Link } from "react-router";
import type { Route } from "./+types/profiles";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { countProfiles, listProfilesPage, parseSettings, PROFILE_SORT_KEYS } from "#app/models/import-profile.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { columnsSummary, DELIMITERS, delimiterName } from "./+shared/profile-form.ts";
import { refusePost } from "./+shared/refuse-post.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Import profiles · Ripplemark" }];

export async function action({ request }: Route.ActionArgs) {
  return refusePost(request);
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: FIELD_ROLES });
  const params = parseTableParams(new URL(request.url).searchParams, { sortable: PROFILE_SORT_KEYS, defaultSort: "name" });
  const { rows, table } = await loadPage(params, () => countProfiles(), (q) => listProfilesPage(q));
  return {
    profiles: rows.map((p) => {
      const settings = parseSettings(p.settings);
      return {
        id: p.id,
        name: p.name,
        createdBy: p.createdBy,
        updated: formatInZone(p.updated_at, "UTC"),
        columns: settings ? columnsSummary(settings) : null,
        layout: settings ? DELIMITERS[delimiterName(settings.delimiter)].label : null,
      };
    }),
    table,
  };
}

type ProfileRow = Route.ComponentProps["loaderData"]["profiles"][number];

const columns: Column<ProfileRow>[] = [
  {
    key: "name",
    header: "Name",
    sortable: true,
    rowHeader: true,
    render: (p) => (
      <Link to={`/import-profiles/${p.id}`} className="font-semibold text-lake-700 underline">
        {p.name}
      </Link>
    ),
  },
  {
    key: "columns",
    header: "Columns read",
    render: (p) =>
      p.columns ? (
        <>
          {p.columns}
          <span className="block text-sm text-ink-500">{p.layout}</span>
        </>
      ) : (
        <span className="text-brick-700">Settings no longer valid: open and save again</span>
      ),
  },
  { key: "createdBy", header: "Created by", sortable: true, render: (p) => p.createdBy ?? <span className="text-ink-500">—</span> },
  { key: "updated", header: "Last changed", sortable: true, firstDir: "desc", render: (p) => p.updated },
];

export default function ImportProfiles({ loaderData }: Route.ComponentProps) {
  const { profiles, table } = loaderData;
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div>
          <h1>Import profiles</h1>
          <p className="text-ink-700">How Ripplemark reads each layout of logger file. Uploads pick the profile whose header line matches.</p>
        </div>
        <Link to="/import-profiles/new" className="btn">New profile</Link>
      </div>
      <DataTable
        columns={columns}
        rows={profiles}
        rowKey={(p) => p.id}
        table={table}
        caption="Import profiles"
        empty="No profiles yet. Make one from a logger file."
      />
    </div>
  );
}
