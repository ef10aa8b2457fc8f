// Who may do what. Shared by server and browser: the server enforces (requireUser), the UI only
// hides what a role cannot use.
import type { RoleName } from "#db/schema.ts";

export type { RoleName };
export const ROLES = ["technician", "officer", "manager", "admin"] as const satisfies readonly RoleName[];

export const ROLE_LABELS: Record<RoleName, string> = {
  technician: "Field technician",
  officer: "Environmental officer",
  manager: "Utility manager",
  admin: "Administrator",
};

/** Role groups used by routes. Every loader and action names one of these (or its own list). */
export const ANY_ROLE: readonly RoleName[] = ROLES;
export const FIELD_ROLES: readonly RoleName[] = ["technician", "officer", "admin"];
export const REVIEW_ROLES: readonly RoleName[] = ["officer", "admin"];
export const READ_ROLES: readonly RoleName[] = ["officer", "manager", "admin"];
export const ADMIN_ONLY: readonly RoleName[] = ["admin"];

export function isRole(value: unknown): value is RoleName {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

export function roleAllowed(role: RoleName, allowed: readonly RoleName[]): boolean {
  return allowed.includes(role);
}

/** Named capabilities the UI asks about; each maps to the roles that have it. */
export const CAPABILITIES = {
  "view-sites": ANY_ROLE,
  "upload-files": FIELD_ROLES,
  "record-visits": FIELD_ROLES,
  "review-exceedances": REVIEW_ROLES,
  "enter-lab-results": REVIEW_ROLES,
  "manage-alert-rules": REVIEW_ROLES,
  "approve-records": REVIEW_ROLES,
  "read-summaries": READ_ROLES,
  "administer": ADMIN_ONLY,
} as const satisfies Record<string, readonly RoleName[]>;

export type Capability = keyof typeof CAPABILITIES;

export function userCan(user: { role: RoleName } | null | undefined, capability: Capability): boolean {
  return !!user && roleAllowed(user.role, CAPABILITIES[capability]);
}
