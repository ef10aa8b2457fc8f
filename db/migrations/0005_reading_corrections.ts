import { sql, type Kysely } from "kysely";

// Corrections from field visits (fouling, calibration drift) never touch raw values. Each reading
// keeps its specific conductance as compensated (`sc25_uncorrected_us_cm`) and the correction that
// applies to it (`correction_us_cm`, µS/cm, null when none); `sc25_us_cm` and `tds_mg_l` hold the
// values to show (uncorrected + correction), which charts, summaries and detection read.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`alter table readings add column sc25_uncorrected_us_cm double precision, add column correction_us_cm double precision`.execute(db);
  await sql`update readings set sc25_uncorrected_us_cm = sc25_us_cm`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`alter table readings drop column sc25_uncorrected_us_cm, drop column correction_us_cm`.execute(db);
}
