import { readFileSync } from "node:fs";
import { previewImport } from "#app/lib/import/preview.ts";
import { resolveDraft, sniffFile, type DraftAnswers, type SniffOptions } from "#app/lib/import/sniff.ts";

const FIXTURES = new URL("../../fixtures/logger-files/", import.meta.url);

/** A fixture as the browser would hand it over: decoded as UTF-8 (invalid bytes become U+FFFD). */
export function fixture(name: string): string {
  return readFileSync(new URL(name, FIXTURES), "utf8");
}

/** "Now" for the future check: 2025-06-01T00:00:00Z, after every fixture reading and long before 2099. */
export const NOW = Date.UTC(2025, 5, 1);

export function iso(ms: number): string {
  return new Date(ms).toISOString();
}

/** Sniff a fixture, answer the questions, and run every data line through the compiled profile. */
export function importFixture(name: string, answers: DraftAnswers = {}, sniffOptions: SniffOptions = {}) {
  const text = fixture(name);
  const sniffed = sniffFile(text, { fileName: name, ...sniffOptions });
  const resolved = resolveDraft(sniffed.draftProfile, answers);
  if (!resolved.success) throw new Error(`${name}: ${resolved.problems.join("; ")}`);
  const result = previewImport(text, resolved.profile, { now: NOW });
  return { sniffed, profile: resolved.profile, ...result };
}
