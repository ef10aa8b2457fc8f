import { sql } from "kysely";
import { to as copyTo, from as copyFrom } from "pg-copy-streams";
import { pipeline } from "node:stream/promises";
import { Readable, Writable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { loadOverviewCached } from "#app/models/overview.server.ts";
import { changeFeedReady, changeStamp } from "#app/utils/change-feed.server.ts";
import { cached, clearResponseCache } from "#app/utils/response-cache.server.ts";
import { db } from "#app/utils/db.server.ts";
import { createPeople } from "../support/people.ts";

// The response caches and the change notices that keep them fresh (db/migrations/0009, app/utils/
// change-feed.server.ts, app/utils/response-cache.server.ts), against the real PostgreSQL. Every
// write here is a statement that touches no row: statement-level triggers fire all the same, which
// is the property the cache relies on for 300,000-row COPYs too.

/** Waits until the stamp of `tables` differs from `before` (a notice arrived), or gives up. */
async function stampMoves(tables: Parameters<typeof changeStamp>[0], before: string | null, ms = 3_000) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    const now = changeStamp(tables);
    if (now !== null && now !== before) return true;
    await new Promise((r) => setTimeout(r, 10));
  }
  return false;
}

const touchReadings = () => sql`update readings set quality_flag = quality_flag where false`.execute(db);

function counter() {
  let n = 0;
  const compute = async () => {
    n++;
    await new Promise((r) => setTimeout(r, 20));
    return { computed: n };
  };
  return { compute, count: () => n };
}

beforeAll(async () => {
  expect(await changeFeedReady()).toBe(true);
});
afterAll(() => clearResponseCache());

describe("change notices", () => {
  it("arrive after a committed write, per table", async () => {
    const readings = changeStamp(["readings"]);
    const sites = changeStamp(["site"]);
    await touchReadings();
    expect(await stampMoves(["readings"], readings)).toBe(true);
    expect(changeStamp(["site"])).toBe(sites);
  });

  it("do not arrive for a write that is rolled back", async () => {
    const before = changeStamp(["readings"]);
    await expect(
      db.transaction().execute(async (trx) => {
        await sql`update readings set quality_flag = quality_flag where false`.execute(trx);
        throw new Error("roll back");
      }),
    ).rejects.toThrow("roll back");
    // Negative check: give a notice time to arrive (a committed one takes a few ms, see above).
    expect(await stampMoves(["readings"], before, 500)).toBe(false);
  });

  it("arrive only at commit, not while the transaction is open", async () => {
    const before = changeStamp(["readings"]);
    await db.transaction().execute(async (trx) => {
      await sql`update readings set quality_flag = quality_flag where false`.execute(trx);
      expect(await stampMoves(["readings"], before, 300)).toBe(false);
    });
    expect(await stampMoves(["readings"], before)).toBe(true);
  });

  it("arrive for COPY into readings, the ingest's way of writing", async () => {
    const before = changeStamp(["readings"]);
    const pool = (await import("pg")).default;
    const client = new pool.Client({ connectionString: process.env.DATABASE_URL });
    await client.connect();
    try {
      await pipeline(Readable.from([]), client.query(copyFrom("copy readings (site_id, logger_id, time) from stdin")));
      // and COPY TO (a read) sends nothing
      const afterCopy = await stampMoves(["readings"], before);
      expect(afterCopy).toBe(true);
      const mid = changeStamp(["readings"]);
      await pipeline(client.query(copyTo("copy (select 1 from readings limit 0) to stdout")), new Writable({ write: (_c, _e, cb) => cb() }));
      expect(await stampMoves(["readings"], mid, 300)).toBe(false);
    } finally {
      await client.end();
    }
  });
});

describe("cached()", () => {
  it("computes once for many callers at once, then answers from the cache", async () => {
    const c = counter();
    const answers = await Promise.all(Array.from({ length: 8 }, () => cached("t|burst", ["readings"], 60_000, c.compute)));
    expect(c.count()).toBe(1);
    expect(answers.every((a) => a.computed === 1)).toBe(true);
    expect(await cached("t|burst", ["readings"], 60_000, c.compute)).toEqual({ computed: 1 });
    expect(c.count()).toBe(1);
  });

  it("recomputes after a committed write to a table the entry was built from, not to another", async () => {
    const c = counter();
    await cached("t|fresh", ["readings"], 60_000, c.compute);
    const siteStamp = changeStamp(["site"]);
    await sql`update site set name = name where false`.execute(db);
    await stampMoves(["site"], siteStamp);
    expect(await cached("t|fresh", ["readings"], 60_000, c.compute)).toEqual({ computed: 1 });

    const before = changeStamp(["readings"]);
    await touchReadings();
    expect(await stampMoves(["readings"], before)).toBe(true);
    expect(await cached("t|fresh", ["readings"], 60_000, c.compute)).toEqual({ computed: 2 });
  });

  it("does not keep an answer whose tables changed while it was being computed", async () => {
    let n = 0;
    const slow = async () => {
      n++;
      if (n === 1) {
        // A write commits in the middle of the first computation.
        const before = changeStamp(["readings"]);
        await touchReadings();
        await stampMoves(["readings"], before);
      }
      return n;
    };
    expect(await cached("t|race", ["readings"], 60_000, slow)).toBe(1);
    expect(await cached("t|race", ["readings"], 60_000, slow)).toBe(2);
    expect(await cached("t|race", ["readings"], 60_000, slow)).toBe(2);
  });

  it("recomputes after its time limit even when nothing changed", async () => {
    const c = counter();
    await cached("t|ttl", ["alert_rule"], 50, c.compute);
    await new Promise((r) => setTimeout(r, 120));
    await cached("t|ttl", ["alert_rule"], 50, c.compute);
    expect(c.count()).toBe(2);
  });

  it("is bypassed while the feed is down, and everything cached before it is stale afterwards", async () => {
    const c = counter();
    await cached("t|outage", ["readings"], 60_000, c.compute);
    await sql`select pg_terminate_backend(pid) from pg_stat_activity
              where datname = current_database() and application_name = 'ripplemark change feed'`.execute(db);
    const end = Date.now() + 3_000;
    while (changeStamp(["readings"]) !== null && Date.now() < end) await new Promise((r) => setTimeout(r, 5));
    expect(changeStamp(["readings"])).toBeNull();
    await cached("t|outage", ["readings"], 60_000, c.compute);
    expect(c.count()).toBe(2); // computed, not cached, while not listening
    expect(await changeFeedReady(10_000)).toBe(true);
    await cached("t|outage", ["readings"], 60_000, c.compute);
    expect(c.count()).toBe(3); // the entry from before the outage is not trusted
  });
});

describe("the overview cache", () => {
  it("keeps each technician's assigned sites to that technician", async () => {
    const people = await createPeople(db);
    const other = await db
      .insertInto("person")
      .values({ email: "second-tech@test.example", name: "Second tech", role: "technician", password_hash: "x" })
      .returning("id")
      .executeTakeFirstOrThrow();
    const mk = (code: string) =>
      db
        .insertInto("site")
        .values({ code, name: `Site ${code}`, kind: "river", latitude: 54.3, longitude: -2.9, time_zone: "Europe/London", compensation_method: "linear", alpha_per_c: 0.0191, reference_c: 25, tds_factor: 0.65 })
        .returning("id")
        .executeTakeFirstOrThrow();
    const a = await mk("RC1");
    const b = await mk("RC2");
    await db.insertInto("site_assignment").values([{ person_id: people.technician.id, site_id: a.id }, { person_id: other.id, site_id: b.id }]).execute();

    const assigned = async (id: string, role: "technician" | "manager") =>
      (await loadOverviewCached({ id, role })).sites.filter((s) => s.assigned).map((s) => s.code);
    expect(await assigned(people.technician.id, "technician")).toEqual(["RC1"]);
    expect(await assigned(other.id, "technician")).toEqual(["RC2"]);
    expect(await assigned(people.technician.id, "technician")).toEqual(["RC1"]);
    expect(await assigned(people.manager.id, "manager")).toEqual([]);

    // A new assignment shows at once (site_assignment sends notices).
    const before = changeStamp(["site_assignment"]);
    await db.insertInto("site_assignment").values({ person_id: other.id, site_id: a.id }).execute();
    await stampMoves(["site_assignment"], before);
    expect(await assigned(other.id, "technician")).toEqual(["RC1", "RC2"]);
  });
});
