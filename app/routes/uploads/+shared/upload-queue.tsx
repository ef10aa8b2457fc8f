import { useCallback, useEffect, useRef, useState } from "react";
import { sniffFile } from "#app/lib/import/sniff.ts";
import { readFileSample, type Sample } from "../../import-profiles/+shared/sample.ts";
import { MapColumnsDialog } from "./map-columns-dialog.tsx";
import { DropZone, QueueEntry } from "./queue-entry.tsx";
import {
  BEFORE_SENDING,
  FINISHED,
  FOLLOWING,
  IN_FLIGHT,
  type Field,
  type Item,
  type LoggerChoice,
  type Phase,
  type ProfileChoice,
  type SiteChoice,
} from "./queue-item.ts";
import { confirm, fetchStatuses, presign, putFile, PutFailed, sha256Hex } from "./transfer.ts";

// The files a person is uploading now. Each file goes: reading (first 64 KB, layout sniffed) →
// checking (SHA-256) → ready (the person checks logger, site and profile) → waiting for a slot →
// sending (bytes to storage, with progress) → confirming → queued → processing → done, failed or
// duplicate. Up to PARALLEL files are sent at once. A failure before the server holds the file
// leaves it in the list with "Try again"; nothing is dropped silently.

export type { LoggerChoice, ProfileChoice, SiteChoice };

const PARALLEL = 3;
const POLL_MS = 1000;

let keyCounter = 0;

export function UploadQueue({
  sites,
  loggers,
  profiles,
  onFinished,
}: {
  sites: SiteChoice[];
  loggers: LoggerChoice[];
  profiles: ProfileChoice[];
  onFinished: () => void;
}) {
  const itemsRef = useRef<Item[]>([]);
  const [items, setItems] = useState<Item[]>([]);
  const active = useRef(new Set<string>());
  const hashing = useRef<Promise<void>>(Promise.resolve());
  const [extraProfiles, setExtraProfiles] = useState<ProfileChoice[]>([]);
  const allProfiles = [...extraProfiles.filter((p) => !profiles.some((q) => q.id === p.id)), ...profiles];
  const profilesRef = useRef(allProfiles);
  profilesRef.current = allProfiles;
  const [mapping, setMapping] = useState<string | null>(null);
  const onFinishedRef = useRef(onFinished);
  onFinishedRef.current = onFinished;

  // The ref is the source of truth (async steps read it); state mirrors it for rendering.
  const commit = useCallback((next: Item[]) => {
    itemsRef.current = next;
    setItems(next);
  }, []);
  const patch = useCallback(
    (key: string, change: Partial<Item> | ((item: Item) => Partial<Item>)) => {
      commit(itemsRef.current.map((it) => (it.key === key ? { ...it, ...(typeof change === "function" ? change(it) : change) } : it)));
    },
    [commit],
  );
  const get = (key: string) => itemsRef.current.find((i) => i.key === key);

  function prefill(sample: Sample | null, sniffed: { serialHint: string | null; headerSignature: string }) {
    const logger = sniffed.serialHint ? loggers.find((l) => l.serial.toLowerCase() === sniffed.serialHint!.toLowerCase()) : undefined;
    const profile = sniffed.headerSignature ? profilesRef.current.find((p) => p.headerSignature === sniffed.headerSignature) : undefined;
    return {
      loggerId: logger?.id ?? "",
      siteId: logger?.siteId ?? "",
      profileId: profile?.id ?? "",
      prefilled: { logger: !!logger, site: !!logger?.siteId, profile: !!profile },
      sample,
    };
  }

  async function addFiles(files: File[]) {
    const added: Item[] = files.map((file) => ({
      key: `f${++keyCounter}`,
      file,
      phase: "reading",
      sample: null,
      headerSignature: "",
      serialHint: null,
      blockedBecause: null,
      sha256: null,
      startWhenChecked: false,
      loggerId: "",
      siteId: "",
      profileId: "",
      prefilled: { logger: false, site: false, profile: false },
      missing: [],
      sentFraction: 0,
      uploadId: null,
      presigned: null,
      status: null,
      needsStatus: false,
      message: null,
      retryable: false,
      duplicateOf: null,
    }));
    commit([...itemsRef.current, ...added]);
    for (const item of added) void prepare(item);
  }

  async function prepare(item: Item) {
    const { file, key } = item;
    if (file.size === 0) {
      patch(key, { phase: "blocked", blockedBecause: "The file is empty." });
      return;
    }
    try {
      const sample = await readFileSample(file);
      const sniffed = sniffFile(sample.text, { fileName: file.name, truncated: sample.truncated });
      if (sniffed.problem && (sniffed.problem.kind === "empty" || sniffed.problem.kind === "binary")) {
        patch(key, { phase: "blocked", blockedBecause: sniffed.problem.message });
        return;
      }
      patch(key, { phase: "checking", serialHint: sniffed.serialHint, headerSignature: sniffed.headerSignature, ...prefill(sample, sniffed) });
    } catch {
      patch(key, { phase: "blocked", blockedBecause: "The file could not be read. Is it still on this computer?" });
      return;
    }
    if (!globalThis.crypto?.subtle) {
      // Browsers offer SHA-256 only on https (or this computer's own address).
      patch(key, { phase: "blocked", blockedBecause: "This browser checks files only on a secure (https) address. Open Ripplemark over https and add the files again." });
      return;
    }
    // One file at a time: hashing holds the whole file in memory.
    hashing.current = hashing.current.then(async () => {
      if (!get(key)) return; // removed meanwhile
      try {
        const sha256 = await sha256Hex(file);
        const twin = itemsRef.current.find((o) => o.key !== key && o.sha256 === sha256);
        if (twin) {
          patch(key, { phase: "blocked", sha256, blockedBecause: `Same content as “${twin.file.name}” above: it is uploaded once.` });
          return;
        }
        const current = get(key);
        const missing = current ? missingFields(current) : [];
        const start = (current?.startWhenChecked ?? false) && missing.length === 0;
        patch(key, { sha256, phase: start ? "waiting" : "ready", missing: current?.startWhenChecked ? missing : [], startWhenChecked: false });
        if (start) pump();
      } catch {
        patch(key, { phase: "blocked", blockedBecause: "The file could not be read to check it. Is it still on this computer?" });
      }
    });
  }

  function missingFields(it: Item): Field[] {
    return (["loggerId", "siteId", "profileId"] as Field[]).filter((f) => !it[f]);
  }

  function uploadAll() {
    commit(
      itemsRef.current.map((it) => {
        if (it.phase === "checking" || it.phase === "reading") return { ...it, startWhenChecked: true };
        if (it.phase !== "ready") return it;
        const missing = missingFields(it);
        return missing.length ? { ...it, missing } : { ...it, phase: "waiting", missing: [] };
      }),
    );
    pump();
  }

  function retry(key: string) {
    patch(key, { phase: "waiting", message: null });
    pump();
  }

  function pump() {
    while (active.current.size < PARALLEL) {
      const next = itemsRef.current.find((i) => i.phase === "waiting" && i.sha256 && !active.current.has(i.key));
      if (!next) break;
      active.current.add(next.key);
      void send(next.key).finally(() => {
        active.current.delete(next.key);
        pump();
      });
    }
  }

  async function send(key: string) {
    const item = get(key);
    if (!item || !item.sha256) return;
    patch(key, { phase: "sending", sentFraction: 0, message: null });
    // A retry after a failed transfer reuses the signed address while it is still good.
    let target = item.presigned && item.presigned.expiresAt - Date.now() > 60_000 ? item.presigned : null;
    if (!target) {
      const answer = await presign({ file: item.file, sha256: item.sha256, siteId: item.siteId, loggerId: item.loggerId, profileId: item.profileId });
      if (answer.kind === "duplicate") {
        patch(key, { phase: "duplicate", message: answer.message, duplicateOf: answer.uploadId });
        return;
      }
      if (answer.kind === "refused") {
        const missing = answer.fields.filter((f): f is Field => f === "loggerId" || f === "siteId" || f === "profileId");
        patch(key, { phase: "error", message: answer.message, retryable: answer.retryable, missing });
        return;
      }
      target = answer;
      patch(key, { uploadId: answer.uploadId, presigned: answer });
    }
    let shown = -1;
    try {
      await putFile(target, item.file, (sent, total) => {
        const percent = Math.floor((sent / total) * 100);
        if (percent !== shown) {
          shown = percent;
          patch(key, { sentFraction: sent / total });
        }
      });
    } catch (e) {
      const failed = e instanceof PutFailed ? e : new PutFailed("The transfer failed", false);
      patch(key, (it) => ({
        phase: "error",
        retryable: true,
        message: `${failed.message}. Nothing is lost: the file is still here, try again.`,
        presigned: failed.mustPresignAgain ? null : it.presigned,
      }));
      return;
    }
    patch(key, { phase: "confirming", sentFraction: 1 });
    const confirmed = await confirm(target.uploadId);
    if (!confirmed.ok) {
      patch(key, { phase: "error", message: confirmed.message, retryable: confirmed.retryable });
      return;
    }
    const phase: Phase = confirmed.status === "awaiting-file" ? "queued" : confirmed.status;
    patch(key, { phase, needsStatus: true });
  }

  // Follow the server's status of every file it holds that is not finished yet.
  const followIds = items
    .filter((i) => i.uploadId && (FOLLOWING.includes(i.phase) || i.needsStatus))
    .map((i) => i.uploadId!)
    .join(",");
  useEffect(() => {
    if (!followIds) return;
    let stopped = false;
    let busy = false;
    async function poll() {
      if (busy || stopped) return;
      busy = true;
      const statuses = await fetchStatuses(followIds.split(","));
      busy = false;
      if (!statuses || stopped) return;
      let finished = false;
      commit(
        itemsRef.current.map((it) => {
          const s = statuses.find((x) => x.id === it.uploadId);
          if (!s || !(FOLLOWING.includes(it.phase) || it.needsStatus)) return it;
          const phase: Phase = s.status === "awaiting-file" ? it.phase : s.status;
          if (FINISHED.includes(phase) && !FINISHED.includes(it.phase)) finished = true;
          if (FINISHED.includes(phase) && it.needsStatus) finished = true;
          return { ...it, status: s, phase, needsStatus: false, message: s.message, duplicateOf: s.duplicateOf ?? it.duplicateOf };
        }),
      );
      if (finished) onFinishedRef.current();
    }
    void poll();
    const timer = setInterval(poll, POLL_MS);
    return () => {
      stopped = true;
      clearInterval(timer);
    };
  }, [followIds, commit]);

  // Leaving the page while files are on their way would stop them: ask first.
  const sending = items.some((i) => IN_FLIGHT.includes(i.phase));
  useEffect(() => {
    if (!sending) return;
    const warn = (e: BeforeUnloadEvent) => {
      e.preventDefault();
    };
    window.addEventListener("beforeunload", warn);
    return () => window.removeEventListener("beforeunload", warn);
  }, [sending]);

  function choose(key: string, field: Field, value: string) {
    patch(key, (it) => {
      const next: Partial<Item> = { [field]: value, missing: it.missing.filter((f) => f !== field) };
      // A refused file the server never took goes back to ready once its choices change.
      if (it.phase === "error" && !it.uploadId) Object.assign(next, { phase: "ready", message: null });
      if (field === "loggerId") {
        next.prefilled = { ...it.prefilled, logger: false };
        // The site follows the logger's deployment unless the person chose one already.
        const logger = loggers.find((l) => l.id === value);
        if (logger?.siteId && (!it.siteId || it.prefilled.site)) {
          next.siteId = logger.siteId;
          next.prefilled = { ...it.prefilled, logger: false, site: true };
          next.missing = (next.missing ?? []).filter((f) => f !== "siteId");
        }
      }
      if (field === "siteId") next.prefilled = { ...it.prefilled, site: false };
      if (field === "profileId") next.prefilled = { ...it.prefilled, profile: false };
      return next;
    });
  }

  function profileSaved(key: string, saved: ProfileChoice) {
    setExtraProfiles((list) => [saved, ...list.filter((p) => p.id !== saved.id)]);
    // Other files of the same layout that have no profile yet get it too.
    commit(
      itemsRef.current.map((it) =>
        it.key === key || (BEFORE_SENDING.includes(it.phase) && !it.profileId && it.headerSignature && it.headerSignature === saved.headerSignature)
          ? { ...it, profileId: saved.id, prefilled: { ...it.prefilled, profile: it.key !== key }, missing: it.missing.filter((f) => f !== "profileId") }
          : it,
      ),
    );
    setMapping(null);
  }

  function remove(key: string) {
    commit(itemsRef.current.filter((i) => i.key !== key));
  }

  function clearFinished() {
    commit(itemsRef.current.filter((i) => !FINISHED.includes(i.phase)));
  }

  const startable = items.filter((i) => i.phase === "ready" || i.phase === "checking" || i.phase === "reading");
  const mappingItem = mapping ? items.find((i) => i.key === mapping) : undefined;

  return (
    <div className="space-y-4">
      <DropZone onFiles={addFiles} />
      {items.length > 0 ? (
        <section aria-labelledby="queue-title" className="space-y-3">
          <div className="flex flex-wrap items-center justify-between gap-3">
            <h2 id="queue-title">Files to upload</h2>
            <div className="flex flex-wrap gap-2">
              {items.some((i) => FINISHED.includes(i.phase)) ? (
                <button type="button" className="btn-quiet" onClick={clearFinished}>
                  Clear finished files
                </button>
              ) : null}
              <button type="button" className="btn" onClick={uploadAll} disabled={startable.length === 0}>
                {startable.length === 0 ? "Upload" : startable.length === 1 ? "Upload 1 file" : `Upload ${startable.length} files`}
              </button>
            </div>
          </div>
          <ul className="space-y-3">
            {items.map((it) => (
              <QueueEntry
                key={it.key}
                item={it}
                sites={sites}
                loggers={loggers}
                profiles={allProfiles}
                onChoose={(field, value) => choose(it.key, field, value)}
                onMap={() => setMapping(it.key)}
                onRetry={() => retry(it.key)}
                onRemove={() => remove(it.key)}
              />
            ))}
          </ul>
        </section>
      ) : null}
      {mappingItem?.sample ? (
        <MapColumnsDialog
          key={mappingItem.key}
          sample={mappingItem.sample}
          onSaved={(saved) => profileSaved(mappingItem.key, saved)}
          onClose={() => setMapping(null)}
        />
      ) : null}
    </div>
  );
}
