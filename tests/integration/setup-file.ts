import { createTestDatabase } from "../support/databases.ts";
import { applyTestEnv } from "../support/env.ts";

// Each test file gets its own database copied from the migrated template, so files run in parallel.
const name = await createTestDatabase();
applyTestEnv(name);
