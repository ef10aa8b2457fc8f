import type { RoleName } from "#db/schema.ts";
import { ROLE_LABELS } from "#app/utils/permissions.ts";

// Pieces shared by the alert-rule pages.

/** The caution beside every guideline value for drinking water. */
export function ScreeningCaution() {
  return (
    <p className="caution" data-testid="screening-caution">
      Levels taken from drinking-water guidance are <strong>screening values</strong>. Local permits and regulations, accredited
      laboratory analyses and licensed practice govern any decision about drinking water, discharges or public health.
    </p>
  );
}

export function RolesText({ roles }: { roles: readonly RoleName[] }) {
  if (!roles.length) return <span className="text-ink-500">nobody</span>;
  return <>{roles.map((r) => ROLE_LABELS[r]).join(", ")}</>;
}

/** "On" / "Off" with a mark that is not colour alone. */
export function EnabledMark({ enabled }: { enabled: boolean }) {
  return enabled ? (
    <span className="font-semibold text-reed-700">
      <span aria-hidden="true">● </span>On
    </span>
  ) : (
    <span className="text-ink-500">
      <span aria-hidden="true">○ </span>Off
    </span>
  );
}
