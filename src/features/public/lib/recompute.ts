import type { CalcRequest, Reading as EngineReading } from '@shared/measure/calc.schema';
import { micrometresToPicometres, isLengthUnit } from '@shared/measure/units';
import type { PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { isLengthQuantity, shortDecimalText } from '@shared/public/quantity-figures';
import { exactText } from './figures';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';

/**
 * The calculator request that reproduces a published figure: the readings as the engine takes
 * them, the signed terms (or the formula with its constants and its terms' names), the spec's
 * limits in its own unit and the coverage factor. Null when the publication does not carry a
 * reading's engine input, or a formula result does not carry its formula.
 */
export function recomputeRequest(readings: readonly PublicReading[], clearance: PublicClearance | null): CalcRequest | null {
  if (readings.some((r) => !r.engine)) return null;
  const instruments = engineInstrumentsMap(readings.map((r) => r.engineInstrument));
  const withInstruments = Object.keys(instruments).length ? { instruments } : {};
  if (!clearance) {
    const only = readings[0];
    // A reading is quoted at k = 2 (GUM 6.2.1, 6.3.3), as its claim was checked: rerun at that k.
    return only ? { readings: keyed([[only.key, only.engine!]]), ...withInstruments, terms: [{ reading: only.key, sign: 1 }], coverageFactor: 2 } : null;
  }
  const byKey = new Map(readings.map((r) => [r.key, r.engine!]));
  if (clearance.terms.some((t) => !byKey.has(t.readingKey))) return null;
  const formula = clearance.formula ?? null;
  // A formula names each reading by its symbol (a template's slot, or the name the builder gave).
  if (formula !== null && clearance.terms.some((t) => !t.symbol)) return null;
  const engine = keyed(clearance.terms.map((t) => [formula !== null ? t.symbol! : t.readingKey, byKey.get(t.readingKey)!]));
  const length = isLengthQuantity(clearance.quantity) && isLengthUnit(clearance.unit);
  const spec = length ? lengthSpec(clearance) : quantitySpec(clearance);
  return {
    readings: engine,
    ...withInstruments,
    ...(formula !== null
      ? {
          formula,
          ...(clearance.constants && Object.keys(clearance.constants).length > 0 && { constants: clearance.constants }),
        }
      : { terms: clearance.terms.map((t) => ({ reading: t.readingKey, sign: t.sign })) }),
    // A length is stated in the spec's unit, as it was judged; any other result in the unit it was published in.
    ...(!length && { resultUnit: clearance.unit }),
    ...(spec && { spec }),
    // A result judged before the second engine, or with a chosen k, is rerun with that k; otherwise at its coverage probability.
    ...(clearance.method === undefined || clearance.fixedCoverageFactor
      ? { coverageFactor: clearance.coverageFactor }
      : { coverageProbability: clearance.coverageProbability }),
  };
}

/** Readings by the names the model uses; defineProperty keeps a key like "__proto__" an own property. */
function keyed(entries: readonly (readonly [string, EngineReading])[]): Record<string, EngineReading> {
  const out: Record<string, EngineReading> = {};
  for (const [key, reading] of entries) Object.defineProperty(out, key, { value: reading, enumerable: true, writable: true, configurable: true });
  return out;
}

/** A length's limits back in the spec's unit, written exactly from the µm the publication keeps. */
function lengthSpec(clearance: PublicClearance): CalcRequest['spec'] {
  const band = clearance.band;
  if (!band || !clearance.rule || (band.minUm === null && band.maxUm === null) || !isLengthUnit(clearance.unit)) return undefined;
  const unit = clearance.unit;
  return {
    unit,
    ...(band.minUm !== null && { min: Number(exactText(micrometresToPicometres(band.minUm), unit)) }),
    ...(band.maxUm !== null && { max: Number(exactText(micrometresToPicometres(band.maxUm), unit)) }),
    rule: clearance.rule,
  };
}

/** Any other quantity's limits, in the result's unit as the engine judged them ("1" for a ratio). */
function quantitySpec(clearance: PublicClearance): CalcRequest['spec'] {
  const band = clearance.bandInUnit;
  if (!band || !clearance.rule || (band.min === null && band.max === null)) return undefined;
  return {
    unit: clearance.unit,
    ...(band.min !== null && { min: shortDecimalText(band.min) }),
    ...(band.max !== null && { max: shortDecimalText(band.max) }),
    rule: clearance.rule,
  };
}
