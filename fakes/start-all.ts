/**
 * Starts the S3 and SMTP fakes in one process, configured from the
 * environment (see fakes/README.md), and stops both on SIGINT/SIGTERM.
 *
 * Run: npx tsx fakes/start-all.ts
 */
import { s3FakeOptionsFromEnv, startS3Fake, type S3Fake } from "./s3/server.ts";
import { smtpFakeOptionsFromEnv, startSmtpFake, type SmtpFake } from "./smtp/server.ts";

const log = (line: string) => console.log(line);
let s3: S3Fake | undefined;
let smtp: SmtpFake | undefined;
let stopping = false;

async function stop(code: number) {
  if (stopping) return;
  stopping = true;
  // Closing waits for open keep-alive connections (the app's S3 client holds some); do not wait
  // for ever.
  setTimeout(() => process.exit(code), 3_000).unref();
  await Promise.allSettled([s3?.close(), smtp?.close()]);
  process.exit(code);
}

process.once("SIGINT", () => void stop(0));
process.once("SIGTERM", () => void stop(0));

const [s3Result, smtpResult] = await Promise.allSettled([
  startS3Fake({ ...s3FakeOptionsFromEnv(), logRefused: true, log }),
  startSmtpFake({ ...smtpFakeOptionsFromEnv(), log }),
]);
if (s3Result.status === "fulfilled") s3 = s3Result.value;
if (smtpResult.status === "fulfilled") smtp = smtpResult.value;
for (const result of [s3Result, smtpResult]) {
  if (result.status === "rejected") {
    const reason = result.reason instanceof Error ? result.reason.message : String(result.reason);
    console.error(`fakes: could not start: ${reason}`);
  }
}
if (!s3 || !smtp) await stop(1);

console.log(`s3 fake listening on ${s3!.url} (bucket ${s3!.bucket}, region ${s3!.region})`);
console.log(`smtp fake listening on smtp://127.0.0.1:${smtp!.smtpPort}, messages at ${smtp!.httpUrl}/messages`);
