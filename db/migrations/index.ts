import type { Migration } from "kysely";
import * as m0001 from "./0001_foundation.ts";
import * as m0002 from "./0002_ingest.ts";
import * as m0003 from "./0003_lab_samples.ts";
import * as m0004 from "./0004_site_thresholds.ts";
import * as m0005 from "./0005_reading_corrections.ts";
import * as m0006 from "./0006_alerts.ts";
import * as m0007 from "./0007_field_visits.ts";
import * as m0008 from "./0008_weekly_summaries.ts";
import * as m0009 from "./0009_change_notices.ts";
import * as m0010 from "./0010_alert_rule_history.ts";

// Every migration, in order. Add a new file here when you add one to this folder (a test checks
// that the folder and this list agree).
export const migrations: Record<string, Migration> = {
  "0001_foundation": m0001,
  "0002_ingest": m0002,
  "0003_lab_samples": m0003,
  "0004_site_thresholds": m0004,
  "0005_reading_corrections": m0005,
  "0006_alerts": m0006,
  "0007_field_visits": m0007,
  "0008_weekly_summaries": m0008,
  "0009_change_notices": m0009,
  "0010_alert_rule_history": m0010,
};
