import { useId, useState } from "react";
import { MAX_PHOTO_BYTES, MAX_PHOTOS, PHOTO_CONTENT_TYPES } from "#app/lib/visits/visit-input.ts";
import { putFile } from "../../uploads/+shared/transfer.ts";

// Photos of a visit, optional. Like logger files, each goes straight from the tablet to storage:
// /api/visits/photos presigns a PUT for one object key, the browser sends the bytes (with a progress
// bar), then confirms; the form carries the object keys, checked again when the visit is saved.

type Photo = { id: string; name: string; key?: string; sent: number; total: number; state: "sending" | "done" | "failed"; message?: string };

async function post(body: Record<string, string>) {
  const form = new FormData();
  for (const [k, v] of Object.entries(body)) form.set(k, v);
  const res = await fetch("/api/visits/photos", { method: "POST", body: form, headers: { Accept: "application/json" } });
  const json = await res.json().catch(() => null);
  return { ok: res.ok && json?.ok, json, status: res.status };
}

function errorText(json: any, status: number) {
  const errors: Record<string, string[]> = json?.errors ?? {};
  return Object.values(errors).flat().join(" ") || `The server answered ${status}; try again.`;
}

export function PhotoPicker({ initialKeys = [] }: { initialKeys?: string[] }) {
  const inputId = useId();
  const [photos, setPhotos] = useState<Photo[]>(() =>
    initialKeys.map((key) => ({ id: key, key, name: key.split("/").pop() ?? "photo", sent: 1, total: 1, state: "done" as const })),
  );
  const update = (id: string, patch: Partial<Photo>) => setPhotos((ps) => ps.map((p) => (p.id === id ? { ...p, ...patch } : p)));

  async function send(file: File) {
    const id = crypto.randomUUID();
    setPhotos((ps) => [...ps, { id, name: file.name, sent: 0, total: file.size, state: "sending" }]);
    if (!(PHOTO_CONTENT_TYPES as readonly string[]).includes(file.type)) return update(id, { state: "failed", message: "Not a JPEG, PNG, WebP or HEIC photo." });
    if (file.size > MAX_PHOTO_BYTES) return update(id, { state: "failed", message: `Larger than ${MAX_PHOTO_BYTES / 1048576} MB.` });
    try {
      const presigned = await post({ intent: "presign", fileName: file.name, sizeBytes: String(file.size), contentType: file.type });
      if (!presigned.ok) return update(id, { state: "failed", message: errorText(presigned.json, presigned.status) });
      const { key, url, headers } = presigned.json;
      await putFile({ uploadId: key, url, headers, expiresAt: Date.now() + 60_000 }, file, (sent, total) => update(id, { sent, total }));
      const confirmed = await post({ intent: "confirm", key });
      if (!confirmed.ok) return update(id, { state: "failed", message: errorText(confirmed.json, confirmed.status) });
      update(id, { key, state: "done", sent: file.size });
    } catch (e) {
      update(id, { state: "failed", message: (e as Error).message || "The photo could not be sent." });
    }
  }

  const kept = photos.filter((p) => p.state === "done" && p.key);
  return (
    <fieldset className="space-y-3">
      <legend className="text-lg font-semibold">Photos (optional)</legend>
      {kept.map((p, i) => (
        <input key={p.id} type="hidden" name={`photoKeys[${i}]`} value={p.key} />
      ))}
      <label htmlFor={inputId} className="btn-quiet min-h-12 cursor-pointer px-5 text-base">
        Add photos
      </label>
      <input
        id={inputId}
        type="file"
        accept={PHOTO_CONTENT_TYPES.join(",")}
        multiple
        className="sr-only"
        data-testid="photo-input"
        disabled={photos.length >= MAX_PHOTOS}
        onChange={(e) => {
          for (const f of Array.from(e.currentTarget.files ?? []).slice(0, MAX_PHOTOS - photos.length)) void send(f);
          e.currentTarget.value = "";
        }}
      />
      <p className="text-sm text-ink-500">Up to {MAX_PHOTOS} photos of the sensor and site, {MAX_PHOTO_BYTES / 1048576} MB each. They are sent now; the visit keeps them when you save.</p>
      {photos.length ? (
        <ul className="space-y-2">
          {photos.map((p) => {
            const pct = p.total ? Math.round((100 * p.sent) / p.total) : 0;
            return (
              <li key={p.id} className="flex flex-wrap items-center gap-3 rounded border border-ink-100 bg-white px-3 py-2" data-testid="photo-entry" data-state={p.state}>
                <span className="min-w-0 flex-1 break-all">{p.name}</span>
                <progress className="w-32" max={100} value={pct} aria-label={`Sending ${p.name}`} />
                <span className="text-sm">
                  {p.state === "done" ? "Sent" : p.state === "failed" ? `Not sent: ${p.message}` : `${pct} %`}
                </span>
                <button type="button" className="btn-quiet min-h-11" onClick={() => setPhotos((ps) => ps.filter((x) => x.id !== p.id))}>
                  Remove<span className="sr-only"> {p.name}</span>
                </button>
              </li>
            );
          })}
        </ul>
      ) : null}
    </fieldset>
  );
}
