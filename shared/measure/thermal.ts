/**
 * Correction of a length measured at temperature t to the reference temperature 20 °C
 * (ISO 1, the standard reference temperature for geometrical product specification).
 *
 * We use the exact form L20 = L_t / (1 + α (t − 20)), not the first-order L_t (1 − α (t − 20)):
 * both agree to α²Δt² (under 10⁻⁷ relative for metals within ±30 K), and the exact form inverts
 * L_t = L20 (1 + α Δt) precisely. The correction is for the part; it assumes the instrument is at
 * 20 °C or is itself corrected. The uncertainty of α and of t is not included.
 */
import { divideRounded } from './decimal';

/** The reference temperature of dimensional measurement, °C (ISO 1). */
export const REFERENCE_TEMPERATURE_C = 20;

/** One entry of the material table. */
export interface MaterialExpansion {
  /** Plain name for labels. */
  readonly label: string;
  /** The alloy the figure is for, so nobody mistakes a typical figure for their part's. */
  readonly representative: string;
  /** Linear coefficient of thermal expansion near room temperature, per kelvin. */
  readonly expansionPerK: number;
}

/**
 * Typical handbook figures, not values for a particular part. Source: W. D. Callister and
 * D. G. Rethwisch, "Fundamentals of Materials Science and Engineering", Appendix B, Table B.6
 * "Room-Temperature Linear Coefficient of Thermal Expansion Values for Various Engineering
 * Materials" (which itself cites the ASM Handbooks, vols. 1 and 2). Transcribed from a
 * reproduction of that table, not checked against a printed copy. Give `expansionPerK` when the
 * part's own figure is known.
 */
export const materialExpansion = {
  steel: { label: 'Carbon steel', representative: 'AISI 1020', expansionPerK: 11.7e-6 },
  'alloy-steel': { label: 'Alloy steel', representative: 'AISI 4140', expansionPerK: 12.3e-6 },
  'stainless-steel': { label: 'Stainless steel (austenitic)', representative: 'AISI 304', expansionPerK: 17.2e-6 },
  'cast-iron': { label: 'Grey cast iron', representative: 'grade G3000', expansionPerK: 11.4e-6 },
  'ductile-iron': { label: 'Ductile iron', representative: 'grade 60-40-18', expansionPerK: 11.2e-6 },
  'aluminium-alloy': { label: 'Aluminium alloy (wrought)', representative: '6061', expansionPerK: 23.6e-6 },
  'cast-aluminium-alloy': { label: 'Aluminium alloy (cast)', representative: '356.0', expansionPerK: 21.5e-6 },
  bronze: { label: 'Bearing bronze', representative: 'C93200', expansionPerK: 18.0e-6 },
  brass: { label: 'Brass', representative: 'C26000 cartridge brass', expansionPerK: 19.9e-6 },
  'titanium-alloy': { label: 'Titanium alloy', representative: 'Ti-6Al-4V', expansionPerK: 8.6e-6 },
} as const satisfies Record<string, MaterialExpansion>;

/** A material key of the table. */
export type MaterialName = keyof typeof materialExpansion;

/** The keys of the material table, for pickers and schema messages. */
export const materialNames = Object.keys(materialExpansion) as MaterialName[];

const materialAliases: Readonly<Record<string, MaterialName>> = {
  'carbon-steel': 'steel',
  'grey-iron': 'cast-iron',
  'gray-iron': 'cast-iron',
  'gray-cast-iron': 'cast-iron',
  'grey-cast-iron': 'cast-iron',
  aluminium: 'aluminium-alloy',
  aluminum: 'aluminium-alloy',
  'aluminum-alloy': 'aluminium-alloy',
  'cast-aluminum-alloy': 'cast-aluminium-alloy',
  titanium: 'titanium-alloy',
};

/** Finds a material by key or common alias ("Cast iron", "aluminum"); undefined when unknown. */
export function lookupMaterial(name: string): MaterialName | undefined {
  const key = name.trim().toLowerCase().replace(/[\s_]+/g, '-');
  if (Object.hasOwn(materialExpansion, key)) return key as MaterialName;
  return Object.hasOwn(materialAliases, key) ? materialAliases[key] : undefined;
}

/** The factor 1 / (1 + α (t − 20)) that takes a length at t °C to 20 °C. */
export function referenceCorrectionFactor(expansionPerK: number, temperatureC: number): number {
  return 1 / (1 + expansionPerK * (temperatureC - REFERENCE_TEMPERATURE_C));
}

/**
 * A length in picometres measured at `temperatureC`, corrected to 20 °C and rounded half-even to
 * the picometre. The denominator is taken to 15 decimal places (about its own double precision)
 * and the division done in bigint, so the length itself is rounded once, at the end.
 */
export function correctToReference(pm: bigint, expansionPerK: number, temperatureC: number): bigint {
  const SCALE = 10n ** 18n;
  const denominator = 1 + expansionPerK * (temperatureC - REFERENCE_TEMPERATURE_C);
  // Within 1 ± 0.03 for the ranges the schema allows, so 10¹⁵ · denominator is a safe integer.
  const scaledDenominator = BigInt(Math.round(denominator * 1e15)) * 1000n;
  return divideRounded(pm * SCALE, scaledDenominator, 'half-even');
}
