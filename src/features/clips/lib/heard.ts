import { withUnit } from '@shared/measure/format-quantity';
import type { AnyUnit } from '@shared/measure/quantities';
import type { EvidenceState, Suggestion } from '@shared/speech/speech.schema';

/**
 * The recognizer's confidence at or above which we call a figure "clear" (else "unsure"): a
 * figure's confidence is the least of its words' (pocketsphinx's posterior probability of each
 * word), so at 0.5 or more every word of it was more likely than all its rivals together. Our
 * rule (no published source); it only says how much to look before accepting, and nothing is
 * stored until the builder saves the reading form.
 */
export const CLEAR_CONFIDENCE = 0.5;

/** "clear" or "unsure", by `CLEAR_CONFIDENCE`. */
export function confidenceWord(confidence: number): 'clear' | 'unsure' {
  return confidence >= CLEAR_CONFIDENCE ? 'clear' : 'unsure';
}

/** The figure heard with its unit, as the list shows it: "564.2 thou", "3|4 thou blades", "3 thou blade, enters". */
export function heardFigureText(p: Suggestion): string {
  if (p.kind === 'bracket') return `${withUnit(`${p.passes}|${p.stops}`, p.unit)} blades`;
  const figure = withUnit(p.value, p.unit);
  if (p.feel === 'passes') return `${figure} blade, enters`;
  if (p.feel === 'stops') return `${figure} blade, does not enter`;
  return figure;
}

/** The same figure in words for a screen reader: "3 thou enters, 4 thou does not". */
export function heardFigureSpoken(p: Suggestion): string {
  if (p.kind === 'bracket') return `feeler bracket: ${withUnit(p.passes, p.unit)} enters, ${withUnit(p.stops, p.unit)} does not`;
  return heardFigureText(p);
}

/**
 * What accepting a proposal fills the reading form with: the way it was read and each figure as
 * text with its unit ("564.2 thou"), as a builder would type it. A blade said alone ("three thou
 * drags") is a direct reading of that one blade.
 */
export interface HeardFigures {
  proposalId: string;
  kind: 'direct' | 'bracket';
  /** The unit the figures were heard in (they carry it in their text too). */
  unit: AnyUnit;
  value?: string;
  passes?: string;
  stops?: string;
  /** The words it was read from, to show beside the form. */
  words: string;
  confidence: number;
}

/** The reading form's figures for a proposal. */
export function heardFiguresOf(p: Suggestion): HeardFigures {
  const common = { proposalId: p.id, unit: p.unit, words: p.text, confidence: p.confidence };
  if (p.kind === 'bracket') return { ...common, kind: 'bracket', passes: withUnit(p.passes, p.unit), stops: withUnit(p.stops, p.unit) };
  return { ...common, kind: 'direct', value: withUnit(p.value, p.unit) };
}

/** What the list says about listening when it has nothing to show (or nothing yet). */
export function listeningSentence(state: EvidenceState): string {
  switch (state) {
    case 'queued':
      return 'Waiting to listen to the clip’s sound (and read its display, if you marked one); the figures found will be listed here.';
    case 'running':
      return 'Listening to the clip’s sound (and reading its display, if you marked one) now; the figures found will be listed here.';
    case 'failed':
      return 'The clip’s sound or display could not be read (the server’s log says why). Log the readings from the footage as usual.';
    case 'off':
      return 'This server has no speech recognizer, so the clip’s sound is not listened to. Log the readings from the footage as usual.';
    case 'done':
      return 'No figure was heard in the clip’s sound or read off its display.';
  }
}
