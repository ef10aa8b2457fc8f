// A person's account status as the administration pages show it; computed from the person row
// (disabled_at, whether a password has been chosen). Shared by browser and server.
export const PERSON_STATUSES = ["active", "invited", "disabled"] as const;
export type PersonStatus = (typeof PERSON_STATUSES)[number];

export const PERSON_STATUS_LABELS: Record<PersonStatus, string> = {
  active: "Active",
  invited: "Invitation pending",
  disabled: "Disabled",
};
