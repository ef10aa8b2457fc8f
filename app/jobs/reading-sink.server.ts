import type { PoolClient } from "pg";
import { from as copyFrom } from "pg-copy-streams";
import { BinaryRowWriter, copyHeader, copyTrailer } from "./pg-binary-copy.ts";

/**
 * Where the accepted rows of one upload go, inside the job's transaction.
 *
 * COPY straight into `readings` is the fastest load PostgreSQL has, but it cannot skip rows that
 * are already stored. So rows are routed by time against the newest reading already stored for
 * this logger at this site (the watermark, read under a per-logger lock):
 * - rows at or before the watermark (the overlapping head of a cumulative logger dump) go to a
 *   staging table and are merged with INSERT … ON CONFLICT DO NOTHING;
 * - rows after it, in time order, are copied directly into `readings`;
 * - rows out of time order after that point are kept aside and merged through staging at the end.
 */
export type RowBatch = {
  n: number;
  timeMs: Float64Array;
  rowNumber: Int32Array;
  conductivity: Float64Array;
  loggerSc: Float64Array;
  temperature: Float64Array;
  ph: Float64Array;
  depth: Float64Array;
  battery: Float64Array;
  sc25: Float64Array;
  tds: Float64Array;
  salinity: Float64Array;
};

const EPOCH_2000_MS = Date.UTC(2000, 0, 1);

/** The columns a load writes, in COPY order. Corrections (correction_us_cm) are applied later. */
const DIRECT_COLUMNS = `site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, logger_sc_us_cm,
  temperature_c, ph, depth_m, battery_v, sc25_us_cm, tds_mg_l, salinity_psu, settings_id, sc25_uncorrected_us_cm`;

function uuidField(uuid: string): Buffer {
  const hex = uuid.replace(/-/g, "");
  if (!/^[0-9a-f]{32}$/i.test(hex)) throw new Error(`not a uuid: ${uuid}`);
  const b = Buffer.alloc(20);
  b.writeInt32BE(16, 0);
  Buffer.from(hex, "hex").copy(b, 4);
  return b;
}

/** Encodes rows in the binary COPY layout of `readings` (the 16 columns listed in DIRECT_COLUMNS). */
class DirectEncoder {
  private readonly site: Buffer;
  private readonly logger: Buffer;
  private readonly upload: Buffer;
  constructor(ids: { siteId: string; loggerId: string; uploadId: string }, private readonly settingsId: number) {
    this.site = uuidField(ids.siteId);
    this.logger = uuidField(ids.loggerId);
    this.upload = uuidField(ids.uploadId);
  }
  encode(b: RowBatch, pick: (i: number) => boolean): Buffer {
    const rowBytes = 2 + 20 * 3 + 12 + 8 * 2 + 12 * 10;
    const buf = Buffer.allocUnsafe(b.n * rowBytes);
    let p = 0;
    const f8 = (x: number) => {
      if (x !== x) {
        buf.writeInt32BE(-1, p);
        p += 4;
      } else {
        buf.writeInt32BE(8, p);
        buf.writeDoubleBE(x, p + 4);
        p += 12;
      }
    };
    for (let i = 0; i < b.n; i++) {
      if (!pick(i)) continue;
      buf.writeInt16BE(16, p);
      p += 2;
      this.site.copy(buf, p);
      p += 20;
      this.logger.copy(buf, p);
      p += 20;
      // timestamptz: microseconds since 2000-01-01 as int64 (exact for whole milliseconds).
      const us = (b.timeMs[i] - EPOCH_2000_MS) * 1000;
      const hi = Math.floor(us / 4294967296);
      buf.writeInt32BE(8, p);
      buf.writeInt32BE(hi, p + 4);
      buf.writeUInt32BE(us - hi * 4294967296, p + 8);
      p += 12;
      this.upload.copy(buf, p);
      p += 20;
      buf.writeInt32BE(4, p);
      buf.writeInt32BE(b.rowNumber[i], p + 4);
      p += 8;
      f8(b.conductivity[i]);
      f8(b.loggerSc[i]);
      f8(b.temperature[i]);
      f8(b.ph[i]);
      f8(b.depth[i]);
      f8(b.battery[i]);
      f8(b.sc25[i]);
      f8(b.tds[i]);
      f8(b.salinity[i]);
      buf.writeInt32BE(4, p);
      buf.writeInt32BE(this.settingsId, p + 4);
      p += 8;
      f8(b.sc25[i]); // sc25_uncorrected_us_cm: no correction is known at load time

    }
    return buf.subarray(0, p);
  }
}

function encodeStage(b: RowBatch, pick: (i: number) => boolean): Buffer {
  const w = new BinaryRowWriter(b.n, 10);
  for (let i = 0; i < b.n; i++) {
    if (!pick(i)) continue;
    w.begin(11);
    w.float(b.timeMs[i]);
    w.int(b.rowNumber[i]);
    w.float(b.conductivity[i]);
    w.float(b.loggerSc[i]);
    w.float(b.temperature[i]);
    w.float(b.ph[i]);
    w.float(b.depth[i]);
    w.float(b.battery[i]);
    w.float(b.sc25[i]);
    w.float(b.tds[i]);
    w.float(b.salinity[i]);
  }
  return w.take(1);
}

type CopyStream = ReturnType<typeof copyFrom>;

export class ReadingSink {
  private stageCopy: CopyStream | null = null;
  private directCopy: CopyStream | null = null;
  private stageCreated = false;
  private readonly late: Buffer[] = [];
  private readonly encoder: DirectEncoder;
  private lastDirectMs = -Infinity;
  /** Rows written to `readings` (direct COPY and merges). */
  inserted = 0;
  /** Rows that were already stored (skipped by a merge). */
  skipped = 0;
  /** Rows whose timestamp repeats another row of this same file (row, time, first row). */
  readonly sameFileRepeats: { row: number; timeMs: number; firstRow: number }[] = [];
  private direct = 0;

  constructor(
    private readonly client: PoolClient,
    private readonly ids: { siteId: string; loggerId: string; uploadId: string },
    private readonly settingsId: number,
    /** Newest stored reading of this logger at this site, ms (−Infinity when none). */
    readonly watermarkMs: number,
  ) {
    this.encoder = new DirectEncoder(ids, settingsId);
  }

  /** Routes one batch; resolves when the data is handed to PostgreSQL (with back-pressure). */
  async write(b: RowBatch): Promise<void> {
    // Split the batch: the part up to the watermark (or before switching) is staged.
    let i = 0;
    if (this.directCopy === null) {
      while (i < b.n && b.timeMs[i] <= this.watermarkMs) i++;
      if (i > 0) await this.toStage(encodeStage(b, (k) => k < i));
      if (i === b.n) return;
      await this.switchToDirect();
    }
    const from = i;
    const inOrder = new Uint8Array(b.n);
    let anyLate = false;
    for (let k = from; k < b.n; k++) {
      if (b.timeMs[k] > this.lastDirectMs) {
        inOrder[k] = 1;
        this.lastDirectMs = b.timeMs[k];
        this.direct++;
      } else anyLate = true;
    }
    if (anyLate) this.late.push(encodeStage(b, (k) => k >= from && inOrder[k] === 0));
    await this.push(this.directCopy!, this.encoder.encode(b, (k) => inOrder[k] === 1));
  }

  private async push(stream: CopyStream, data: Buffer) {
    if (data.length === 0) return;
    if (!stream.write(data)) await new Promise<void>((resolve) => stream.once("drain", () => resolve()));
  }

  private async ensureStage() {
    if (this.stageCreated) return;
    await this.client.query(`create temp table stage (
        time_ms double precision, row_number integer, conductivity double precision, logger_sc double precision,
        temperature double precision, ph double precision, depth double precision, battery double precision,
        sc25 double precision, tds double precision, salinity double precision
      ) on commit drop`);
    this.stageCreated = true;
  }

  private async toStage(data: Buffer) {
    if (!this.stageCopy) {
      await this.ensureStage();
      this.stageCopy = this.client.query(copyFrom("copy stage from stdin with (format binary)"));
      this.stageCopy.write(copyHeader());
    }
    await this.push(this.stageCopy, data);
  }

  private async end(stream: CopyStream) {
    await new Promise<void>((resolve, reject) => {
      stream.once("finish", resolve);
      stream.once("error", reject);
      stream.end(copyTrailer());
    });
  }

  /** Merges staged rows into readings (skipping stored ones) and empties the staging table. */
  private async mergeStage() {
    if (this.stageCopy) {
      await this.end(this.stageCopy);
      this.stageCopy = null;
    }
    if (!this.stageCreated) return;
    // Repeats of a timestamp this same upload already stored (rows out of order in the file).
    const repeats = await this.client.query<{ row_number: number; time_ms: number; first_row: number }>(
      `select s.row_number, s.time_ms, r.row_number as first_row from stage s
       join readings r on r.site_id = $1 and r.logger_id = $2 and r.time = to_timestamp(s.time_ms / 1000.0) and r.upload_id = $3`,
      [this.ids.siteId, this.ids.loggerId, this.ids.uploadId],
    );
    for (const r of repeats.rows) this.sameFileRepeats.push({ row: r.row_number, timeMs: r.time_ms, firstRow: r.first_row });
    const inFile = await this.client.query<{ row_number: number; time_ms: number; first_row: number }>(
      `with ranked as (
         select ctid, row_number, time_ms, first_value(row_number) over (partition by time_ms order by row_number) as first_row from stage)
       delete from stage s using ranked r where s.ctid = r.ctid and r.row_number <> r.first_row
       returning r.row_number, r.time_ms, r.first_row`,
    );
    for (const r of inFile.rows) this.sameFileRepeats.push({ row: r.row_number, timeMs: r.time_ms, firstRow: r.first_row });
    const staged = await this.client.query<{ n: number }>("select count(*)::int as n from stage");
    const result = await this.client.query(
      `insert into readings (${DIRECT_COLUMNS})
       select $1, $2, to_timestamp(time_ms / 1000.0), $3, row_number, conductivity, logger_sc, temperature, ph, depth, battery,
          sc25, tds, salinity, $4, sc25
       from stage
       on conflict (site_id, time, logger_id) do nothing`,
      [this.ids.siteId, this.ids.loggerId, this.ids.uploadId, this.settingsId],
    );
    const n = result.rowCount ?? 0;
    this.inserted += n;
    this.skipped += staged.rows[0].n - n - repeats.rows.length;
    await this.client.query("truncate stage");
  }

  private async switchToDirect() {
    await this.mergeStage();
    this.directCopy = this.client.query(copyFrom(`copy readings (${DIRECT_COLUMNS}) from stdin with (format binary)`));
    this.directCopy.write(copyHeader());
  }

  /** Completes every COPY and merge. Call once, after the last write. */
  async finish() {
    if (this.directCopy) {
      await this.end(this.directCopy);
      this.directCopy = null;
      this.inserted += this.direct;
    }
    for (const data of this.late.splice(0)) await this.toStage(data);
    await this.mergeStage();
  }
}
