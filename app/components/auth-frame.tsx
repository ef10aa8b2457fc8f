import type { ReactNode } from "react";

// The frame of the signed-out pages: a quiet card on the estuary-ink background.
export function AuthFrame({ title, children }: { title: string; children: ReactNode }) {
  return (
    <div className="flex min-h-screen items-center justify-center bg-ink-900 px-4">
      <main className="w-full max-w-md">
        <p className="mb-4 flex items-center gap-2 text-xl font-bold text-white">
          <img src="/favicon.svg" alt="" width={30} height={30} /> Ripplemark
        </p>
        <div className="card">
          <h1 className="mb-4">{title}</h1>
          {children}
        </div>
        <p className="mt-4 text-sm text-ink-300">
          Conductivity records for water-quality monitoring teams.
        </p>
      </main>
    </div>
  );
}
