import { createHash } from "node:crypto";
import { performance } from "node:perf_hooks";
import { PassThrough, Transform, type Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import Papa from "papaparse";
import type { PoolClient } from "pg";
import { compileProfile, createParsedRow, diagnoseMostlyFailing, isBlankRow, type RowError } from "#app/lib/import/rows.ts";
import { importProfileSchema, type ImportProfile } from "#app/lib/import/profile.ts";
import { db } from "#app/utils/db.server.ts";
import { getObjectStream } from "#app/utils/storage.server.ts";
import { currentSettingsId } from "#app/models/derivation.server.ts";
import { Deriver } from "./derive.server.ts";
import { ReadingSink, type RowBatch } from "./reading-sink.server.ts";
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
 * transaction on `client` (the caller begins and commits it): a failure, or a killed process,
 * leaves no partial rows.
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
  const batch: RowBatch = {
    n: 0,
    timeMs: new Float64Array(BATCH),
    rowNumber: new Int32Array(BATCH),
    conductivity: deriver.cond,
    loggerSc: deriver.loggerSc,
    temperature: deriver.temp,
    ph: new Float64Array(BATCH),
    depth: new Float64Array(BATCH),
    battery: new Float64Array(BATCH),
    sc25: deriver.sc25,
    tds: deriver.tds,
    salinity: deriver.salinity,
  };

  const errors: RowError[] = [];
  let moreErrors = 0;
  let dataRows = 0;
  let accepted = 0;
  let rejected = 0;
  let lastTime = -Infinity;
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

  // Serialise loads of the same logger (overlapping dumps uploaded at once), make sure every
  // partition a valid timestamp can fall in exists, and read the watermark for routing rows.
  await client.query("select pg_advisory_xact_lock(hashtext($1))", [`readings:${upload.loggerId}`]);
  await client.query("select ensure_reading_partitions('1980-01-01'::timestamptz, now() + interval '1 year')");
  if (options.replaceOwnReadings && options.replaceOwnReadings.from && options.replaceOwnReadings.to) {
    // Through the primary key (site_id, time, …): only this upload's rows in the range it covered.
    await client.query("delete from readings where site_id = $1 and time between $2 and $3 and upload_id = $4", [
      upload.siteId,
      options.replaceOwnReadings.from,
      options.replaceOwnReadings.to,
      upload.id,
    ]);
  }
  const wm = await client.query<{ t: Date | null }>(
    "select max(time) as t from readings where site_id = $1 and logger_id = $2",
    [upload.siteId, upload.loggerId],
  );
  const sink = new ReadingSink(
    client,
    { siteId: upload.siteId, loggerId: upload.loggerId, uploadId: upload.id },
    options.settings.id,
    wm.rows[0].t ? wm.rows[0].t.getTime() : -Infinity,
  );
  lap("prepare");

  function reject(list: RowError[]) {
    rejected++;
    for (const e of list) {
      if (errors.length < MAX_STORED_ERRORS) errors.push({ ...e });
      else moreErrors++;
    }
  }

  function earlyCheck() {
    if (dataRows === EARLY_ROWS && rejected / dataRows >= EARLY_REJECT_SHARE) {
      throw new IngestProblem(diagnoseMostlyFailing(errors, profile, sampleRows));
    }
  }

  /** Derives the batch's values and hands it to the sink. */
  async function flush() {
    if (batch.n === 0) return;
    deriver.run(batch.n);
    await sink.write(batch);
    batch.n = 0;
  }

  const hash = createHash("sha256");
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

  /** One chunk of parsed records: validate, batch, and hand full batches to the sink. */
  async function processRows(rows: string[][]) {
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
      if (t === lastTime) {
        reject([{ row: lineNo, column: "(timestamp)", value: new Date(t).toISOString(), reason: "the same timestamp appears on the row before; the first one is kept" }]);
        continue;
      }
      lastTime = t;
      if (t < firstMs) firstMs = t;
      if (t > lastMs) lastMs = t;
      const i = batch.n++;
      batch.timeMs[i] = t;
      batch.rowNumber[i] = lineNo;
      batch.conductivity[i] = out.conductivityUsPerCm;
      batch.loggerSc[i] = out.specificConductanceUsPerCm;
      batch.temperature[i] = out.temperatureC;
      batch.ph[i] = out.ph;
      batch.depth[i] = out.depthM;
      batch.battery[i] = out.batteryV;
      accepted++;
      earlyCheck();
      if (batch.n === BATCH) await flush();
    }
    const now = Date.now();
    if (options.onProgress && now - lastProgress > 250) {
      lastProgress = now;
      options.onProgress({ rows: dataRows, bytes });
    }
  }

  await new Promise<void>((resolve, reject_) => {
    let failed = false;
    let pending: Promise<void> = Promise.resolve();
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
        // Pause while this chunk is processed (its full batches wait for COPY back-pressure).
        p.pause();
        pending = pending.then(() => processRows(results.data as string[][])).then(
          () => {
            if (!failed) p.resume();
          },
          (e) => {
            p.abort();
            fail(e);
          },
        );
      },
      complete() {
        pending.then(() => {
          if (!failed) resolve();
        }, fail);
      },
      error(err: Error) {
        fail(new IngestProblem(`The file could not be read as CSV: ${err.message}`));
      },
    });
  });
  await feeding.catch(() => {});
  if (feedError) throw feedError;
  await flush();
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

  await sink.finish();
  lap("merge");
  for (const d of sink.sameFileRepeats) {
    reject([{ row: d.row, column: "(timestamp)", value: new Date(d.timeMs).toISOString(), reason: `the same timestamp appears earlier in this file (row ${d.firstRow}); the first one is kept` }]);
  }
  errors.sort((a, b) => a.row - b.row);
  return {
    rowsTotal: dataRows,
    accepted: sink.inserted,
    rejected,
    duplicates: sink.skipped,
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
        // What depends on readings (corrections, exceedances, summaries) follows for this range.
        if (result.firstMs !== null && result.lastMs !== null) {
          const payload = { siteId: upload.site_id, fromMs: result.firstMs, toMs: result.lastMs, reason: "ingest" };
          await client.query("select graphile_worker.add_job('readings-changed', $1::json, max_attempts => 10)", [JSON.stringify(payload)]);
        }
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

