import { Form, Link, NavLink, Outlet, useNavigation } from "react-router";
import type { Route } from "./+types/app-layout";
import { ADMIN_NAV, MAIN_NAV, type NavItem } from "#app/components/nav.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { unreadCount } from "#app/models/notification.server.ts";
import { ANY_ROLE, ROLE_LABELS, userCan } from "#app/utils/permissions.ts";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  // Only what the shell needs: no ids of other records, no e-mail of anyone else.
  // The unread count is one indexed count (a partial index on unread rows).
  return { user: { name: user.name, role: user.role, email: user.email }, unread: await unreadCount(user.id) };
}

function NavItems({ items, role }: { items: NavItem[]; role: Parameters<typeof userCan>[0] }) {
  return (
    <>
      {items
        .filter((i) => userCan(role, i.capability))
        .map((i) => (
          <li key={i.to}>
            <NavLink
              to={i.to}
              end={i.end}
              className={({ isActive }) =>
                `block rounded px-3 py-1.5 font-semibold ${isActive ? "bg-white text-ink-900" : "text-ink-100 hover:bg-ink-700"}`
              }
            >
              {i.label}
            </NavLink>
          </li>
        ))}
    </>
  );
}

export default function AppLayout({ loaderData }: Route.ComponentProps) {
  const { user, unread } = loaderData;
  const navigation = useNavigation();
  const showAdmin = userCan(user, "administer");
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:rounded focus:bg-white focus:p-2">
        Skip to content
      </a>
      <header className="no-print bg-ink-900 text-white">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-2">
          <Link to="/" className="flex items-center gap-2 text-lg font-bold tracking-tight">
            <img src="/favicon.svg" alt="" width={26} height={26} />
            Ripplemark
          </Link>
          <nav aria-label="Main" className="flex-1">
            <ul className="flex flex-wrap gap-1">
              <NavItems items={MAIN_NAV} role={user} />
            </ul>
          </nav>
          <div className="flex items-center gap-3 text-sm">
            <Link
              to="/notifications"
              className="inline-flex items-center gap-1 rounded px-2 py-1 hover:bg-ink-700"
              aria-label={unread ? `Notifications, ${unread} unread` : "Notifications, none unread"}
              data-testid="notifications-link"
            >
              <svg aria-hidden="true" width="18" height="18" viewBox="0 0 24 24" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round">
                <path d="M6 8a6 6 0 0 1 12 0c0 7 3 9 3 9H3s3-2 3-9" />
                <path d="M10.3 21a1.94 1.94 0 0 0 3.4 0" />
              </svg>
              {unread ? (
                <span className="rounded-full bg-white px-1.5 text-xs font-bold text-ink-900" data-testid="unread-count">{unread > 99 ? "99+" : unread}</span>
              ) : null}
            </Link>
            <Link to="/account" className="hover:underline" data-testid="current-user">
              {user.name} <span className="text-ink-300">· {ROLE_LABELS[user.role]}</span>
            </Link>
            <Form method="post" action="/sign-out">
              <button type="submit" className="rounded border border-ink-500 px-2 py-1 hover:bg-ink-700">
                Sign out
              </button>
            </Form>
          </div>
        </div>
        {showAdmin ? (
          <div className="bg-ink-800">
            <nav aria-label="Administration" className="mx-auto flex max-w-7xl items-center gap-2 px-4 py-1 text-sm">
              <span className="text-ink-300">Administration:</span>
              <ul className="flex flex-wrap gap-1">
                <NavItems items={ADMIN_NAV} role={user} />
              </ul>
            </nav>
          </div>
        ) : null}
        <div
          role="progressbar"
          aria-label="Loading page"
          aria-hidden={navigation.state === "idle"}
          className={`h-0.5 bg-reed-600 transition-all duration-500 ${navigation.state === "idle" ? "w-0 opacity-0" : "w-2/3"}`}
        />
      </header>
      <main id="main" className="mx-auto max-w-7xl px-4 py-6">
        <Outlet />
      </main>
    </div>
  );
}
