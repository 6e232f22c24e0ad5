/**
 * A second witness for a reading: what the clip's sound says near the reading's moment, set
 * beside the figure the builder logged. The moderator checks the still; this says, in one line,
 * whether the builder's own voice said the same figure.
 *
 * Pure, free of zod and Node, so the server, the review screen and the public page can all run
 * it. A disagreement is never a flag and blocks nothing: it asks the moderator to look again.
 *
 * Our rule (common practice, no published source):
 * - Near the moment means a figure whose words overlap the 4 s before to the 4 s after the
 *   reading's moment (`HEARD_WINDOW_MS`).
 * - Figures are found by `findSpokenFigures` (shared/speech/spoken-figures.ts) in any unit of the
 *   reading's quantity; a decimal said with "point" and no unit is taken in the reading's unit
 *   (and the line says no unit was said).
 * - A heard figure agrees when, converted exactly into the reading's unit (`convertExact`; NIST
 *   SP 811 (2008) B.8 factors, e.g. 1 in = 25.4 mm), it lies within half a step of the logged
 *   figure's last digit, of the heard figure's last digit, or of the instrument's resolution,
 *   whichever is widest, of the logged value: each figure means the interval its last digit
 *   implies, so "fourteen point three three millimetres" (14.33 mm, ± 0.005 mm) agrees with a
 *   logged 0.5642 in (14.33068 mm), while 0.5594 in said beside a logged 0.5595 in does not.
 * - A direct reading agrees with a heard value; a repeated one when a heard value agrees with any
 *   of its values; a feeler bracket when a heard bracket agrees on both blades, or two heard
 *   blades do (one said to go, agreeing with the blade that passes, one said not to, agreeing
 *   with the blade that stops). A bracket is set only against what was said of blades (brackets,
 *   blades said with how they went), a direct or repeated reading only against values: the
 *   other kind of talk is another reading's.
 * - `agrees` names the agreeing figure said nearest the moment; `disagrees` (figures of the
 *   quantity heard, none agreeing) names the closest in value; `nothing-heard` when no figure of
 *   the quantity was heard in the window; `not-listened` when the clip has not been listened to.
 */
import { parseDecimalText } from '../measure/decimal';
import { Fraction, fractionOfDecimal, fractionToFixed } from '../measure/exact';
import { convertedDecimalsIn, withUnit } from '../measure/format-quantity';
import { convertExact, quantityOf, unitsOf, type AnyUnit } from '../measure/quantities';
import { findSpokenFigures, type SpokenFigure } from '../speech/spoken-figures';
import type { ListeningState } from '../speech/speech.schema';
import type { HeardState } from './heard-states';

/** How far either side of a reading's moment a figure counts as heard near it, ms. Our rule. */
export const HEARD_WINDOW_MS = { before: 4000, after: 4000 } as const;

/**
 * Words this far outside the window are read too, so a figure whose words straddle the window's
 * edge is read whole (a figure never holds a pause over 1.5 s, nor a bracket one over 4 s).
 */
const READ_MARGIN_MS = 15_000;


/** The figure heard, as said: a value, or a feeler bracket's two blades; decimal text in `unit`. */
export type HeardFigure = { value: string; unit: AnyUnit } | { passes: string; stops: string; unit: AnyUnit };

/** What was heard near a reading's moment, in a line and in parts. */
export interface HeardWitness {
  state: HeardState;
  /** The line: "heard ‘five hundred sixty four and two tenths’ at 0:00.5 → 564.2 thou = 0.5642 in: agrees with the logged 0.5642 in". */
  text: string;
  /** The figure named (the agreeing one, or the closest of those that disagree). */
  figure?: HeardFigure;
  /** When the figure's first word was said, ms from the start of the clip. */
  atMs?: number;
  /** The words the figure was read from, cleaned (for a display, the figure shown). */
  words?: string;
  /** Where the figure named came from: said, or shown on the instrument's display. */
  source?: 'speech' | 'display';
}

/** What the witness needs of a reading: its figures as logged (decimal text in `unit`) and its moment. */
export interface WitnessReading {
  kind: 'direct' | 'bracket' | 'repeated';
  unit: AnyUnit;
  value: string | null;
  passes: string | null;
  stops: string | null;
  values: readonly string[] | null;
  /** The reading's moment, ms from the start of the clip. */
  atMs: number;
  /** The instrument's resolution in the reading's unit, when known; half of it is allowed. */
  resolution?: string | number | null;
}

/** One word heard, ms from the start of the clip (as `GET /api/clips/:clipId/words` gives them). */
export interface HeardWord {
  word: string;
  startMs: number;
  endMs: number;
  confidence: number;
}

/** A figure read off the clip's instrument display: shown from `startMs` to `endMs`, decimal text in `unit`. */
export interface ShownFigure {
  startMs: number;
  endMs: number;
  text: string;
  unit: AnyUnit;
  confidence: number;
}

/**
 * Where listening to the reading's clip stands, with its words once it was listened to, and the
 * figures read off its display when its builder marked one.
 */
export type ClipListening =
  | { state: 'ready'; words: readonly HeardWord[]; shown?: readonly ShownFigure[] }
  | { state: Exclude<ListeningState, 'ready'> };

/** A spoken figure with its times in ms; `source` 'display' when it was read off the display rather than said. */
export type TimedSpokenFigure = SpokenFigure & { startMs: number; endMs: number; source?: 'speech' | 'display' };

/** "0:07.9", "1:02:03.4": minutes and seconds to the tenth, as the clip player shows them. */
export function clipTime(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return '–:––.–';
  const tenths = Math.floor(ms / 100 + 1e-6);
  const h = Math.floor(tenths / 36_000);
  const m = Math.floor((tenths % 36_000) / 600);
  const s = Math.floor((tenths % 600) / 10);
  const ss = `${String(s).padStart(2, '0')}.${tenths % 10}`;
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${ss}` : `${m}:${ss}`;
}

/** The window around a moment, clipped at the clip's start. */
export function heardWindow(atMs: number): { fromMs: number; toMs: number } {
  return { fromMs: Math.max(0, atMs - HEARD_WINDOW_MS.before), toMs: atMs + HEARD_WINDOW_MS.after };
}

/**
 * The figures of the reading's quantity said near its moment, in the order said: any unit of
 * that quantity, a decimal said without a unit taken in the reading's unit.
 */
export function figuresNear(reading: Pick<WitnessReading, 'unit' | 'atMs'>, words: readonly HeardWord[]): TimedSpokenFigure[] {
  const { fromMs, toMs } = heardWindow(reading.atMs);
  const timed = words
    .filter((w) => w.endMs >= fromMs - READ_MARGIN_MS && w.startMs <= toMs + READ_MARGIN_MS)
    .sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs)
    .map((w) => ({ word: w.word, start: w.startMs / 1000, end: w.endMs / 1000, confidence: w.confidence }));
  const units = unitsOf(quantityOf(reading.unit));
  return findSpokenFigures(timed, { units, defaultUnit: reading.unit })
    .map((f) => ({ ...f, startMs: Math.round(f.start * 1000), endMs: Math.round(f.end * 1000) }))
    .filter((f) => f.startMs <= toMs && f.endMs >= fromMs);
}

/** The figures the display showed near the reading's moment, in the reading's quantity, as figures to judge. */
export function shownNear(reading: Pick<WitnessReading, 'unit' | 'atMs'>, shown: readonly ShownFigure[]): TimedSpokenFigure[] {
  const { fromMs, toMs } = heardWindow(reading.atMs);
  const quantity = quantityOf(reading.unit);
  return shown
    .filter((f) => f.startMs <= toMs && f.endMs >= fromMs && quantityOf(f.unit) === quantity)
    .map((f) => ({
      kind: 'value' as const,
      value: f.text,
      unit: f.unit,
      feel: null,
      start: f.startMs / 1000,
      end: f.endMs / 1000,
      startMs: f.startMs,
      endMs: f.endMs,
      confidence: f.confidence,
      words: f.text,
      unitHeard: false,
      source: 'display' as const,
    }));
}

// ---------------------------------------------------------------------------------------------
// Comparing figures

interface Exact {
  value: Fraction;
  /** Half a step of the figure's last digit. */
  halfStep: Fraction;
}

const HALF = new Fraction(1, 2);

/** A decimal text in `from` as an exact value and half its last digit's step, in `to`. */
function exactIn(text: string, from: AnyUnit, to: AnyUnit): Exact | null {
  const decimal = parseDecimalText(text.trim().replace('−', '-'));
  if (!decimal) return null;
  const step = new Fraction(1n, 10n ** BigInt(decimal.scale));
  return {
    value: convertExact(fractionOfDecimal(decimal), from, to),
    halfStep: convertExact(step, from, to, { difference: true }).abs().mul(HALF),
  };
}

/** Half the instrument's resolution in the reading's unit, or zero when not known. */
function halfResolution(reading: WitnessReading): Fraction {
  const r = reading.resolution;
  if (r === undefined || r === null || reading.kind === 'bracket') return new Fraction(0);
  const decimal = parseDecimalText(String(r).trim());
  return decimal && decimal.coefficient > 0n ? fractionOfDecimal(decimal).mul(HALF) : new Fraction(0);
}

const maxOf = (...xs: Fraction[]) => xs.reduce((a, b) => (a.compare(b) >= 0 ? a : b));

/** How far a heard figure lies from a logged one, in the reading's unit, and whether it agrees. */
interface Comparison {
  distance: Fraction;
  agrees: boolean;
}

function compare(heard: string, heardUnit: AnyUnit, logged: string, reading: WitnessReading): Comparison | null {
  const h = exactIn(heard, heardUnit, reading.unit);
  const l = exactIn(logged, reading.unit, reading.unit);
  if (!h || !l) return null;
  const distance = h.value.sub(l.value).abs();
  const tolerance = maxOf(h.halfStep, l.halfStep, halfResolution(reading));
  return { distance, agrees: distance.compare(tolerance) <= 0 };
}

/** The logged figures a heard value is set against: a direct reading's value, a repeated reading's values. */
function loggedValues(reading: WitnessReading): string[] {
  if (reading.kind === 'direct') return reading.value === null ? [] : [reading.value];
  if (reading.kind === 'repeated') return [...(reading.values ?? [])];
  return [];
}

/**
 * Whether a heard figure can bear on the reading at all: a feeler bracket is set against what
 * was said of blades (a bracket, or a blade said with how it went), a direct or repeated reading
 * against values. A bracket said near a micrometer reading, or a bare number near a bracket, is
 * another reading's talk.
 */
function bears(f: SpokenFigure, reading: WitnessReading): boolean {
  if (reading.kind === 'bracket') return f.kind === 'bracket' || f.feel !== null;
  return f.kind === 'value';
}

/** One way the heard figures may bear on the reading: one figure, or two blades together. */
interface Match {
  figures: TimedSpokenFigure[];
  distance: Fraction;
  agrees: boolean;
  /** The logged figure it was set against, for the line. */
  logged: string;
}

function best(comparisons: (Comparison & { logged: string })[]): (Comparison & { logged: string }) | null {
  let out: (Comparison & { logged: string }) | null = null;
  for (const c of comparisons) {
    if (!out || (c.agrees && !out.agrees) || (c.agrees === out.agrees && c.distance.compare(out.distance) < 0)) out = c;
  }
  return out;
}

function valueMatch(f: TimedSpokenFigure, reading: WitnessReading): Match | null {
  if (f.kind === 'bracket') {
    if (reading.kind !== 'bracket' || reading.passes === null || reading.stops === null) return null;
    const p = compare(f.passes, f.unit, reading.passes, reading);
    const s = compare(f.stops, f.unit, reading.stops, reading);
    if (!p || !s) return null;
    return { figures: [f], distance: maxOf(p.distance, s.distance), agrees: p.agrees && s.agrees, logged: loggedText(reading) };
  }
  if (reading.kind === 'bracket') {
    // One blade is never the whole bracket: it is set against the blade of its feel, and cannot agree alone.
    const logged = f.feel === 'passes' ? reading.passes : reading.stops;
    const c = logged === null ? null : compare(f.value, f.unit, logged, reading);
    return c ? { figures: [f], distance: c.distance, agrees: false, logged: loggedText(reading) } : null;
  }
  const c = best(
    loggedValues(reading).flatMap((logged) => {
      const x = compare(f.value, f.unit, logged, reading);
      return x ? [{ ...x, logged }] : [];
    }),
  );
  return c ? { figures: [f], distance: c.distance, agrees: c.agrees, logged: c.logged } : null;
}

/** Two blades said apart (one goes, one does not) that together agree with a logged bracket. */
function bladePairs(figures: readonly TimedSpokenFigure[], reading: WitnessReading): Match[] {
  if (reading.kind !== 'bracket' || reading.passes === null || reading.stops === null) return [];
  const { passes, stops } = reading;
  const blades = figures.filter((f): f is TimedSpokenFigure & { kind: 'value' } => f.kind === 'value' && f.feel !== null);
  const out: Match[] = [];
  for (const a of blades.filter((f) => f.feel === 'passes')) {
    for (const b of blades.filter((f) => f.feel === 'stops')) {
      const p = compare(a.value, a.unit, passes, reading);
      const s = compare(b.value, b.unit, stops, reading);
      if (p && s && p.agrees && s.agrees) {
        const pair = [a, b].sort((x, y) => x.startMs - y.startMs);
        out.push({ figures: pair, distance: maxOf(p.distance, s.distance), agrees: true, logged: loggedText(reading) });
      }
    }
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Words

const shown = (text: string) => text.replace(/^-/, '−');

/** The logged figure as the line says it: "0.5642 in", "0.004–0.005 in". */
function loggedText(reading: WitnessReading, value?: string): string {
  if (reading.kind === 'bracket') return withUnit(`${shown(reading.passes ?? '?')}–${shown(reading.stops ?? '?')}`, reading.unit);
  return withUnit(shown(value ?? reading.value ?? '?'), reading.unit);
}

/** A decimal text in `from` converted into `to` at the places it supports (NIST SP 811 (2008) B.7.2), without its unit. */
function convertedNumber(text: string, from: AnyUnit, to: AnyUnit): string | null {
  const decimal = parseDecimalText(text.trim().replace('−', '-'));
  if (!decimal) return null;
  return fractionToFixed(convertExact(fractionOfDecimal(decimal), from, to), convertedDecimalsIn(decimal.scale, from, to));
}

/** "564.2 thou = 0.5642 in", "0.5594 in", "3–4 thou = 0.003–0.004 in". */
function figureText(f: SpokenFigure, unit: AnyUnit): string {
  const same = f.unit === unit;
  const numbers = f.kind === 'value' ? [f.value] : [f.passes, f.stops];
  const said = withUnit(numbers.map(shown).join('–'), f.unit);
  if (same) return said;
  const converted = numbers.map((n) => convertedNumber(n, f.unit, unit));
  return converted.every((c): c is string => c !== null) ? `${said} = ${withUnit(converted.join('–'), unit)}` : said;
}

/**
 * "heard ‘five hundred sixty four and two tenths’ at 0:00.5" (with "(no unit said)" when it was
 * not), or "read 0.5642 on the display at 0:03.0".
 */
function saidText(f: TimedSpokenFigure): string {
  if (f.source === 'display') return `read ${f.words} on the display at ${clipTime(f.startMs)}`;
  return `heard ‘${f.words}’${f.unitHeard ? '' : ' (no unit said)'} at ${clipTime(f.startMs)}`;
}

function figureOf(f: SpokenFigure): HeardFigure {
  return f.kind === 'value' ? { value: f.value, unit: f.unit } : { passes: f.passes, stops: f.stops, unit: f.unit };
}

const notListenedWords: Readonly<Record<Exclude<ListeningState, 'ready'>, string>> = {
  pending: 'not listened to yet: the clip is waiting its turn to be listened to',
  listening: 'not listened to yet: the clip is being listened to now',
  failed: 'not listened to: listening to the clip failed',
  unavailable: 'not listened to: this server has no speech recognizer',
};

/** The witness when the clip's sound has not been heard. */
export function notListened(state: Exclude<ListeningState, 'ready'>): HeardWitness {
  return { state: 'not-listened', text: notListenedWords[state] };
}

/** Nearest first: how far the figure's words lie from the moment (zero when they span it). */
function timeFromMoment(f: Match, atMs: number): number {
  const start = Math.min(...f.figures.map((x) => x.startMs));
  const end = Math.max(...f.figures.map((x) => x.endMs));
  return atMs < start ? start - atMs : atMs > end ? atMs - end : 0;
}

/**
 * The rule, over the figures already found near the moment (`figuresNear`): agrees, disagrees
 * (naming the closest) or nothing heard. See this file's header.
 */
export function judgeHeard(reading: WitnessReading, figures: readonly TimedSpokenFigure[], withDisplay = false): HeardWitness {
  const quantity = quantityOf(reading.unit);
  const own = figures.filter((f) => quantityOf(f.unit) === quantity && bears(f, reading));
  const { fromMs, toMs } = heardWindow(reading.atMs);
  if (own.length === 0) {
    // Quantity kinds are plain words already (length, volume, torque…).
    const what = reading.kind === 'bracket' ? 'feeler blade' : quantity;
    return {
      state: 'nothing-heard',
      text: `nothing heard near this moment: no ${what} was said${withDisplay ? ' or shown on the display' : ''} between ${clipTime(fromMs)} and ${clipTime(toMs)}`,
    };
  }
  const matches = [...own.flatMap((f) => valueMatch(f, reading) ?? []), ...bladePairs(own, reading)];
  const agreeing = matches.filter((m) => m.agrees).sort((a, b) => timeFromMoment(a, reading.atMs) - timeFromMoment(b, reading.atMs));
  const chosen =
    agreeing[0] ??
    [...matches].sort((a, b) => a.distance.compare(b.distance) || timeFromMoment(a, reading.atMs) - timeFromMoment(b, reading.atMs))[0];
  if (!chosen) {
    // Figures of the quantity whose text could not be read exactly: said, but not comparable.
    const f = own[0]!;
    return { state: 'disagrees', text: `${saidText(f)}, which cannot be set against the logged ${loggedText(reading)}`, atMs: f.startMs, words: f.words };
  }
  const logged = reading.kind === 'repeated' ? `${loggedText(reading, chosen.logged)} (one of its ${reading.values?.length ?? 0} values)` : loggedText(reading);
  const verb = chosen.agrees ? 'agrees with' : 'disagrees with';
  const first = chosen.figures[0]!;
  if (chosen.figures.length === 2) {
    // Two blades are paired only when both agree.
    const second = chosen.figures[1]!;
    return {
      state: 'agrees',
      text: `${saidText(first)} → ${figureText(first, reading.unit)} and ${saidText(second)} → ${figureText(second, reading.unit)}: agree with the logged ${logged}`,
      ...(first.kind === 'value' && second.kind === 'value' && first.unit === second.unit && {
        figure: { passes: first.feel === 'passes' ? first.value : second.value, stops: first.feel === 'passes' ? second.value : first.value, unit: first.unit },
      }),
      atMs: first.startMs,
      words: `${first.words} … ${second.words}`,
      source: 'speech',
    };
  }
  const closest = !chosen.agrees && own.length > 1 ? ` (the closest of ${own.length} figures heard)` : '';
  return {
    state: chosen.agrees ? 'agrees' : 'disagrees',
    text: `${saidText(first)} → ${figureText(first, reading.unit)}${closest}: ${verb} the logged ${logged}`,
    figure: figureOf(first),
    atMs: first.startMs,
    words: first.words,
    source: first.source ?? 'speech',
  };
}

/** The witness for one reading: `judgeHeard` over the figures said near its moment, once its clip was listened to. */
export function heardWitness(reading: WitnessReading, listening: ClipListening): HeardWitness {
  if (listening.state !== 'ready') return notListened(listening.state);
  const shown = listening.shown ? shownNear(reading, listening.shown) : [];
  return judgeHeard(reading, [...figuresNear(reading, listening.words), ...shown], listening.shown !== undefined);
}

/** A heard figure as the screens show it: "564.2 thou", "3–4 thou". */
export function heardFigureText(figure: HeardFigure): string {
  if ('value' in figure) return withUnit(shown(figure.value), figure.unit);
  return withUnit(`${shown(figure.passes)}–${shown(figure.stops)}`, figure.unit);
}
