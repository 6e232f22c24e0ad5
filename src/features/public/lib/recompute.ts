import type { CalcRequest, Reading as EngineReading } from '@shared/measure/calc.schema';
import { micrometresToPicometres } from '@shared/measure/units';
import type { PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { exactText } from './figures';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';

/**
 * The calculator request that reproduces a published figure: the readings as the engine takes
 * them, the signed terms, the spec's limits in its own unit and the coverage factor. Null when
 * the publication does not carry a reading's engine input.
 */
export function recomputeRequest(readings: readonly PublicReading[], clearance: PublicClearance | null): CalcRequest | null {
  const engine: Record<string, EngineReading> = {};
  for (const reading of readings) {
    if (!reading.engine) return null;
    // Keys are validated reading keys (never "__proto__"); defineProperty keeps that true regardless.
    Object.defineProperty(engine, reading.key, { value: reading.engine, enumerable: true, writable: true, configurable: true });
  }
  const instruments = engineInstrumentsMap(readings.map((r) => r.engineInstrument));
  const withInstruments = Object.keys(instruments).length ? { instruments } : {};
  if (!clearance) {
    const only = readings[0];
    return only ? { readings: engine, ...withInstruments, terms: [{ reading: only.key, sign: 1 }] } : null;
  }
  if (clearance.terms.some((t) => !Object.hasOwn(engine, t.readingKey))) return null;
  const band = clearance.band;
  const spec =
    band && clearance.rule && (band.minUm !== null || band.maxUm !== null)
      ? {
          unit: clearance.unit,
          ...(band.minUm !== null && { min: Number(exactText(micrometresToPicometres(band.minUm), clearance.unit)) }),
          ...(band.maxUm !== null && { max: Number(exactText(micrometresToPicometres(band.maxUm), clearance.unit)) }),
          rule: clearance.rule,
        }
      : undefined;
  return {
    readings: engine,
    ...withInstruments,
    terms: clearance.terms.map((t) => ({ reading: t.readingKey, sign: t.sign })),
    ...(spec && { spec }),
    // A result judged before the second engine, or with a chosen k, is rerun with that k; otherwise at its coverage probability.
    ...(clearance.method === undefined || clearance.fixedCoverageFactor
      ? { coverageFactor: clearance.coverageFactor }
      : { coverageProbability: clearance.coverageProbability }),
  };
}
