// Test-side defaults matching docker-free-scripts/lib.sh, so `npx vitest` works once the scripts have
// started PostgreSQL and the fakes. The scripts export the same names.
export const PG = {
  host: "127.0.0.1",
  port: Number(process.env.PG_PORT ?? 54329),
  user: process.env.PG_USER ?? "ripplemark",
  password: process.env.PG_PASSWORD ?? "ripplemark-local",
};

export function databaseUrl(database: string) {
  return `postgres://${PG.user}:${encodeURIComponent(PG.password)}@${PG.host}:${PG.port}/${database}`;
}

export const TEMPLATE_DB = "rm_test_template";

/** Sets every variable the app's env module needs (a test file may then override DATABASE_URL). */
export function applyTestEnv(databaseName: string) {
  const appPort = process.env.APP_PORT ?? "3210";
  Object.assign(process.env, {
    NODE_ENV: "test",
    DATABASE_URL: databaseUrl(databaseName),
    SESSION_SECRET: process.env.SESSION_SECRET ?? "test-secret-test-secret-test-secret-0123456789",
    APP_ORIGIN: process.env.APP_ORIGIN ?? `http://127.0.0.1:${appPort}`,
    S3_ENDPOINT: process.env.S3_ENDPOINT ?? `http://127.0.0.1:${process.env.S3_FAKE_PORT ?? 54330}`,
    S3_BUCKET: process.env.S3_BUCKET ?? "ripplemark",
    S3_ACCESS_KEY_ID: "S3RVER",
    S3_SECRET_ACCESS_KEY: "S3RVER",
    SMTP_HOST: "127.0.0.1",
    SMTP_PORT: process.env.SMTP_FAKE_PORT ?? "54325",
    MAILBOX_URL: process.env.MAILBOX_URL ?? `http://127.0.0.1:${process.env.SMTP_FAKE_HTTP_PORT ?? 54326}`,
    AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true",
  });
}
