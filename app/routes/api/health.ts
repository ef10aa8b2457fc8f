import { sql } from "kysely";
import { db } from "#app/utils/db.server.ts";

// Liveness for scripts and load balancers: answers 200 when the database answers. Holds no data.
export async function loader() {
  try {
    await sql`select 1`.execute(db);
    return Response.json({ ok: true });
  } catch {
    return Response.json({ ok: false, error: "database unavailable" }, { status: 503 });
  }
}
