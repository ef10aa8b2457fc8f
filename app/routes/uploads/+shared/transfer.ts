// The browser's side of an upload, step by step: fingerprint the file, ask /api/uploads for a
// presigned PUT, send the bytes straight to storage (XMLHttpRequest, for upload progress),
// confirm, then follow the ingest by polling. Each step answers with plain data the page shows;
// none throws for an expected failure.

import type { UploadStatus } from "#db/schema.ts";

export type UploadStatusJson = {
  id: string;
  status: UploadStatus;
  message: string | null;
  sizeBytes: number;
  bytesProcessed: number;
  rowsTotal: number;
  rowsAccepted: number;
  rowsRejected: number;
  rowsDuplicate: number;
  firstReadingAt: string | null;
  /** The site's IANA time zone: times are shown at its clock. */
  siteTimeZone: string;
  lastReadingAt: string | null;
  duplicateOf: string | null;
};

export type Presigned = { uploadId: string; url: string; headers: Record<string, string>; expiresAt: number };

export type PresignOutcome =
  | ({ kind: "ok" } & Presigned)
  | { kind: "duplicate"; uploadId: string; message: string }
  | { kind: "refused"; message: string; retryable: boolean; fields: string[] };

const UNREACHABLE = "Ripplemark could not be reached. Check the connection; nothing was sent.";

/** SHA-256 of the whole file as lower-case hex (the server refuses a file it already holds). */
export async function sha256Hex(file: Blob): Promise<string> {
  const digest = await crypto.subtle.digest("SHA-256", await file.arrayBuffer());
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, "0")).join("");
}

/** Content types the API accepts; anything else (or none, as some systems give .txt) goes as text/csv. */
export function contentTypeOf(file: File) {
  const known = ["text/csv", "text/plain", "application/vnd.ms-excel", "text/tab-separated-values"];
  return known.includes(file.type) ? file.type : "text/csv";
}

async function readJson(res: Response): Promise<any> {
  try {
    return await res.json();
  } catch {
    return null;
  }
}

function refusal(res: Response, json: any): { message: string; retryable: boolean; fields: string[] } {
  if (res.status === 401) return { message: "You have been signed out. Sign in again (in another tab keeps this list), then try again.", retryable: true, fields: [] };
  if (res.status === 403) return { message: "Your role may not upload files.", retryable: false, fields: [] };
  const errors: Record<string, string[]> = json?.errors ?? {};
  const message = Object.values(errors).flat().join(" ") || `The server answered ${res.status}; try again in a minute.`;
  return { message, retryable: json?.retryable === true || res.status >= 500, fields: Object.keys(errors) };
}

export async function presign(input: {
  file: File;
  sha256: string;
  siteId: string;
  loggerId: string;
  profileId: string;
}): Promise<PresignOutcome> {
  const body = new FormData();
  body.set("intent", "presign");
  body.set("fileName", input.file.name);
  body.set("sizeBytes", String(input.file.size));
  body.set("contentType", contentTypeOf(input.file));
  body.set("sha256", input.sha256);
  body.set("siteId", input.siteId);
  body.set("loggerId", input.loggerId);
  body.set("profileId", input.profileId);
  let res: Response;
  try {
    res = await fetch("/api/uploads", { method: "POST", body, headers: { Accept: "application/json" } });
  } catch {
    return { kind: "refused", message: UNREACHABLE, retryable: true, fields: [] };
  }
  const json = await readJson(res);
  if (res.ok && json?.ok) {
    return { kind: "ok", uploadId: json.uploadId, url: json.url, headers: json.headers ?? {}, expiresAt: Date.parse(json.expiresAt) || Date.now() + 4 * 60_000 };
  }
  if (res.status === 409 && json?.duplicate) return { kind: "duplicate", uploadId: json.duplicate.uploadId, message: json.duplicate.message };
  return { kind: "refused", ...refusal(res, json) };
}

export class PutFailed extends Error {
  constructor(message: string, readonly mustPresignAgain: boolean) {
    super(message);
  }
}

/** PUTs the file to the presigned URL; `onProgress` gets the bytes sent so far. */
export function putFile(target: Presigned, file: File, onProgress: (sent: number, total: number) => void): Promise<void> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("PUT", target.url);
    for (const [name, value] of Object.entries(target.headers)) xhr.setRequestHeader(name, value);
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) onProgress(e.loaded, e.total);
    };
    xhr.onload = () => {
      if (xhr.status >= 200 && xhr.status < 300) resolve();
      // 403 from storage is almost always an expired or rejected signature: ask for a new one.
      else reject(new PutFailed(`File storage refused the file (${xhr.status})`, xhr.status === 403 || xhr.status === 400));
    };
    xhr.onerror = () => reject(new PutFailed("The connection to file storage dropped", false));
    xhr.ontimeout = () => reject(new PutFailed("File storage did not answer in time", false));
    xhr.onabort = () => reject(new PutFailed("The transfer was stopped", false));
    xhr.send(file);
  });
}

export type ConfirmOutcome = { ok: true; status: UploadStatus } | { ok: false; message: string; retryable: boolean };

export async function confirm(uploadId: string): Promise<ConfirmOutcome> {
  const body = new FormData();
  body.set("intent", "confirm");
  body.set("uploadId", uploadId);
  let res: Response;
  try {
    res = await fetch("/api/uploads", { method: "POST", body, headers: { Accept: "application/json" } });
  } catch {
    return { ok: false, message: UNREACHABLE, retryable: true };
  }
  const json = await readJson(res);
  if (res.ok && json?.ok) return { ok: true, status: json.status };
  const r = refusal(res, json);
  // 409: the bytes did not all arrive; sending again fixes it.
  return { ok: false, message: r.message, retryable: r.retryable || res.status === 409 };
}

export async function fetchStatuses(ids: string[]): Promise<UploadStatusJson[] | null> {
  try {
    const res = await fetch(`/api/uploads?ids=${ids.map(encodeURIComponent).join(",")}`, { headers: { Accept: "application/json" } });
    if (!res.ok) return null;
    const json = await readJson(res);
    return Array.isArray(json?.uploads) ? json.uploads : null;
  } catch {
    return null;
  }
}
