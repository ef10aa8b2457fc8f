import { data } from "react-router";
import { z } from "zod";
import type { SessionUser } from "#app/models/person.server.ts";
import { getUpload } from "#app/models/upload.server.ts";
import { getObjectStream } from "#app/utils/storage.server.ts";
import { SAMPLE_BYTES, type Sample } from "../../import-profiles/+shared/sample.ts";

/**
 * An upload the person may see: technicians their own, officers and administrators all.
 * Anything but a UUID is a page that does not exist (not a SQL error).
 */
export async function requireVisibleUpload(user: SessionUser, uploadId: string | undefined | null) {
  const id = z.uuid().safeParse(uploadId);
  if (!id.success) throw data("No such upload.", { status: 404 });
  const upload = await getUpload(id.data);
  if (!upload) throw data("No such upload.", { status: 404 });
  if (user.role === "technician" && upload.uploaded_by_id !== user.id) {
    throw data("This upload belongs to someone else.", { status: 403 });
  }
  return upload;
}

/**
 * The first 64 KB of a stored upload as text, for the profile editor. A multi-byte character cut
 * at the end is dropped (the sniffer also ignores the last, possibly cut, line).
 */
export async function readUploadSample(upload: { object_key: string; file_name: string; size_bytes: number | string }): Promise<Sample> {
  const stream = await getObjectStream(upload.object_key, `bytes=0-${SAMPLE_BYTES - 1}`);
  const chunks: Buffer[] = [];
  let length = 0;
  for await (const chunk of stream) {
    const buf = Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk as Uint8Array);
    chunks.push(buf);
    length += buf.length;
    if (length >= SAMPLE_BYTES) break;
  }
  stream.destroy();
  const bytes = Buffer.concat(chunks).subarray(0, SAMPLE_BYTES);
  const text = new TextDecoder("utf-8").decode(bytes, { stream: true });
  return { text, fileName: upload.file_name, truncated: Number(upload.size_bytes) > SAMPLE_BYTES };
}
