import type { AnyUnit } from '@shared/measure/quantities';
import type { Reading as ReadingDto } from '@shared/readings/reading.schema';
import { heardWitness, notListened, type ClipListening, type HeardWitness, type WitnessReading } from '@shared/review/heard';
import { displayRegionOf, displayValuesOf } from '../speech/display.service';
import { listeningOf, wordsForReaders } from '../speech/speech.service';

/*
 * The review sheet's second witness: for each reading, what its clip's sound says (and its
 * instrument display shows, once read) near the reading's moment (the rule is `shared/review/heard.ts`). Each clip's listening state and words
 * are read once, however many of the story's readings it holds.
 */

/** A reading DTO as the rule reads it: its figures as logged, its moment, and the instrument's resolution. */
export function witnessReading(r: ReadingDto): WitnessReading {
  const resolution = r.engine.kind === 'direct' || r.engine.kind === 'repeated' ? r.engine.resolution : undefined;
  return {
    kind: r.kind,
    unit: r.unit as AnyUnit,
    value: r.value,
    passes: r.passes,
    stops: r.stops,
    values: r.values,
    atMs: r.atMs,
    ...(resolution !== undefined && { resolution }),
  };
}

/** Where listening to a clip stands, with its words when it was listened to; a gone clip is 'pending'. */
async function clipListening(clipId: number): Promise<ClipListening> {
  const state = (await listeningOf(clipId))?.state ?? 'pending';
  if (state !== 'ready') return { state };
  const [words, region, shown] = await Promise.all([wordsForReaders(clipId), displayRegionOf(clipId), displayValuesOf(clipId)]);
  // The display counts once it was read; while it is being read the witness is the sound alone.
  if (!region || region.state !== 'ready') return { state, words };
  return { state, words, shown: shown.map((v) => ({ ...v, unit: region.unit })) };
}

/** The witness of each reading, by reading id. */
export async function heardWitnesses(readings: readonly ReadingDto[]): Promise<Map<number, HeardWitness>> {
  const clipIds = [...new Set(readings.map((r) => r.clipId))];
  const listening = new Map(
    await Promise.all(clipIds.map(async (id) => [id, await clipListening(id)] as const)),
  );
  return new Map(
    readings.map((r) => {
      const clip = listening.get(r.clipId);
      return [r.id, clip ? heardWitness(witnessReading(r), clip) : notListened('pending')] as const;
    }),
  );
}
