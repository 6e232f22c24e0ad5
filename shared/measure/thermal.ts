/**
 * Correction of a length measured at temperature t to the reference temperature 20 °C
 * (ISO 1, the standard reference temperature for geometrical product specification).
 *
 * We use the exact form L20 = L_t / (1 + α (t − 20)), not the first-order L_t (1 − α (t − 20)):
 * both agree to α²Δt² (under 10⁻⁷ relative for metals within ±30 K), and the exact form inverts
 * L_t = L20 (1 + α Δt) precisely. `correctToReference` corrects the part alone (the instrument at
 * 20 °C); the engine (`readings.ts`) also takes the instrument's temperature and expansion, either
 * its own or, as GUM H.1 models the bench, the part's (`sameTemperatureSensitivities`).
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

/**
 * ∂L20/∂x for a part and an instrument at one temperature, in GUM H.1's variables (JCGM 100:2008
 * H.1.2): θ = t − 20 °C (their common deviation), δθ = t − t_s (their difference, 0 here) and
 * δα = α − α_s, with L20 = L·(1 + α_s(θ − δθ))/(1 + αθ) and L the indication. Each is the exact
 * derivative at δθ = 0, in the units of `lengthAt20` per unit of the input; to first order they are
 * H.1.3's c_θ = −l·δα, c_δθ = −l·α_s and c_δα = −l·θ.
 */
export interface SameTemperatureSensitivities {
  /** ∂L20/∂θ = −L20·δα/((1 + α_sθ)(1 + αθ)), per K. */
  readonly commonTemperature: number;
  /** ∂L20/∂δθ = −L20·α_s/(1 + α_sθ), per K. */
  readonly temperatureDifference: number;
  /** ∂L20/∂δα with α_s held, the same as ∂L20/∂α: −L20·θ/(1 + αθ), per (1/K). */
  readonly expansionDifference: number;
  /** ∂L20/∂α_s with the part's α held (δα moves the other way): L20·θ/(1 + α_sθ), per (1/K). */
  readonly instrumentExpansion: number;
  /** ∂L20/∂α_s with δα held (H.1's c_αs, zero to first order at δθ = 0): L20·θ²·δα/((1 + α_sθ)(1 + αθ)), per (1/K). */
  readonly instrumentExpansionDifferenceHeld: number;
}

/** The sensitivities of a length corrected to 20 °C with the instrument at the part's temperature (see `SameTemperatureSensitivities`). */
export function sameTemperatureSensitivities(lengthAt20: number, expansionPerK: number, instrumentExpansionPerK: number, temperatureC: number): SameTemperatureSensitivities {
  const theta = temperatureC - REFERENCE_TEMPERATURE_C;
  const deltaAlpha = expansionPerK - instrumentExpansionPerK;
  const part = 1 + expansionPerK * theta;
  const instrument = 1 + instrumentExpansionPerK * theta;
  return {
    commonTemperature: (-lengthAt20 * deltaAlpha) / (instrument * part),
    temperatureDifference: (-lengthAt20 * instrumentExpansionPerK) / instrument,
    expansionDifference: (-lengthAt20 * theta) / part,
    instrumentExpansion: (lengthAt20 * theta) / instrument,
    instrumentExpansionDifferenceHeld: (lengthAt20 * theta * theta * deltaAlpha) / (instrument * part),
  };
}

/**
 * The second-order terms GUM H.1.7 finds worth a look when θ or δα, and δθ, are estimated near
 * zero: L·√(u²(δα)·u²(θ) + u²(α_s)·u²(δθ)) (GUM eq. 10's note, the products of two inputs). The
 * engine states it in the working and keeps the budget first-order, as H.1.6 does.
 */
export function sameTemperatureSecondOrder(length: number, u: { theta: number; temperatureDifference: number; expansionDifference: number; instrumentExpansion: number }): number {
  return Math.abs(length) * Math.hypot(u.expansionDifference * u.theta, u.instrumentExpansion * u.temperatureDifference);
}
