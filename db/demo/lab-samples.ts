// Demo grab samples: a few lab analyses per site across the demo year, so officers see the lab
// check and the charts show lab points beside the logger. Compositions are invented but shaped like
// the waters of the scenario (calcium bicarbonate river and chalk waters, a soft spring, a
// brackish tidal reach). One analysis omits bicarbonate on purpose: its ion balance fails.
import { sql, type Kysely } from "kysely";
import type { DB } from "../schema.ts";
import { DEMO_PEOPLE } from "./scenario.ts";

const DAY = 86_400_000;

// mg/L for a water of about 420 µS/cm; scaled per site below.
const RIVER = { Ca: 55, Mg: 8, Na: 18, K: 3, Cl: 30, SO4: 40, HCO3: 150, NO3: 8 };
// A brackish mix (sea-salt proportions with some river water), about 4,200 µS/cm at full strength.
const BRACKISH = { Ca: 48, Mg: 105, Na: 860, K: 32, Cl: 1560, SO4: 220, HCO3: 140, NO3: 3 };

// Silica (mg/L SiO2) is part of dissolved solids in fresh waters, more so in soft upland water.
const SITE_WATER: Record<string, { base: Record<string, number>; scale: number; silica: number }> = {
  QH1: { base: RIVER, scale: 0.23, silica: 14 },
  QF2: { base: RIVER, scale: 1.0, silica: 9 },
  QT3: { base: { ...RIVER, NO3: 18, Na: 35, Cl: 52 }, scale: 1.3, silica: 9 },
  // Sampled at low water, when the reach is only slightly brackish.
  QS4: { base: BRACKISH, scale: 0.25, silica: 6 },
  HR5: { base: RIVER, scale: 0.62, silica: 11 },
  BW6: { base: RIVER, scale: 0.72, silica: 10 },
  AB7: { base: { ...RIVER, HCO3: 230, Ca: 85 }, scale: 1.0, silica: 12 },
  AB8: { base: { ...RIVER, HCO3: 250, Ca: 95, Cl: 60, Na: 32 }, scale: 1.15, silica: 12 },
};

export async function seedDemoLabSamples(db: Kysely<DB>, endMs: number, days: number) {
  const existing = await db.selectFrom("lab_sample").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  if (Number(existing.n) > 0) return 0;
  const { labSampleColumns } = await import("#app/lib/lab/analysis-input.ts");
  const { createLabSamples } = await import("#app/models/lab-sample.server.ts");
  const officer = await db
    .selectFrom("person")
    .select("id")
    .where(sql`lower(email)`, "=", DEMO_PEOPLE.find((p) => p.role === "officer")!.email)
    .executeTakeFirstOrThrow();
  const sites = await db.selectFrom("site").select(["id", "code"]).execute();
  const samples = [];
  const count = Math.max(1, Math.floor(days / 90));
  for (const site of sites) {
    const water = SITE_WATER[site.code];
    if (!water) continue;
    for (let k = 0; k < count; k++) {
      const sampledAt = new Date(endMs - (k * 90 + 20) * DAY + 10.5 * 3_600_000);
      const wobble = 1 + 0.04 * Math.sin(k * 2.1 + site.code.charCodeAt(2));
      const ions = Object.fromEntries(Object.entries(water.base).map(([ion, v]) => [ion, Math.round(v * water.scale * wobble * 100) / 100]));
      const incomplete = site.code === "QT3" && k === 1;
      if (incomplete) delete ions.HCO3;
      const draft = labSampleColumns({ ions, silica: water.silica, notes: "", labReference: `MWC-${site.code}-${k + 1}` });
      const calculated = draft.check.calculatedConductivity.calculatedEcUsPerCm;
      const measuredEc = Math.round(calculated * (incomplete ? 1.45 : 1 + 0.02 * Math.cos(k)));
      const calculatedTds = draft.check.calculatedTdsMgPerL ?? measuredEc * 0.62;
      const { columns, check } = labSampleColumns({
        ions,
        silica: water.silica,
        measuredEc,
        measuredTds: Math.round(calculatedTds * (incomplete ? 1.5 : 1.06)),
        pH: 7.4 + 0.1 * Math.cos(k),
        labReference: `MWC-${site.code}-${k + 1}`,
        notes: incomplete ? "Bicarbonate not reported by the laboratory for this batch." : "Routine quarterly grab sample.",
      });
      samples.push({ ...columns, site_id: site.id, sampled_at: sampledAt, results: check });
    }
  }
  if (samples.length > 0) await createLabSamples(officer.id, samples, "form");
  return samples.length;
}
