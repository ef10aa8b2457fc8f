// `npm run db:migrate` — brings the database named by DATABASE_URL up to date.
import { createDb } from "./connect.ts";
import { migrateToLatest } from "./migrator.ts";

const url = process.env.DATABASE_URL;
if (!url) throw new Error("DATABASE_URL is not set");
const db = createDb(url, 2);
try {
  await migrateToLatest(db, (l) => console.log(l));
  console.log("database is up to date");
} finally {
  await db.destroy();
}
