import { z } from "zod";

// The one place the server reads its settings. Validated once at start-up; a missing or malformed
// value stops the process with a message naming the variable.
const schema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().url().startsWith("postgres"),
  SESSION_SECRET: z
    .string()
    .min(32, "SESSION_SECRET must be at least 32 characters")
    .transform((s) => s.split(",").map((x) => x.trim()).filter(Boolean)),
  APP_ORIGIN: z.string().url().default("http://127.0.0.1:3210"),
  S3_ENDPOINT: z.string().url().optional(),
  S3_PUBLIC_ENDPOINT: z.string().url().optional(),
  S3_REGION: z.string().default("us-east-1"),
  S3_BUCKET: z.string().min(3).default("ripplemark"),
  S3_ACCESS_KEY_ID: z.string().min(1),
  S3_SECRET_ACCESS_KEY: z.string().min(1),
  S3_FORCE_PATH_STYLE: z.stringbool().default(true),
  SMTP_HOST: z.string().default("127.0.0.1"),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).default(54325),
  SMTP_SECURE: z.stringbool().default(false),
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  MAIL_FROM: z.string().default("Ripplemark <no-reply@ripplemark.invalid>"),
  // The SMTP fake's HTTP API; when set, admins can read captured mail in the app's outbox page.
  MAILBOX_URL: z.string().url().optional(),
  RUN_WORKER: z.stringbool().default(true),
  // The organisation's name on printed reports and in the weekly digest.
  ORG_NAME: z.string().trim().min(1).default("Marrowby Water Cooperative"),
});

export type Env = z.infer<typeof schema>;

export function parseEnv(source: Record<string, string | undefined>): Env {
  const result = schema.safeParse(source);
  if (!result.success) {
    const lines = result.error.issues.map((i) => `  ${i.path.join(".") || "(env)"}: ${i.message}`);
    throw new Error(`Invalid environment:\n${lines.join("\n")}`);
  }
  return result.data;
}

let cached: Env | undefined;

export function getEnv(): Env {
  cached ??= parseEnv(process.env);
  return cached;
}

/** The subset that may reach the browser (through the root loader). Nothing secret goes here. */
export function getPublicEnv() {
  const env = getEnv();
  return { NODE_ENV: env.NODE_ENV, APP_ORIGIN: env.APP_ORIGIN };
}
