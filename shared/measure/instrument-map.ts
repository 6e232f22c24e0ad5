/**
 * The calculator's `instruments` map from the entries readings carry. Free of schema values, so a
 * reader's page can use it without loading zod.
 */
import type { CalcInstrument } from './calc.schema';

/** An instrument as the engine's `instruments` entry, under the name its readings use. */
export interface EngineInstrument {
  name: string;
  entry: CalcInstrument;
}

/** The `instruments` map for a set of readings' engine instruments (each name once). */
export function engineInstrumentsMap(list: readonly (EngineInstrument | null | undefined)[]): Record<string, CalcInstrument> {
  const out: Record<string, CalcInstrument> = {};
  for (const item of list) {
    // Names are `i<id>`, never "__proto__"; defineProperty keeps that true regardless.
    if (item) Object.defineProperty(out, item.name, { value: item.entry, enumerable: true, writable: true, configurable: true });
  }
  return out;
}
