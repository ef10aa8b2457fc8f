import { useRef, useState } from "react";
import { Link } from "react-router";
import { countsText, formatBytes, ProgressBar, rangeText } from "./status-views.tsx";
import {
  BEFORE_SENDING,
  FIELD_MESSAGES,
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

// The uploads page's drop zone and one file's card: its choices, progress and outcome.

export function DropZone({ onFiles }: { onFiles: (files: File[]) => void }) {
  const input = useRef<HTMLInputElement>(null);
  const [over, setOver] = useState(false);
  return (
    <div
      className={`flex flex-col items-center gap-3 rounded-xl border-2 border-dashed px-4 py-8 text-center ${over ? "border-lake-600 bg-lake-100" : "border-ink-300 bg-white"}`}
      onDragOver={(e) => {
        e.preventDefault();
        e.dataTransfer.dropEffect = "copy";
        setOver(true);
      }}
      onDragLeave={() => setOver(false)}
      onDrop={(e) => {
        e.preventDefault();
        setOver(false);
        onFiles(Array.from(e.dataTransfer.files));
      }}
    >
      <p className="text-lg font-semibold">Drop logger files here</p>
      <p className="text-ink-700">CSV or text exports, as many as you brought back from the round.</p>
      <input
        ref={input}
        type="file"
        multiple
        accept=".csv,.txt,.tsv,.dat,text/csv,text/plain"
        className="sr-only"
        tabIndex={-1}
        aria-label="Logger files"
        data-testid="upload-input"
        onChange={(e) => {
          onFiles(Array.from(e.target.files ?? []));
          e.target.value = "";
        }}
      />
      <button type="button" className="btn" onClick={() => input.current?.click()}>
        Choose files
      </button>
    </div>
  );
}

function phaseProgress(it: Item): { percent: number | null; text: string; tone: "lake" | "reed" } | null {
  switch (it.phase) {
    case "reading":
      return { percent: null, text: "Reading the file…", tone: "lake" };
    case "checking":
      return { percent: null, text: "Checking file…", tone: "lake" };
    case "waiting":
      return { percent: 0, text: "Waiting to send", tone: "lake" };
    case "sending":
      return { percent: it.sentFraction * 100, text: `Sending ${Math.floor(it.sentFraction * 100)}%`, tone: "lake" };
    case "confirming":
      return { percent: 100, text: "Sent, checking arrival", tone: "lake" };
    case "queued":
      return { percent: 0, text: "Queued for processing", tone: "lake" };
    case "processing": {
      const s = it.status;
      const percent = s && s.sizeBytes > 0 ? (s.bytesProcessed / s.sizeBytes) * 100 : 0;
      return { percent, text: `Processing ${Math.floor(percent)}%`, tone: "lake" };
    }
    case "done":
      return { percent: 100, text: "Done 100%", tone: "reed" };
    default:
      return null;
  }
}

const PHASE_WORDS: Record<Phase, string> = {
  reading: "Reading the file",
  checking: "Checking file",
  ready: "Ready to upload",
  blocked: "Cannot be uploaded",
  waiting: "Waiting to send",
  sending: "Sending",
  confirming: "Sent",
  queued: "Queued",
  processing: "Processing",
  done: "Done",
  failed: "Failed",
  duplicate: "Already uploaded",
  error: "Not sent",
};

export function QueueEntry({
  item: it,
  sites,
  loggers,
  profiles,
  onChoose,
  onMap,
  onRetry,
  onRemove,
}: {
  item: Item;
  sites: SiteChoice[];
  loggers: LoggerChoice[];
  profiles: ProfileChoice[];
  onChoose: (field: Field, value: string) => void;
  onMap: () => void;
  onRetry: () => void;
  onRemove: () => void;
}) {
  const editable = BEFORE_SENDING.includes(it.phase) || (it.phase === "error" && !it.uploadId);
  const progress = phaseProgress(it);
  const id = `q-${it.key}`;
  const logger = loggers.find((l) => l.id === it.loggerId);
  const site = sites.find((s) => s.id === it.siteId);
  const profile = profiles.find((p) => p.id === it.profileId);
  const matching = it.headerSignature ? profiles.filter((p) => p.headerSignature === it.headerSignature) : [];
  const deployedElsewhere = logger?.siteId && it.siteId && logger.siteId !== it.siteId ? sites.find((s) => s.id === logger.siteId) : undefined;
  const status = it.status;
  const removable = !IN_FLIGHT.includes(it.phase) && !FOLLOWING.includes(it.phase);

  return (
    <li className="card space-y-3" aria-labelledby={`${id}-name`} data-testid="upload-entry" data-phase={it.phase}>
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div>
          <h3 id={`${id}-name`} className="break-all font-semibold">{it.file.name}</h3>
          <p className="text-sm text-ink-500">{formatBytes(it.file.size)}</p>
        </div>
        {removable ? (
          <button type="button" className="btn-quiet px-2 py-1 text-sm" onClick={onRemove} aria-label={`Remove ${it.file.name} from the list`}>
            Remove
          </button>
        ) : null}
      </div>

      {editable && it.phase !== "blocked" ? (
        <div className="grid gap-3 md:grid-cols-3">
          <Choice
            id={`${id}-logger`}
            label="Logger"
            value={it.loggerId}
            error={it.missing.includes("loggerId") ? FIELD_MESSAGES.loggerId : null}
            note={it.prefilled.logger && it.serialHint ? `Serial ${it.serialHint} found in the file.` : null}
            onChange={(v) => onChoose("loggerId", v)}
          >
            <option value="">Choose…</option>
            {loggers.map((l) => (
              <option key={l.id} value={l.id}>
                {l.serial}
                {l.siteId ? ` · at ${sites.find((s) => s.id === l.siteId)?.code ?? "a site"}` : " · not deployed"}
              </option>
            ))}
          </Choice>
          <Choice
            id={`${id}-site`}
            label="Site"
            value={it.siteId}
            error={it.missing.includes("siteId") ? FIELD_MESSAGES.siteId : null}
            note={
              deployedElsewhere
                ? `${logger!.serial} is deployed at ${deployedElsewhere.code} now; these readings will be stored for ${site?.code}.`
                : it.prefilled.site && logger
                  ? `Where ${logger.serial} is deployed now.`
                  : null
            }
            warn={!!deployedElsewhere}
            onChange={(v) => onChoose("siteId", v)}
          >
            <option value="">Choose…</option>
            <SiteOptions sites={sites} />
          </Choice>
          <div>
            <Choice
              id={`${id}-profile`}
              label="Import profile"
              value={it.profileId}
              error={it.missing.includes("profileId") ? FIELD_MESSAGES.profileId : null}
              note={
                it.prefilled.profile && profile
                  ? "Its header line matches this file."
                  : matching.length === 0 && it.phase !== "reading"
                    ? "No saved profile matches this file's header line."
                    : null
              }
              onChange={(v) => onChoose("profileId", v)}
            >
              <option value="">Choose…</option>
              {[...matching, ...profiles.filter((p) => !matching.includes(p))].map((p) => (
                <option key={p.id} value={p.id}>
                  {p.name}
                  {matching.includes(p) ? " (matches this file)" : ""}
                </option>
              ))}
            </Choice>
            {it.sample ? (
              <button type="button" className={`mt-2 ${matching.length === 0 ? "btn" : "btn-quiet"} py-1 text-sm`} onClick={onMap}>
                Map the columns
              </button>
            ) : null}
          </div>
        </div>
      ) : !editable ? (
        <p className="text-sm text-ink-700">
          {logger?.serial ?? "—"} · {site ? `${site.code} ${site.name}` : "—"} · {profile?.name ?? "no profile"}
        </p>
      ) : null}

      {progress ? <ProgressBar label={`Progress of ${it.file.name}`} percent={progress.percent} text={progress.text} tone={progress.tone} /> : null}

      <div aria-live="polite" className="text-sm" data-testid="upload-outcome">
        <p className="font-semibold">
          <span className="sr-only">{it.file.name}: </span>
          {PHASE_WORDS[it.phase]}
          {it.phase === "processing" && status ? ` · ${status.rowsTotal.toLocaleString("en-GB")} rows read` : ""}
        </p>
        {it.phase === "done" && status ? (
          <>
            <p data-testid="upload-counts">{countsText(status)}</p>
            {rangeText(status.firstReadingAt, status.lastReadingAt, status.siteTimeZone) ? <p>Covers {rangeText(status.firstReadingAt, status.lastReadingAt, status.siteTimeZone)}</p> : null}
            {status.message ? <p className="text-ink-700">{status.message}</p> : null}
          </>
        ) : null}
        {it.phase === "blocked" ? <p className="text-brick-700">{it.blockedBecause}</p> : null}
        {it.phase === "failed" ? <p className="text-brick-700">{it.message ?? "Processing failed."}</p> : null}
        {it.phase === "duplicate" ? (
          <p className="text-amber-700">
            {it.message ?? "This file was uploaded before; it was not ingested again."}{" "}
            {it.duplicateOf ? (
              <Link to={`/uploads/${it.duplicateOf}`} className="text-lake-700 underline">
                Open the earlier upload
              </Link>
            ) : null}
          </p>
        ) : null}
        {it.phase === "error" ? <p className="text-brick-700">{it.message}</p> : null}
      </div>

      <div className="flex flex-wrap gap-2">
        {it.phase === "error" && it.retryable ? (
          <button type="button" className="btn" onClick={onRetry}>
            Try again
          </button>
        ) : null}
        {it.phase === "error" && !it.retryable && !it.uploadId ? (
          <span className="text-sm text-ink-500">Change the choices above, then upload again.</span>
        ) : null}
        {it.uploadId && (FINISHED.includes(it.phase) || FOLLOWING.includes(it.phase)) ? (
          <Link to={`/uploads/${it.uploadId}`} className="btn-quiet py-1 text-sm">
            Open the upload
          </Link>
        ) : null}
      </div>
    </li>
  );
}

function SiteOptions({ sites }: { sites: SiteChoice[] }) {
  const mine = sites.filter((s) => s.assigned);
  const others = sites.filter((s) => !s.assigned);
  const option = (s: SiteChoice) => (
    <option key={s.id} value={s.id}>
      {s.code} · {s.name}
    </option>
  );
  if (mine.length === 0) return <>{others.map(option)}</>;
  return (
    <>
      <optgroup label="Your sites">{mine.map(option)}</optgroup>
      <optgroup label="Other sites">{others.map(option)}</optgroup>
    </>
  );
}

function Choice({
  id,
  label,
  value,
  error,
  note,
  warn,
  onChange,
  children,
}: {
  id: string;
  label: string;
  value: string;
  error: string | null;
  note: string | null;
  warn?: boolean;
  onChange: (value: string) => void;
  children: React.ReactNode;
}) {
  const describedBy = [note ? `${id}-note` : null, error ? `${id}-error` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div>
      <label htmlFor={id} className="field-label">{label}</label>
      <select id={id} className="field-input" value={value} aria-invalid={error ? true : undefined} aria-describedby={describedBy} onChange={(e) => onChange(e.target.value)}>
        {children}
      </select>
      {note ? (
        <p id={`${id}-note`} className={`mt-0.5 text-sm ${warn ? "text-amber-700" : "text-ink-500"}`}>
          {note}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="field-error">
          {error}
        </p>
      ) : null}
    </div>
  );
}
