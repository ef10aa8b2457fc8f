import { dropTestDatabases, prepareTemplate } from "../support/databases.ts";

// Once per run: clear old test databases and migrate a template "up from empty" that every test
// file copies.
export default async function setup() {
  await dropTestDatabases();
  await prepareTemplate();
}
