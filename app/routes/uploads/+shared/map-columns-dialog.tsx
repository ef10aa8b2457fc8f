import { useEffect, useRef } from "react";
import { ProfileEditor, type SavedProfile } from "../../import-profiles/+shared/profile-editor.tsx";
import type { Sample } from "../../import-profiles/+shared/sample.ts";

/**
 * "Map the columns" for one file on the uploads page: the profile editor in a modal dialog,
 * working on the file's first 64 KB. Saving stores the profile and hands it back for this file.
 */
export function MapColumnsDialog({ sample, onSaved, onClose }: { sample: Sample; onSaved: (saved: SavedProfile) => void; onClose: () => void }) {
  const dialog = useRef<HTMLDialogElement>(null);
  useEffect(() => {
    const d = dialog.current;
    if (d && !d.open) d.showModal();
    return () => d?.close();
  }, []);
  return (
    <dialog
      ref={dialog}
      aria-labelledby="map-columns-title"
      className="m-auto max-h-[92vh] w-[min(72rem,96vw)] overflow-y-auto rounded-xl bg-ink-50 p-0 backdrop:bg-ink-900/50"
      onClose={onClose}
      onCancel={onClose}
    >
      <div className="sticky top-0 z-10 flex items-center justify-between gap-3 border-b border-ink-100 bg-white px-5 py-3">
        <h2 id="map-columns-title">
          Map the columns of <span className="break-all">{sample.fileName}</span>
        </h2>
        <button type="button" className="btn-quiet px-2 py-1" onClick={onClose}>
          Close
        </button>
      </div>
      <div className="p-5">
        <ProfileEditor
          formId="map-columns"
          action="/import-profiles/new"
          initialName=""
          initialProfile={null}
          sample={sample}
          allowPickSample={false}
          hidden={{ respond: "json" }}
          submitLabel="Save the profile and use it"
          onSaved={onSaved}
          onCancel={onClose}
          headingLevel={3}
        />
      </div>
    </dialog>
  );
}
