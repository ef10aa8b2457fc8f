/**
 * s3rver's filesystem store writes an upload straight over the object's data
 * file, and answers before that file is flushed. An upload cut off half-way
 * therefore leaves a truncated object behind (or clobbers the previous
 * version), where real S3 keeps the old object and stores nothing new.
 *
 * This replaces the store's putObject on one s3rver instance: the body goes to
 * a temporary file next to the object, which is renamed into place only after
 * the whole body has arrived and been flushed. The temporary name does not end
 * in s3rver's object suffix, so listings never show it.
 */
import { createHash, randomBytes } from "node:crypto";
import { createWriteStream } from "node:fs";
import { mkdir, rename, rm } from "node:fs/promises";
import { dirname } from "node:path";
import { Transform, type Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import type S3rver from "s3rver";

interface StoredObjectInput {
  bucket: string;
  key: string;
  content: Readable | Buffer;
  metadata: Record<string, string>;
}

interface FilesystemStoreInternals {
  getResourcePath(bucket: string, key: string, resource: string): string;
  putMetadata(bucket: string, key: string, metadata: Record<string, string>, md5: string): Promise<void>;
  putObject(object: StoredObjectInput): Promise<{ size: number; md5: string }>;
}

export function makeObjectWritesAtomic(server: S3rver): void {
  const store = (server as unknown as { store: FilesystemStoreInternals }).store;
  if (!store || typeof store.putObject !== "function" || typeof store.getResourcePath !== "function") {
    throw new Error("s3rver internals changed: cannot make object writes atomic");
  }
  store.putObject = async function putObjectAtomically(object: StoredObjectInput) {
    const objectPath = store.getResourcePath(object.bucket, object.key, "object");
    const partial = `${objectPath}.${randomBytes(6).toString("hex")}.partial`;
    await mkdir(dirname(objectPath), { recursive: true });
    const md5 = createHash("md5");
    let size = 0;
    const count = new Transform({
      transform(chunk: Buffer, _enc, callback) {
        md5.update(chunk);
        size += chunk.length;
        callback(null, chunk);
      },
    });
    try {
      const source = Buffer.isBuffer(object.content) ? [object.content] : object.content;
      await pipeline(source as Iterable<Buffer> | Readable, count, createWriteStream(partial));
      await rename(partial, objectPath);
    } catch (err) {
      await rm(partial, { force: true });
      throw err;
    }
    const digest = md5.digest("hex");
    await store.putMetadata(object.bucket, object.key, object.metadata, digest);
    return { size, md5: digest };
  };
}
