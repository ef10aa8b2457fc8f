// The ions of natural water: charge, molar mass, limiting ionic conductivity at 25 °C
// and ion-size parameter, with Kohlrausch's law of independent migration on top.
//
// Conductivities are PER EQUIVALENT (per mole of unit charge), as the CRC Handbook of
// Chemistry and Physics prints them in "Ionic conductivity and diffusion at infinite
// dilution" (P. Vanýsek), in 10⁻⁴ m² S mol⁻¹ = S cm² mol⁻¹: e.g. ½Ca²⁺ 59.47. The molar
// value of the ion is |z| times that (Ca²⁺ 118.94 S cm²/mol). Values checked against a
// copy of that table: H⁺, Li⁺, K⁺, NH₄⁺, ½Ca²⁺, ½Mg²⁺, ½Ba²⁺, ½Fe²⁺, ½Mn²⁺. The others
// (Na⁺ and the anions, ½Sr²⁺) are the same table's values written from memory.
//
// Molar masses from IUPAC standard atomic weights (conventional values, 2013).
// Ion-size parameters å (Å) from Kielland (1937), J. Am. Chem. Soc. 59, 1675 (from memory),
// used only by the extended Debye–Hückel equation.

export const FARADAY_C_PER_MOL = 96_485.332_12; // CODATA 2018 (exact since the 2019 SI)

const ATOMIC_WEIGHT = {
  H: 1.008, Li: 6.94, C: 12.011, N: 14.007, O: 15.999, F: 18.998, Na: 22.99, Mg: 24.305,
  P: 30.974, S: 32.06, Cl: 35.45, K: 39.098, Ca: 40.078, Mn: 54.938, Fe: 55.845, Br: 79.904,
  Sr: 87.62, Ba: 137.33,
} as const;
const W = ATOMIC_WEIGHT;

export type IonData = {
  formula: string; // with charge, for display
  charge: number;
  molarMassGPerMol: number;
  lambdaEqSCm2PerMol: number; // limiting conductivity per equivalent at 25 °C
  ionSizeAngstrom: number; // Kielland å
};

export const IONS = {
  H: { formula: "H⁺", charge: 1, molarMassGPerMol: W.H, lambdaEqSCm2PerMol: 349.65, ionSizeAngstrom: 9 },
  Li: { formula: "Li⁺", charge: 1, molarMassGPerMol: W.Li, lambdaEqSCm2PerMol: 38.66, ionSizeAngstrom: 6 },
  Na: { formula: "Na⁺", charge: 1, molarMassGPerMol: W.Na, lambdaEqSCm2PerMol: 50.08, ionSizeAngstrom: 4 },
  K: { formula: "K⁺", charge: 1, molarMassGPerMol: W.K, lambdaEqSCm2PerMol: 73.48, ionSizeAngstrom: 3 },
  NH4: { formula: "NH₄⁺", charge: 1, molarMassGPerMol: W.N + 4 * W.H, lambdaEqSCm2PerMol: 73.5, ionSizeAngstrom: 2.5 },
  Ca: { formula: "Ca²⁺", charge: 2, molarMassGPerMol: W.Ca, lambdaEqSCm2PerMol: 59.47, ionSizeAngstrom: 6 },
  Mg: { formula: "Mg²⁺", charge: 2, molarMassGPerMol: W.Mg, lambdaEqSCm2PerMol: 53.0, ionSizeAngstrom: 8 },
  Sr: { formula: "Sr²⁺", charge: 2, molarMassGPerMol: W.Sr, lambdaEqSCm2PerMol: 59.4, ionSizeAngstrom: 5 },
  Ba: { formula: "Ba²⁺", charge: 2, molarMassGPerMol: W.Ba, lambdaEqSCm2PerMol: 63.6, ionSizeAngstrom: 5 },
  Fe: { formula: "Fe²⁺", charge: 2, molarMassGPerMol: W.Fe, lambdaEqSCm2PerMol: 54, ionSizeAngstrom: 6 },
  Mn: { formula: "Mn²⁺", charge: 2, molarMassGPerMol: W.Mn, lambdaEqSCm2PerMol: 53.5, ionSizeAngstrom: 6 },
  Cl: { formula: "Cl⁻", charge: -1, molarMassGPerMol: W.Cl, lambdaEqSCm2PerMol: 76.31, ionSizeAngstrom: 3 },
  F: { formula: "F⁻", charge: -1, molarMassGPerMol: W.F, lambdaEqSCm2PerMol: 55.4, ionSizeAngstrom: 3.5 },
  Br: { formula: "Br⁻", charge: -1, molarMassGPerMol: W.Br, lambdaEqSCm2PerMol: 78.1, ionSizeAngstrom: 3 },
  NO3: { formula: "NO₃⁻", charge: -1, molarMassGPerMol: W.N + 3 * W.O, lambdaEqSCm2PerMol: 71.42, ionSizeAngstrom: 3 },
  NO2: { formula: "NO₂⁻", charge: -1, molarMassGPerMol: W.N + 2 * W.O, lambdaEqSCm2PerMol: 71.8, ionSizeAngstrom: 3 },
  HCO3: { formula: "HCO₃⁻", charge: -1, molarMassGPerMol: W.H + W.C + 3 * W.O, lambdaEqSCm2PerMol: 44.5, ionSizeAngstrom: 4.5 },
  CO3: { formula: "CO₃²⁻", charge: -2, molarMassGPerMol: W.C + 3 * W.O, lambdaEqSCm2PerMol: 69.3, ionSizeAngstrom: 4.5 },
  SO4: { formula: "SO₄²⁻", charge: -2, molarMassGPerMol: W.S + 4 * W.O, lambdaEqSCm2PerMol: 80.0, ionSizeAngstrom: 4 },
  OH: { formula: "OH⁻", charge: -1, molarMassGPerMol: W.O + W.H, lambdaEqSCm2PerMol: 198, ionSizeAngstrom: 3.5 },
  PO4: { formula: "PO₄³⁻", charge: -3, molarMassGPerMol: W.P + 4 * W.O, lambdaEqSCm2PerMol: 92.8, ionSizeAngstrom: 4 },
  HPO4: { formula: "HPO₄²⁻", charge: -2, molarMassGPerMol: W.H + W.P + 4 * W.O, lambdaEqSCm2PerMol: 57, ionSizeAngstrom: 4 },
  H2PO4: { formula: "H₂PO₄⁻", charge: -1, molarMassGPerMol: 2 * W.H + W.P + 4 * W.O, lambdaEqSCm2PerMol: 36, ionSizeAngstrom: 4 },
} as const satisfies Record<string, IonData>;

export type IonName = keyof typeof IONS;
export const ION_NAMES = Object.keys(IONS) as IonName[];

/** The table row of an ion (CRC λ_eq, IUPAC molar mass, Kielland å); RangeError for unknown ions. */
export function ionData(ion: IonName | string): IonData {
  if (!Object.hasOwn(IONS, ion)) throw new RangeError(`Unknown ion "${ion}"; known: ${ION_NAMES.join(", ")}`);
  return IONS[ion as IonName];
}

/** Molar limiting conductivity of one ion, λ = |z| × λ_eq (S cm²/mol), CRC table at 25 °C. */
export function ionMolarConductivity(ion: IonName): number {
  const data = ionData(ion);
  return Math.abs(data.charge) * data.lambdaEqSCm2PerMol;
}

/**
 * Kohlrausch's law of independent migration: Λ° = Σ νᵢ |zᵢ| λ_eq,ᵢ (S cm²/mol of the salt)
 * for a salt given as ion → stoichiometric count, e.g. { Ca: 1, Cl: 2 }. Ion values from
 * the CRC table (25 °C). RangeError for unknown ions or negative counts.
 */
export function limitingMolarConductivity(ions: Partial<Record<IonName, number>>): number {
  let sum = 0;
  for (const [ion, count] of Object.entries(ions)) {
    if (count === undefined) continue;
    if (!Number.isFinite(count) || count < 0) throw new RangeError(`Count of ${ion} must be ≥ 0, got ${count}`);
    sum += count * ionMolarConductivity(ion as IonName);
  }
  return sum;
}

/** S cm²/mol → m² S/mol (1 S cm² = 10⁻⁴ S m²). */
export function sCm2ToSM2(valueSCm2PerMol: number): number {
  return valueSCm2PerMol * 1e-4;
}

/**
 * Transfer (transport) numbers of the ions of a binary salt at infinite dilution:
 * t₊ = λ₊,eq / (λ₊,eq + λ₋,eq), t₋ = 1 − t₊ (Kohlrausch; equivalent conductivities from
 * the CRC table). RangeError unless the first ion is a cation and the second an anion.
 */
export function transferNumbers(cation: IonName, anion: IonName): { cation: number; anion: number } {
  const plus = ionData(cation);
  const minus = ionData(anion);
  if (plus.charge <= 0) throw new RangeError(`${cation} is not a cation`);
  if (minus.charge >= 0) throw new RangeError(`${anion} is not an anion`);
  const total = plus.lambdaEqSCm2PerMol + minus.lambdaEqSCm2PerMol;
  return { cation: plus.lambdaEqSCm2PerMol / total, anion: minus.lambdaEqSCm2PerMol / total };
}

/**
 * Electrical mobility at infinite dilution, 25 °C: u = λ / (|z| F) = λ_eq / F with
 * F = 96 485.332 C/mol. λ_eq in S cm²/mol gives u in cm² V⁻¹ s⁻¹; ×10⁻⁴ for m².
 */
export function ionMobility(ion: IonName): { cm2PerVoltSecond: number; m2PerVoltSecond: number } {
  const cm2PerVoltSecond = ionData(ion).lambdaEqSCm2PerMol / FARADAY_C_PER_MOL;
  return { cm2PerVoltSecond, m2PerVoltSecond: cm2PerVoltSecond * 1e-4 };
}

/**
 * Molar conductivity Λ = κ / c. κ in µS/cm and c in mol/L give Λ in S cm²/mol:
 * κ·10⁻⁶ S/cm ÷ (c·10⁻³ mol/cm³) = 10⁻³ κ/c. RangeError for negative κ or c ≤ 0.
 */
export function molarConductivity(conductivityUsPerCm: number, concentrationMolPerL: number): number {
  if (!Number.isFinite(conductivityUsPerCm) || conductivityUsPerCm < 0) {
    throw new RangeError(`Conductivity must be ≥ 0 µS/cm, got ${conductivityUsPerCm}`);
  }
  if (!Number.isFinite(concentrationMolPerL) || concentrationMolPerL <= 0) {
    throw new RangeError(`Concentration must be > 0 mol/L, got ${concentrationMolPerL}`);
  }
  return (1e-3 * conductivityUsPerCm) / concentrationMolPerL;
}

/** mg/L → mmol/L with the ion's molar mass. RangeError for negative amounts. */
export function mgPerLToMmolPerL(ion: IonName, mgPerL: number): number {
  if (!Number.isFinite(mgPerL) || mgPerL < 0) throw new RangeError(`${ion}: concentration must be ≥ 0 mg/L, got ${mgPerL}`);
  return mgPerL / ionData(ion).molarMassGPerMol;
}

/** mg/L → meq/L (mmol/L × |z|). */
export function mgPerLToMeqPerL(ion: IonName, mgPerL: number): number {
  return mgPerLToMmolPerL(ion, mgPerL) * Math.abs(ionData(ion).charge);
}
