import type { Capability } from "#app/utils/permissions.ts";

// The main navigation. Each entry names the capability it needs; the layout shows only the
// entries the signed-in role has. Add an entry when a new section lands.
export type NavItem = { to: string; label: string; capability: Capability; end?: boolean };

export const MAIN_NAV: NavItem[] = [
  { to: "/", label: "Overview", capability: "view-sites", end: true },
  { to: "/compare", label: "Compare", capability: "view-sites" },
  { to: "/summaries", label: "Weekly summaries", capability: "read-summaries" },
  { to: "/uploads", label: "Uploads", capability: "upload-files" },
  { to: "/lab", label: "Lab checks", capability: "enter-lab-results" },
  { to: "/exceedances", label: "Exceedances", capability: "review-exceedances" },
  // Every role sees the alert rules that tell it (technicians: sensor checks; managers: the rules naming them).
  { to: "/alert-rules", label: "Alert rules", capability: "view-sites" },
  { to: "/visits", label: "Field visits", capability: "record-visits" },
  { to: "/corrections", label: "Corrections", capability: "approve-records" },
];

export const ADMIN_NAV: NavItem[] = [
  { to: "/admin/people", label: "People", capability: "administer" },
  { to: "/admin/sites", label: "Sites", capability: "administer" },
  { to: "/admin/loggers", label: "Loggers", capability: "administer" },
  { to: "/admin/outbox", label: "Mail outbox", capability: "administer" },
];
