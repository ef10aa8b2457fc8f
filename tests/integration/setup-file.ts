import { inject } from "vitest";
import { createTestDatabase } from "../support/databases.ts";
import { applyTestEnv } from "../support/env.ts";

// Each test file gets its own database copied from the run's migrated template, so files run in
// parallel.
const name = await createTestDatabase(inject("templateDb"));
applyTestEnv(name);
