import { Fraction } from '@shared/measure/exact';
import { convertExact, quantityOf, type AnyUnit } from '@shared/measure/quantities';
import type { Suggestion } from '@shared/speech/speech.schema';

/**
 * How far from the words (or the display's showing) a reading's moment may be and still log them, ms: the moment within
 * ±1.5 s of the span the figure was said in. Our rule (common practice, no published source):
 * builders mark the moment while saying the figure or just after, and the recognizer's times
 * are good to a few tenths of a second.
 */
export const LOGGED_WITHIN_MS = 1500;

/** A reading of the clip as matching needs it: its figures in its unit, its moment, its instrument's resolution. */
export interface ClipReadingFigures {
  id: number;
  key: string;
  kind: 'direct' | 'bracket' | 'repeated';
  unit: AnyUnit;
  value: string | null;
  passes: string | null;
  stops: string | null;
  repeatedValues: readonly string[] | null;
  /** The reading's moment, ms from the start of the clip. */
  atMs: number;
  /** The instrument's resolution, in `resolutionUnit`. */
  resolution: string;
  resolutionUnit: AnyUnit;
}

function fraction(text: string | null | undefined): Fraction | null {
  if (text === null || text === undefined || text.trim() === '') return null;
  try {
    return new Fraction(text);
  } catch {
    return null;
  }
}

/** Distance in ms from a moment to the span the figure was said or shown in (0 inside it). */
function msFromWords(atMs: number, p: Pick<Suggestion, 'atMs' | 'endMs'>): number {
  if (atMs < p.atMs) return p.atMs - atMs;
  if (atMs > p.endMs) return atMs - p.endMs;
  return 0;
}

/**
 * The reading already logged for a proposal, or null: a reading whose moment is within
 * `LOGGED_WITHIN_MS` of the words (or the display), of the same quantity, whose figure is the proposal's within its
 * instrument's resolution (|heard − logged| ≤ resolution, compared exactly after converting the
 * heard figure into the reading's unit). A value matches a direct reading's value or one of a
 * repeated reading's values; a blade said with how it went ("three thou drags") also matches that
 * side of a feeler bracket; a bracket matches a bracket on both blades. The nearest in time wins.
 */
export function loggedReadingFor<R extends ClipReadingFigures>(proposal: Suggestion, readings: readonly R[]): R | null {
  let best: { reading: R; distance: number } | null = null;
  for (const r of readings) {
    const distance = msFromWords(r.atMs, proposal);
    if (distance > LOGGED_WITHIN_MS) continue;
    if (!figuresAgree(proposal, r)) continue;
    if (!best || distance < best.distance || (distance === best.distance && r.id < best.reading.id)) best = { reading: r, distance };
  }
  return best?.reading ?? null;
}

function figuresAgree(p: Suggestion, r: ClipReadingFigures): boolean {
  if (quantityOf(p.unit) !== quantityOf(r.unit) || quantityOf(r.resolutionUnit) !== quantityOf(r.unit)) return false;
  const resolutionText = fraction(r.resolution);
  if (!resolutionText) return false;
  // A step is a difference: °C and °F offsets do not apply to it.
  const tolerance = convertExact(resolutionText, r.resolutionUnit, r.unit, { difference: true }).abs();
  const heard = (text: string) => {
    const f = fraction(text);
    return f ? convertExact(f, p.unit, r.unit) : null;
  };
  const same = (a: Fraction | null, b: string | null) => {
    const logged = fraction(b);
    return a !== null && logged !== null && a.sub(logged).abs().lte(tolerance);
  };
  if (p.kind === 'bracket') {
    return r.kind === 'bracket' && same(heard(p.passes), r.passes) && same(heard(p.stops), r.stops);
  }
  const value = heard(p.value);
  if (r.kind === 'direct') return same(value, r.value);
  if (r.kind === 'repeated') return (r.repeatedValues ?? []).some((v) => same(value, v));
  if (p.feel === 'passes') return same(value, r.passes);
  if (p.feel === 'stops') return same(value, r.stops);
  return false;
}
