// Runs one real ingest job (or a parse-only pass) in its own process so the benchmark can read
// this process's peak resident memory. Prints one JSON line.
import { performance } from "node:perf_hooks";
import Papa from "papaparse";
import { compileProfile, createParsedRow } from "#app/lib/import/rows.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { getObjectStream } from "#app/utils/storage.server.ts";

const [mode, arg, profileJson] = process.argv.slice(2);

if (mode === "ingest") {
  const { runIngestJob } = await import("#app/jobs/ingest.server.ts");
  const t0 = performance.now();
  await runIngestJob(arg);
  const ms = performance.now() - t0;
  console.log(JSON.stringify({ ms, maxRssKb: process.resourceUsage().maxRSS }));
} else if (mode === "parse") {
  const profile = JSON.parse(profileJson) as ImportProfile;
  const parser = compileProfile(profile, { now: Date.now() });
  const out = createParsedRow();
  const t0 = performance.now();
  const body = await getObjectStream(arg);
  body.setEncoding("utf8");
  let rows = 0;
  let ok = 0;
  let index = 0;
  await new Promise<void>((resolve, reject) => {
    Papa.parse(body as unknown as File, {
      delimiter: profile.delimiter,
      chunk(results) {
        for (const fields of results.data as string[][]) {
          index++;
          if (index - 1 < profile.dataStartRow || fields.length < 2) continue;
          rows++;
          if (parser.parseRow(fields, index, out)) ok++;
        }
      },
      complete: () => resolve(),
      error: reject,
    });
  });
  console.log(JSON.stringify({ ms: performance.now() - t0, rows, ok, maxRssKb: process.resourceUsage().maxRSS }));
}
process.exit(0);
