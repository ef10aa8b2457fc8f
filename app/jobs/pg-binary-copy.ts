// Encoder for PostgreSQL's binary COPY format (PostgreSQL documentation, "COPY", section "Binary
// Format"): a signature and header, then per row a 16-bit field count and, per field, a 32-bit
// length (−1 for NULL) and the value in network byte order. Numbers go in as IEEE doubles and
// 32-bit integers, so nothing is formatted as text on our side or parsed on the server's.

export const COPY_SIGNATURE = Buffer.from([0x50, 0x47, 0x43, 0x4f, 0x50, 0x59, 0x0a, 0xff, 0x0d, 0x0a, 0x00]);

export function copyHeader(): Buffer {
  const b = Buffer.alloc(COPY_SIGNATURE.length + 8);
  COPY_SIGNATURE.copy(b, 0);
  // flags (int32) = 0, header extension length (int32) = 0
  return b;
}

export function copyTrailer(): Buffer {
  const b = Buffer.alloc(2);
  b.writeInt16BE(-1, 0);
  return b;
}

/** Writes rows of one int4 field followed by float8 fields; NaN is written as NULL. */
export class BinaryRowWriter {
  private buf: Buffer;
  private pos = 0;

  constructor(capacityRows: number, private readonly floatFields: number) {
    this.buf = Buffer.allocUnsafe(capacityRows * this.rowBytes());
  }

  rowBytes() {
    return 2 + 8 + (4 + 8) * (this.floatFields + 1);
  }

  /** Starts a row with `fieldCount` fields. */
  begin(fieldCount: number) {
    this.buf.writeInt16BE(fieldCount, this.pos);
    this.pos += 2;
  }

  float(x: number) {
    if (x !== x) {
      this.buf.writeInt32BE(-1, this.pos);
      this.pos += 4;
    } else {
      this.buf.writeInt32BE(8, this.pos);
      this.buf.writeDoubleBE(x, this.pos + 4);
      this.pos += 12;
    }
  }

  int(x: number) {
    this.buf.writeInt32BE(4, this.pos);
    this.buf.writeInt32BE(x, this.pos + 4);
    this.pos += 8;
  }

  /** Hands over the bytes written so far and starts a fresh buffer (the old one may still be queued). */
  take(capacityRows: number): Buffer {
    const out = this.buf.subarray(0, this.pos);
    this.buf = Buffer.allocUnsafe(capacityRows * this.rowBytes());
    this.pos = 0;
    return out;
  }
}
