import type { Sample } from "../../import-profiles/+shared/sample.ts";
import type { Presigned, UploadStatusJson } from "./transfer.ts";

// One file in the uploads page's list, and the phases it goes through (see upload-queue.tsx).

export type SiteChoice = { id: string; code: string; name: string; assigned: boolean };
export type LoggerChoice = { id: string; serial: string; model: string; siteId: string | null };
export type ProfileChoice = { id: string; name: string; headerSignature: string };

export type Phase =
  | "reading"
  | "checking"
  | "ready"
  | "blocked"
  | "waiting"
  | "sending"
  | "confirming"
  | "queued"
  | "processing"
  | "done"
  | "failed"
  | "duplicate"
  | "error";

export type Field = "loggerId" | "siteId" | "profileId";

export type Item = {
  key: string;
  file: File;
  phase: Phase;
  sample: Sample | null;
  headerSignature: string;
  serialHint: string | null;
  /** Why the file cannot be uploaded (empty, binary, same as another file in the list). */
  blockedBecause: string | null;
  sha256: string | null;
  /** Upload was asked for while the file was still being checked. */
  startWhenChecked: boolean;
  loggerId: string;
  siteId: string;
  profileId: string;
  prefilled: { logger: boolean; site: boolean; profile: boolean };
  missing: Field[];
  sentFraction: number;
  uploadId: string | null;
  presigned: Presigned | null;
  status: UploadStatusJson | null;
  /** The last step changed the server status without telling the details: fetch them once. */
  needsStatus: boolean;
  message: string | null;
  retryable: boolean;
  duplicateOf: string | null;
};

export const BEFORE_SENDING: Phase[] = ["reading", "checking", "ready", "blocked"];
export const IN_FLIGHT: Phase[] = ["waiting", "sending", "confirming"];
export const FOLLOWING: Phase[] = ["queued", "processing"];
export const FINISHED: Phase[] = ["done", "failed", "duplicate"];

export const FIELD_MESSAGES: Record<Field, string> = {
  loggerId: "Choose the logger",
  siteId: "Choose the site",
  profileId: "Choose an import profile, or map the columns",
};
