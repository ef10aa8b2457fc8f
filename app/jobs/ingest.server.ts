import { createHash } from "node:crypto";
import { performance } from "node:perf_hooks";
import { PassThrough, Transform, type Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import Papa from "papaparse";
import type { PoolClient } from "pg";
import { from as copyFrom } from "pg-copy-streams";
import { sql } from "kysely";
import { compileProfile, createParsedRow, diagnoseMostlyFailing, isBlankRow, type RowError } from "#app/lib/import/rows.ts";
import { importProfileSchema, type ImportProfile } from "#app/lib/import/profile.ts";
import { db } from "#app/utils/db.server.ts";
import { getObjectStream } from "#app/utils/storage.server.ts";
import { currentSettingsId } from "#app/models/derivation.server.ts";
import { Deriver } from "./derive.server.ts";
import { BinaryRowWriter, copyHeader, copyTrailer } from "./pg-binary-copy.ts";
import { withClient } from "./pg-client.server.ts";

/** A problem with the file or its profile: shown to the person, never retried. */
export class IngestProblem extends Error {}

export const MAX_STORED_ERRORS = 5_000;
const BATCH = 8_192;
/** Stop early when this share of the first EARLY_ROWS data rows is rejected. */
const EARLY_ROWS = 500;
const EARLY_REJECT_SHARE = 0.8;
/** At the end, a file where more than this share of rows failed is refused as a whole. */
const FINAL_REJECT_SHARE = 0.5;

export type { RowError };

export type IngestResult = {
  rowsTotal: number;
  accepted: number;
  rejected: number;
  duplicates: number;
  firstMs: number | null;
  lastMs: number | null;
  sha256: string;
};

type Progress = (p: { rows: number; bytes: number }) => void;


/** Counts and hashes the raw bytes, and refuses binary data (NUL bytes) early. */
function inspectBytes(hash: ReturnType<typeof createHash>, onBytes: (n: number) => void) {
  let first = true;
  return new Transform({
    transform(chunk: Buffer, _enc, cb) {
      if (first) {
        first = false;
        const head = chunk.subarray(0, 8192);
        if (head.includes(0)) {
          cb(new IngestProblem("This is not a text file (it contains binary data). Export the logger data as CSV or text and upload that."));
          return;
        }
      }
      hash.update(chunk);
      onBytes(chunk.length);
      cb(null, chunk);
    },
  });
}

/**
 * Streams one upload from S3 into the readings store. Everything it writes happens in one
 * transaction on `client`: a failure (or a killed process) leaves no partial rows.
 */
export async function ingestObject(options: {
  client: PoolClient;
  objectKey: string;
  fileName: string;
  sizeBytes: number;
  upload: { id: string; siteId: string; loggerId: string };
  profile: ImportProfile;
  settings: { id: number; compensation_method: "linear" | "natural-water"; alpha_per_c: number; reference_c: number; tds_factor: number };
  /** Delete this upload's earlier readings first (re-processing); the range they covered, if known. */
  replaceOwnReadings: false | { from: Date | null; to: Date | null };
  now?: number;
  onProgress?: Progress;
  body?: Readable;
}): Promise<IngestResult & { errors: RowError[]; moreErrors: number; timings: Record<string, number> }> {
  const { client, profile, upload } = options;
  if (options.sizeBytes === 0) throw new IngestProblem("The file is empty.");
  const parser = compileProfile(profile, { now: options.now ?? Date.now() });
  const deriver = new Deriver(options.settings, BATCH);
  const out = createParsedRow();
  const times = new Float64Array(BATCH);
  const rowNos = new Int32Array(BATCH);
  const ph = new Float64Array(BATCH);
  const depth = new Float64Array(BATCH);
  const battery = new Float64Array(BATCH);
  let n = 0;

  const errors: RowError[] = [];
  let moreErrors = 0;
  let dataRows = 0;
  let accepted = 0;
  let rejected = 0;
  let inFileDuplicates = 0;
  let lastTime = -Infinity;
  let nonMonotonic = false;
  let firstMs = Infinity;
  let lastMs = -Infinity;
  let recordIndex = 0;
  let bytes = 0;
  let lastProgress = 0;
  const sampleRows: string[][] = [];

  const timings: Record<string, number> = {};
  let mark = performance.now();
  const lap = (name: string) => {
    const now = performance.now();
    timings[name] = Math.round(now - mark);
    mark = now;
  };
  const hash = createHash("sha256");
  await client.query(`create temp table stage (
      time_ms double precision, row_number integer, conductivity double precision, logger_sc double precision,
      temperature double precision, ph double precision, depth double precision, battery double precision,
      sc25 double precision, tds double precision, salinity double precision
    ) on commit drop`);
  const copy = client.query(copyFrom("copy stage from stdin with (format binary)"));
  copy.write(copyHeader());
  const writer = new BinaryRowWriter(BATCH, 10);

  function reject(list: RowError[]) {
    rejected++;
    for (const e of list) {
      if (errors.length < MAX_STORED_ERRORS) errors.push({ ...e });
      else moreErrors++;
    }
  }

  function flush(): boolean {
    if (n === 0) return true;
    deriver.run(n);
    for (let i = 0; i < n; i++) {
      writer.begin(11);
      writer.float(times[i]);
      writer.int(rowNos[i]);
      writer.float(deriver.cond[i]);
      writer.float(deriver.loggerSc[i]);
      writer.float(deriver.temp[i]);
      writer.float(ph[i]);
      writer.float(depth[i]);
      writer.float(battery[i]);
      writer.float(deriver.sc25[i]);
      writer.float(deriver.tds[i]);
      writer.float(deriver.salinity[i]);
    }
    n = 0;
    return copy.write(writer.take(BATCH));
  }

  function earlyCheck() {
    if (dataRows === EARLY_ROWS && rejected / dataRows >= EARLY_REJECT_SHARE) {
      throw new IngestProblem(diagnoseMostlyFailing(errors, profile, sampleRows));
    }
  }

  const decoded = new PassThrough({ decodeStrings: false });
  decoded.setEncoding("utf8");
  const body = options.body ?? (await getObjectStream(options.objectKey));
  const feeding = pipeline(
    body,
    inspectBytes(hash, (b) => {
      bytes += b;
    }),
    decoded,
  );
  // Keep the pipeline's failure (binary data, a dropped S3 connection) for the await below.
  let feedError: unknown;
  feeding.catch((e) => {
    feedError = e;
  });

  await new Promise<void>((resolve, reject_) => {
    let failed = false;
    const fail = (e: unknown) => {
      if (failed) return;
      failed = true;
      body.destroy();
      reject_(e);
    };
    Papa.parse(decoded as unknown as File, {
      delimiter: profile.delimiter,
      skipEmptyLines: false,
      chunk(results, p) {
        try {
          const rows = results.data as string[][];
          for (let r = 0; r < rows.length; r++) {
            const fields = rows[r];
            const lineNo = ++recordIndex; // 1-based record number in the file
            if (lineNo - 1 < profile.dataStartRow) continue;
            if (isBlankRow(fields)) continue;
            dataRows++;
            if (sampleRows.length < 20) sampleRows.push(fields.slice(0, 50));
            if (!parser.parseRow(fields, lineNo, out)) {
              reject(parser.lastErrors);
              earlyCheck();
              continue;
            }
            const t = out.timeMs;
            if (t <= lastTime) {
              if (t === lastTime) {
                inFileDuplicates++;
                reject([{ row: lineNo, column: "(timestamp)", value: new Date(t).toISOString(), reason: "the same timestamp appears on the row before; the first one is kept" }]);
                continue;
              }
              nonMonotonic = true;
            }
            lastTime = t;
            if (t < firstMs) firstMs = t;
            if (t > lastMs) lastMs = t;
            times[n] = t;
            rowNos[n] = lineNo;
            deriver.cond[n] = out.conductivityUsPerCm;
            deriver.loggerSc[n] = out.specificConductanceUsPerCm;
            deriver.temp[n] = out.temperatureC;
            ph[n] = out.ph;
            depth[n] = out.depthM;
            battery[n] = out.batteryV;
            n++;
            accepted++;
            if (n === BATCH && !flush()) {
              p.pause();
              copy.once("drain", () => p.resume());
            }
            earlyCheck();
          }
          const now = Date.now();
          if (options.onProgress && now - lastProgress > 250) {
            lastProgress = now;
            options.onProgress({ rows: dataRows, bytes });
          }
        } catch (e) {
          p.abort();
          fail(e);
        }
      },
      complete() {
        if (!failed) resolve();
      },
      error(err: Error) {
        fail(new IngestProblem(`The file could not be read as CSV: ${err.message}`));
      },
    });
  });
  await feeding.catch(() => {});
  if (feedError) throw feedError;
  flush();
  copy.end(copyTrailer());
  await new Promise<void>((resolve, reject_) => {
    copy.once("finish", resolve);
    copy.once("error", reject_);
  });
  options.onProgress?.({ rows: dataRows, bytes });
  lap("stream+parse+copy");

  if (dataRows === 0) {
    throw new IngestProblem(
      recordIndex <= profile.dataStartRow
        ? "The file has a header but no data rows."
        : "The file has no data rows after the header.",
    );
  }
  if (accepted === 0 || (dataRows >= 10 && rejected / dataRows > FINAL_REJECT_SHARE)) {
    throw new IngestProblem(diagnoseMostlyFailing(errors, profile, sampleRows));
  }

  // Timestamps out of order: keep the first row of each timestamp, report the others.
  if (nonMonotonic) {
    const dups = await client.query<{ row_number: number; time_ms: number; first_row: number }>(`
      with ranked as (
        select ctid, row_number, time_ms, first_value(row_number) over (partition by time_ms order by row_number) as first_row
        from stage
      )
      delete from stage s using ranked r
      where s.ctid = r.ctid and r.row_number <> r.first_row
      returning r.row_number, r.time_ms, r.first_row`);
    for (const d of dups.rows) {
      inFileDuplicates++;
      accepted--;
      reject([{ row: d.row_number, column: "(timestamp)", value: new Date(d.time_ms).toISOString(), reason: `the same timestamp appears earlier in this file (row ${d.first_row}); the first one is kept` }]);
    }
  }

  lap("dedupe");
  await client.query("select ensure_reading_partitions(to_timestamp($1 / 1000.0), to_timestamp($2 / 1000.0))", [firstMs, lastMs]);
  if (options.replaceOwnReadings && options.replaceOwnReadings.from && options.replaceOwnReadings.to) {
    // Through the primary key (site_id, time, …): only this upload's rows in the range it covered.
    await client.query("delete from readings where site_id = $1 and time between $2 and $3 and upload_id = $4", [
      upload.siteId,
      options.replaceOwnReadings.from,
      options.replaceOwnReadings.to,
      upload.id,
    ]);
  }
  // Merges of the same logger are serialised (concurrent uploads of overlapping dumps), so the
  // overlap check below stays true until commit. Without overlap a plain INSERT is used: about twice
  // as fast as INSERT … ON CONFLICT, which is kept for dumps that overlap stored readings.
  await client.query("select pg_advisory_xact_lock(hashtext($1))", [`readings:${upload.loggerId}`]);
  const overlap = await client.query(
    `select exists (select 1 from readings where site_id = $1 and time between to_timestamp($3 / 1000.0) and to_timestamp($4 / 1000.0)
       and logger_id = $2) as overlap`,
    [upload.siteId, upload.loggerId, firstMs, lastMs],
  );
  const inserted = await client.query(
    `insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, logger_sc_us_cm,
        temperature_c, ph, depth_m, battery_v, sc25_us_cm, tds_mg_l, salinity_psu, settings_id)
     select $1, $2, to_timestamp(time_ms / 1000.0), $3, row_number, conductivity, logger_sc, temperature, ph, depth, battery,
        sc25, tds, salinity, $4
     from stage
     ${overlap.rows[0].overlap ? "on conflict (site_id, time, logger_id) do nothing" : ""}`,
    [upload.siteId, upload.loggerId, upload.id, options.settings.id],
  );
  const insertedRows = inserted.rowCount ?? 0;
  lap("merge");
  errors.sort((a, b) => a.row - b.row);
  return {
    rowsTotal: dataRows,
    accepted: insertedRows,
    rejected,
    duplicates: accepted - insertedRows,
    firstMs: Number.isFinite(firstMs) ? firstMs : null,
    lastMs: Number.isFinite(lastMs) ? lastMs : null,
    sha256: hash.digest("hex"),
    errors,
    moreErrors,
    timings,
  };
}

/** Writes the error report rows of an upload (replacing earlier ones) inside the transaction. */
async function storeErrors(client: PoolClient, uploadId: string, errors: RowError[]) {
  await client.query("delete from upload_error where upload_id = $1", [uploadId]);
  for (let i = 0; i < errors.length; i += 2000) {
    const part = errors.slice(i, i + 2000);
    await client.query(
      `insert into upload_error (upload_id, row_number, column_name, raw_value, reason)
       select $1, * from unnest($2::int[], $3::text[], $4::text[], $5::text[])`,
      [uploadId, part.map((e) => e.row), part.map((e) => e.column), part.map((e) => e.value.slice(0, 500)), part.map((e) => e.reason)],
    );
  }
}

/**
 * The `ingest-upload` job: loads the upload, its profile and the site's settings, ingests, and
 * records the outcome. File problems end the upload as failed with one clear message; other errors
 * (database or S3 down) are rethrown so the queue retries, and the upload shows it is waiting.
 */
export async function runIngestJob(uploadId: string, attempt = 1) {
  const upload = await db
    .selectFrom("upload")
    .leftJoin("import_profile", "import_profile.id", "upload.profile_id")
    .select([
      "upload.id", "upload.object_key", "upload.file_name", "upload.size_bytes", "upload.site_id", "upload.logger_id",
      "upload.status", "upload.sha256", "upload.finished_at", "upload.first_reading_at", "upload.last_reading_at",
      "import_profile.settings as profile",
    ])
    .where("upload.id", "=", uploadId)
    .executeTakeFirst();
  if (!upload) return; // deleted meanwhile: nothing to do
  if (upload.status === "duplicate") return;

  await db
    .updateTable("upload")
    .set({ status: "processing", started_at: new Date(), attempts: attempt, message: null, bytes_processed: 0, rows_total: 0 })
    .where("id", "=", uploadId)
    .execute();

  const fail = async (message: string, errors: RowError[] = []) => {
    await withClient(async (client) => {
      await client.query("begin");
      await storeErrors(client, uploadId, errors.slice(0, 50));
      await client.query(
        "update upload set status = 'failed', message = $2, finished_at = now() where id = $1",
        [uploadId, message],
      );
      await client.query("commit");
    });
  };

  const parsedProfile = importProfileSchema.safeParse(upload.profile);
  if (!upload.profile || !parsedProfile.success) {
    await fail(upload.profile ? `The import profile is not valid: ${parsedProfile.error?.issues[0]?.message}` : "No import profile was chosen for this file.");
    return;
  }
  const settingsId = await currentSettingsId(upload.site_id);
  const settings = await db.selectFrom("derivation_settings").selectAll().where("id", "=", settingsId).executeTakeFirstOrThrow();

  let lastWrite = 0;
  const onProgress: Progress = ({ rows, bytes }) => {
    const now = Date.now();
    if (now - lastWrite < 400) return;
    lastWrite = now;
    void db.updateTable("upload").set({ rows_total: rows, bytes_processed: bytes }).where("id", "=", uploadId).execute().catch(() => {});
  };

  try {
    await withClient(async (client) => {
      await client.query("begin");
      try {
        const result = await ingestObject({
          client,
          objectKey: upload.object_key,
          fileName: upload.file_name,
          sizeBytes: Number(upload.size_bytes),
          upload: { id: upload.id, siteId: upload.site_id, loggerId: upload.logger_id },
          profile: parsedProfile.data,
          settings,
          replaceOwnReadings: { from: upload.first_reading_at, to: upload.last_reading_at },
          onProgress,
        });
        if (result.sha256 !== upload.sha256) {
          throw new IngestProblem("The stored file does not match the file that was announced (SHA-256 differs). Upload it again.");
        }
        await storeErrors(client, uploadId, result.errors);
        const note = result.moreErrors > 0 ? `${result.moreErrors} further rejected values are not listed.` : null;
        await client.query(
          `update upload set status = 'done', message = $2, rows_total = $3, rows_accepted = $4, rows_rejected = $5,
             rows_duplicate = $6, bytes_processed = size_bytes, first_reading_at = to_timestamp($7 / 1000.0),
             last_reading_at = to_timestamp($8 / 1000.0), finished_at = now()
           where id = $1`,
          [uploadId, note, result.rowsTotal, result.accepted, result.rejected, result.duplicates, result.firstMs, result.lastMs],
        );
        const c0 = performance.now();
        await client.query("commit");
        result.timings.commit = Math.round(performance.now() - c0);
        if (process.env.INGEST_TIMINGS === "1") console.error("[ingest] timings (ms):", JSON.stringify(result.timings));
      } catch (e) {
        await client.query("rollback").catch(() => {});
        throw e;
      }
    });
  } catch (e) {
    if (e instanceof IngestProblem) {
      await fail(e.message);
      return;
    }
    await db
      .updateTable("upload")
      .set({ status: "queued", message: `Processing was interrupted (${(e as Error).message}); it will be retried automatically.` })
      .where("id", "=", uploadId)
      .execute()
      .catch(() => {});
    throw e;
  }
}

export { sql };
