import { z } from "zod";
import { SITE_KINDS } from "#db/schema.ts";
import { canonicalTimeZone } from "#app/lib/zoned-time.ts";
import { ROLES } from "#app/utils/permissions.ts";

// Form schemas of the administration pages, shared by the browser (inline checks as people type)
// and the server (the real check). Checks that need the database (a taken e-mail, code or serial)
// are added by the actions as field errors.

const name = z.string({ error: "Enter a name" }).trim().min(1, "Enter a name").max(120, "Use at most 120 characters");
const email = z
  .string({ error: "Enter an e-mail address" })
  .trim()
  .min(1, "Enter an e-mail address")
  .max(254, "That e-mail address is too long")
  .pipe(z.email("Enter a valid e-mail address"));
const role = z.enum(ROLES, { error: "Choose a role" });

export const inviteSchema = z.object({ intent: z.literal("invite"), name, email, role });
export const roleSchema = z.object({ intent: z.literal("role"), role });
export const sitesSchema = z.object({
  intent: z.literal("sites"),
  siteIds: z.array(z.uuid("Choose sites from the list")).max(500).default([]),
});

// ---- sites ----

/** Decimal degrees with a sensible number of places (6 places ≈ 0.1 m). */
function degrees(label: string, limit: number, example: string) {
  return z
    .number({ error: (issue) => (issue.input === undefined ? `Enter the ${label}` : `Enter the ${label} in decimal degrees, such as ${example}`) })
    .min(-limit, `The ${label} must be between −${limit} and ${limit}`)
    .max(limit, `The ${label} must be between −${limit} and ${limit}`)
    .refine((v) => Math.abs(v * 1e6 - Math.round(v * 1e6)) < 1e-6, `Use at most 6 decimal places`);
}

export const SITE_CODE_MAX = 12;

export const siteSchema = z.object({
  code: z
    .string({ error: "Enter a site code" })
    .trim()
    .toUpperCase()
    .min(1, "Enter a site code")
    .max(SITE_CODE_MAX, `Use at most ${SITE_CODE_MAX} characters`)
    .regex(/^[A-Z0-9]+(-[A-Z0-9]+)*$/, "Use letters, digits and single dashes between them, such as QL-03"),
  name,
  kind: z.enum(SITE_KINDS, { error: "Choose what kind of site this is" }),
  latitude: degrees("latitude", 90, "51.4821"),
  longitude: degrees("longitude", 180, "-2.5917"),
  timeZone: z
    .string({ error: "Enter a time zone" })
    .trim()
    .min(1, "Enter a time zone")
    .transform((tz, ctx) => {
      const canonical = canonicalTimeZone(tz);
      if (!canonical) {
        ctx.addIssue({ code: "custom", message: "Enter a time zone name from the list, such as Europe/London" });
        return z.NEVER;
      }
      return canonical;
    }),
  notes: z.string().trim().max(2000, "Use at most 2000 characters").default(""),
});

// ---- loggers ----

export const loggerSchema = z.object({
  serial: z
    .string({ error: "Enter the serial number" })
    .trim()
    .min(1, "Enter the serial number")
    .max(40, "Use at most 40 characters")
    .regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, "Use letters, digits, dots, dashes and slashes"),
  model: z.string().trim().max(120, "Use at most 120 characters").default(""),
  intervalMinutes: z
    .number({ error: (issue) => (issue.input === undefined ? "Enter the logging interval" : "Enter a number of minutes, such as 15") })
    .positive("The interval must be more than zero")
    .max(1440, "Use at most 1440 minutes (one day)")
    .refine((m) => Math.abs(m * 60 - Math.round(m * 60)) < 1e-9, "Use a whole number of seconds (for example 0.5 = 30 s)"),
  notes: z.string().trim().max(2000, "Use at most 2000 characters").default(""),
});

export const deploySchema = z.object({
  intent: z.literal("deploy"),
  siteId: z.uuid({ error: "Choose a site" }),
  deployedFrom: z.string({ error: "Enter when the logger went in" }).trim().min(1, "Enter when the logger went in"),
});

export const endDeploymentSchema = z.object({
  intent: z.literal("end-deployment"),
  deployedUntil: z.string({ error: "Enter when the logger came out" }).trim().min(1, "Enter when the logger came out"),
});
