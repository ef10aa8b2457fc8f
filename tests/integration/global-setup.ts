import type { TestProject } from "vitest/node";
import { dropRunDatabases, dropStaleDatabases, newRunId, prepareTemplate } from "../support/databases.ts";

// Once per run: migrate a template database "up from empty" that every test file copies.
export default async function setup(project: TestProject) {
  await dropStaleDatabases();
  const runId = newRunId();
  project.provide("templateDb", await prepareTemplate(runId));
  return async () => {
    await dropRunDatabases(runId);
  };
}

declare module "vitest" {
  export interface ProvidedContext {
    templateDb: string;
  }
}
