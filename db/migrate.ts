// `npm run db:migrate` — brings the database named by DATABASE_URL up to date: the app's Kysely
// migrations, then the job queue's own schema (graphile-worker).
import { migrateAll } from "./migrator.ts";

const url = process.env.DATABASE_URL;
if (!url) throw new Error("DATABASE_URL is not set");
await migrateAll(url, (l) => console.log(l));
console.log("database is up to date");
