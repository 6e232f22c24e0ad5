/**
 * Spoken figures: turning a recognizer's timed words ("five hundred sixty four and two tenths",
 * "three thou slides, four thou won't go", "sixty five foot pounds") into proposed readings.
 *
 * Pure: no Node APIs, no schema library, so the server and the browser can both run it. The
 * builder confirms every proposal, but a wrong proposal costs more than a missed one (it can be
 * accepted without a second look), so every rule below leans towards proposing nothing.
 *
 * Our rules. Unit definitions follow NIST SP 811 (2008) appendix B (1 in = 25.4 mm exactly) and
 * `shared/measure/quantities.ts`; the way the trade says them is common practice (no published
 * source):
 *
 * Words
 * - Words are lower-cased; a recognizer's alternate marker ("hundred(4)") is dropped; hyphens
 *   split ("foot-pounds" is "foot pounds"); fillers (`<s>`, `</s>`, `<sil>`, anything in <…>, […]
 *   or ++…++, and "uh", "um", "er", "erm", "ah", "eh", "hmm", "mhm") are ignored.
 * - A figure's confidence is the least of its words' confidences, held within 0…1 (pocketsphinx
 *   reports a little over 1 for some words).
 * - A figure does not run across a pause longer than 1.5 s between words; the two halves of a
 *   feeler bracket may be up to 4 s apart.
 *
 * Numbers (`parseSpokenNumber`)
 * - Cardinals up to nine hundred ninety nine thousand nine hundred ninety nine, with or without the
 *   British "and" after hundred/thousand, and "a hundred", "a thousand".
 * - Digit-group talk: "five sixty four" = 564, "one oh five" = 105, "fifteen hundred" = 1500,
 *   "sixty five hundred" = 6500. When both readings are possible the one that uses more words wins
 *   ("five hundred sixty four" is a cardinal, "five sixty four" is groups).
 * - "point" then digits or groups: "point oh four seven" = 0.047, "point twenty five" = 0.25;
 *   zeros are kept as spoken ("point five six four oh" = "0.5640").
 * - "oh" (or "o") is a zero only inside digit talk or before "point" ("oh point oh four seven");
 *   a lone "oh" is an exclamation. "zero" and "nought" are zeros anywhere.
 * - "and a half" adds .5 to a whole number; "minus" or "negative" in front makes it negative.
 * - "and two tenths" is never swallowed as the British "and": the caller reads it (below).
 *
 * Units (what makes a number a figure)
 * - A number is proposed only with a unit word, as half of a feeler bracket, or, when the caller
 *   gives `defaultUnit`, as a decimal said with "point". "cylinder one", "two bolts", "bolt three",
 *   "nineteen sixty five", "two and a half hours" give nothing.
 * - thou: "thou", "thous", "thousandths", "mils" (and "mil", see `mil` below). 1 thou = 0.001 in.
 * - tenths: "tenth(s)" after a number is tenths of a thou (0.0001 in). "X and Y tenths" (X whole,
 *   Y one digit, no unit said) and "X thou [and] Y tenths" (Y any whole number) are X + Y/10 thou:
 *   "five hundred sixty four and two tenths" is 564.2 thou (0.5642 in), "three point five thou and
 *   two tenths" 3.7 thou; a minus goes with the whole ("minus two thou and two tenths" is −2.2).
 *   "X and Y tenths <unit>" is X + Y/10 in that unit ("fourteen and three tenths millimetres").
 *   With no unit said, "X and Y tenths" is taken for thou only when X is 100 or more (a
 *   micrometer reading); "forty two and six tenths" could be cc or mm, so it gives nothing.
 * - "X <unit> and a half" is X + 0.5 in that unit ("an inch and a half", "three thou and a half").
 * - "N tenths / hundredths / thousandths of a(n) <unit>" is N/10, N/100, N/1000 of the unit;
 *   "tenths of a thou" stay tenths, "thousandths of an inch" are thou, "thousandths of a
 *   millimetre" are microns. Bare "hundredths" (of a millimetre? of an inch?) give nothing, as
 *   does "a tenth of the way" (a fraction of anything else).
 * - "a" and "half a(n)" count as 1 and 0.5 before a length unit only: "a thou", "half a tenth",
 *   "half a millimetre". "a second", "a degree or two" give nothing.
 * - "mil(s)" is thou (American usage) unless the caller says `mil: 'mm'` (British shop talk,
 *   "a ten mil spanner").
 * - A singular unit word after a whole number other than one is an adjective, not a reading:
 *   "a two inch pipe", "a ten millimetre socket", "a ninety degree elbow", "a five pound hammer"
 *   give nothing; "one inch", "one point five millimetre" are read.
 * - "micron(s)" and "micrometre(s)" (British spelling) are µm; "micrometer(s)" is the instrument.
 * - "degrees" alone is an angle (crank and cam talk); "degrees c / celsius / centigrade" and
 *   "degrees f / fahrenheit" (or those words alone) are temperatures.
 * - Torque: "foot pound(s)", "pound feet" = lbf·ft; "inch pound(s)", "pound inches" = lbf·in;
 *   "newton metre(s)/meter(s)" = N·m.
 * - Pressure: "psi", "p s i", "pounds per square inch" = psi; "bar"; "kilopascal(s)", "k p a".
 * - Bare "pounds" is psi on a gauge and lbf·ft on a torque wrench, so it is read only when the
 *   caller's units say which (`units` holds one of psi / lbf_ft, or `defaultUnit` is one of them).
 * - "<N> hundred pounds" (N under 100) is what the recognizer hears for "<N> foot pounds". With a
 *   torque context it is N lbf·ft, with a note saying so; otherwise nothing (never 6500 psi).
 * - "seconds" need a decimal ("twelve point five seconds"): "give it two seconds" is talk.
 * - A ratio is "<number> to one" said with a decimal or "and a half" ("ten point two to one") or
 *   followed by "compression" or "ratio"; "ten to one" alone is the time of day.
 * - "plus or minus X" and "give or take X" are tolerances, not readings: nothing.
 *
 * Feeler brackets
 * - A figure followed by a feel word is a blade: passes = "slides", "goes", "drags", "enters",
 *   "fits", "passes"; stops = "won't go", "doesn't go", "does not go", "stops", "won't enter",
 *   "doesn't enter", "won't fit", "tight", "binds", "no go". "blade", "feeler", "leaf", "gauge"
 *   may come between the figure and the feel word.
 * - A blade that passes next to one that stops (either order; at most two of "and", "but",
 *   "then", "while", "so", "yet", "though", "the", "a" between) is a bracket when the passing
 *   blade is the thinner one. A half without a unit takes the other half's unit ("three thou
 *   slides, four won't go"); with no unit on either, `defaultUnit` or nothing.
 * - A lone blade with a unit is proposed as a value with its `feel`; one that is not thinner than
 *   its partner is not paired.
 */
import { decimalToText, parseDecimalText } from '../measure/decimal';
import type { AnyUnit } from '../measure/quantities';

/** One word as the recognizer heard it: times in seconds from the start of the clip. */
export interface TimedWord {
  word: string;
  start: number;
  end: number;
  confidence: number;
}

/** How a feeler blade went: it entered (slides, drags) or it did not (won't go, tight). */
export type BladeFeel = 'passes' | 'stops';

interface SpokenFigureBase {
  /** Start of the first word, seconds. */
  start: number;
  /** End of the last word, seconds. */
  end: number;
  /** The least confidence of the figure's words, 0…1. */
  confidence: number;
  /** The words heard, cleaned (lower case, no alternates or fillers), space-separated. */
  words: string;
  /** False when the unit is the caller's `defaultUnit` rather than a word that was said. */
  unitHeard: boolean;
  /** Why the figure is not just the literal words (an implied unit, a likely mishearing). */
  note?: string;
}

/** A value read directly: "fourteen point three three one millimetres". */
export interface SpokenValue extends SpokenFigureBase {
  kind: 'value';
  /** Decimal text, digits as spoken: "0.5640". */
  value: string;
  unit: AnyUnit;
  /** Set when the value was a feeler blade said with how it went ("three thou drags"). */
  feel: BladeFeel | null;
}

/** A feeler bracket: the thickest blade that passes and the thinnest that stops. */
export interface SpokenBracket extends SpokenFigureBase {
  kind: 'bracket';
  /** Decimal text of the blade that passes. */
  passes: string;
  /** Decimal text of the blade that stops; always greater than `passes`. */
  stops: string;
  unit: AnyUnit;
}

/** A proposed reading heard in speech. */
export type SpokenFigure = SpokenValue | SpokenBracket;

/** What the caller knows about the readings expected at this point of the clip. */
export interface FindSpokenFiguresOptions {
  /**
   * Only figures in these units are proposed; also settles what bare "pounds" means (psi or
   * lbf·ft, when only one of them is listed).
   */
  units?: readonly AnyUnit[];
  /** The unit of a decimal said without one ("point five six four two"); nothing if unset. */
  defaultUnit?: AnyUnit;
  /** What "mil(s)" means: thou (default, American) or millimetres (British shop talk). */
  mil?: 'thou' | 'mm';
}

/** A number read from the start of a list of words. */
export interface SpokenNumber {
  /** Decimal text, trailing zeros as spoken. */
  value: string;
  /** Words consumed. */
  used: number;
}

// ---------------------------------------------------------------------------------------------
// Words

const DIGITS: Readonly<Record<string, string>> = {
  zero: '0',
  nought: '0',
  naught: '0',
  oh: '0',
  o: '0',
  one: '1',
  two: '2',
  three: '3',
  four: '4',
  five: '5',
  six: '6',
  seven: '7',
  eight: '8',
  nine: '9',
};
/** Zeros that are exclamations when alone ("oh, two bolts"). */
const DIGIT_TALK_ZEROS = new Set(['oh', 'o']);
const TEENS: Readonly<Record<string, number>> = {
  ten: 10,
  eleven: 11,
  twelve: 12,
  thirteen: 13,
  fourteen: 14,
  fifteen: 15,
  sixteen: 16,
  seventeen: 17,
  eighteen: 18,
  nineteen: 19,
};
const TENS: Readonly<Record<string, number>> = {
  twenty: 20,
  thirty: 30,
  forty: 40,
  fourty: 40,
  fifty: 50,
  sixty: 60,
  seventy: 70,
  eighty: 80,
  ninety: 90,
};
const TENTHS_WORDS = new Set(['tenth', 'tenths']);
const FILLERS = new Set(['uh', 'um', 'uhm', 'er', 'erm', 'ah', 'eh', 'hmm', 'mhm']);
/** Longest run of digits we build; far beyond any reading, and within `MAX_DECIMAL_TEXT_LENGTH`. */
const MAX_DIGITS = 15;
/** Longest pause inside one figure, seconds. */
const MAX_GAP_IN_FIGURE = 1.5;
/** Longest pause between the two halves of a feeler bracket, seconds. */
const MAX_GAP_IN_BRACKET = 4;

function digitOf(word: string | undefined): string | undefined {
  return word === undefined ? undefined : DIGITS[word];
}

function nonZeroDigit(word: string | undefined): number | undefined {
  const d = digitOf(word);
  return d === undefined || d === '0' ? undefined : Number(d);
}

/** Lower case, no alternate marker, no punctuation but apostrophes; '' for a filler. */
function normalizeWords(raw: string): string[] {
  let word = raw.trim().toLowerCase().replace(/’/g, "'");
  word = word.replace(/\(\d+\)$/, '');
  if (/^<.*>$/.test(word) || /^\[.*\]$/.test(word) || /^\+\+.*\+\+$/.test(word)) return [];
  return word
    .split(/[\s_-]+/)
    .map((part) => part.replace(/[^a-z0-9']/g, '').replace(/^'+|'+$/g, ''))
    .filter((part) => part !== '' && !FILLERS.has(part));
}

// ---------------------------------------------------------------------------------------------
// Numbers

interface Counted {
  n: number;
  used: number;
}

/** "sixty four", "fourteen", "seven", "zero" (not "oh"). */
function readBelow100(t: readonly string[], i: number, end: number): Counted | null {
  if (i >= end) return null;
  const w = t[i] ?? '';
  const tens = TENS[w];
  if (tens !== undefined) {
    const unit = i + 1 < end ? nonZeroDigit(t[i + 1]) : undefined;
    return unit === undefined ? { n: tens, used: 1 } : { n: tens + unit, used: 2 };
  }
  const teen = TEENS[w];
  if (teen !== undefined) return { n: teen, used: 1 };
  const d = digitOf(w);
  if (d !== undefined && !DIGIT_TALK_ZEROS.has(w)) return { n: Number(d), used: 1 };
  return null;
}

/**
 * The part after "hundred"/"thousand": "sixty four", "and sixty four", but not "and two" when
 * "tenths" follows, which the caller reads as thou and tenths.
 */
function readTail(
  t: readonly string[],
  i: number,
  end: number,
  read: (t: readonly string[], i: number, end: number) => Counted | null,
): Counted | null {
  const withAnd = t[i] === 'and';
  const at = withAnd ? i + 1 : i;
  const tail = read(t, at, end);
  if (!tail) return null;
  if (withAnd && TENTHS_WORDS.has(t[at + tail.used] ?? '')) return null;
  return { n: tail.n, used: tail.used + (withAnd ? 1 : 0) };
}

/** "five hundred sixty four", "a hundred", "fifteen hundred", "sixty five hundred and two", "forty". */
function readBelow1000(t: readonly string[], i: number, end: number): Counted | null {
  const head: Counted | null =
    t[i] === 'a' && t[i + 1] === 'hundred' && i + 1 < end ? { n: 1, used: 1 } : readBelow100(t, i, end);
  if (!head) return null;
  const at = i + head.used;
  if (at >= end || t[at] !== 'hundred' || head.n === 0) return head;
  const n = head.n * 100;
  const tail = readTail(t, at + 1, end, readBelow100);
  return tail ? { n: n + tail.n, used: head.used + 1 + tail.used } : { n, used: head.used + 1 };
}

function readCardinal(t: readonly string[], i: number, end: number): Counted | null {
  const head: Counted | null =
    t[i] === 'a' && t[i + 1] === 'thousand' && i + 1 < end ? { n: 1, used: 1 } : readBelow1000(t, i, end);
  if (!head) return null;
  const at = i + head.used;
  if (at >= end || t[at] !== 'thousand' || head.n === 0 || head.n >= 1000) return head;
  const n = head.n * 1000;
  const tail = readTail(t, at + 1, end, readBelow1000);
  return tail && tail.n < 1000 ? { n: n + tail.n, used: head.used + 1 + tail.used } : { n, used: head.used + 1 };
}

interface Groups {
  digits: string;
  used: number;
}

/** Digit-group talk: "five sixty four" → "564", "oh four seven" → "047", "twenty twenty" → "2020". */
function readGroups(t: readonly string[], i: number, end: number): Groups | null {
  let digits = '';
  let k = i;
  while (k < end) {
    const w = t[k] ?? '';
    let group: string | undefined;
    let used = 1;
    const tens = TENS[w];
    if (tens !== undefined) {
      const unit = k + 1 < end ? nonZeroDigit(t[k + 1]) : undefined;
      group = String(tens + (unit ?? 0));
      if (unit !== undefined) used = 2;
    } else if (TEENS[w] !== undefined) {
      group = String(TEENS[w]);
    } else {
      group = digitOf(w);
    }
    if (group === undefined || digits.length + group.length > MAX_DIGITS) break;
    digits += group;
    k += used;
  }
  return k === i ? null : { digits, used: k - i };
}

interface NumberRead extends SpokenNumber {
  /** "point" was said. */
  point: boolean;
  /** A fractional part was said ("point …" or "and a half"). */
  fractional: boolean;
}

/** "and a half" (or "and an half") at `k`. */
function andAHalfAt(t: readonly string[], k: number, end: number): boolean {
  return k + 2 < end && t[k] === 'and' && (t[k + 1] === 'a' || t[k + 1] === 'an') && t[k + 2] === 'half';
}

function readNumber(t: readonly string[], i: number, end: number): NumberRead | null {
  let k = i;
  let negative = false;
  if (t[k] === 'minus' || t[k] === 'negative') {
    negative = true;
    k += 1;
  }
  let whole: string | null = null;
  const cardinal = readCardinal(t, k, end);
  const groups = readGroups(t, k, end);
  if (groups && (!cardinal || groups.used > cardinal.used)) {
    // A lone "oh" (or "oh five") is an exclamation unless a point follows ("oh point oh four").
    if (DIGIT_TALK_ZEROS.has(t[k] ?? '') && t[k + groups.used] !== 'point') return null;
    whole = groups.digits.replace(/^0+(?=\d)/, '');
    k += groups.used;
  } else if (cardinal) {
    whole = String(cardinal.n);
    k += cardinal.used;
  }
  let fraction = '';
  let point = false;
  if (t[k] === 'point' && k + 1 < end) {
    const after = readGroups(t, k + 1, end);
    if (after) {
      fraction = after.digits;
      point = true;
      k += 1 + after.used;
    }
  }
  if (whole === null && !point) return null;
  if (whole !== null && !point && andAHalfAt(t, k, end)) {
    fraction = '5';
    k += 3;
  }
  const digits = `${whole ?? '0'}${fraction === '' ? '' : `.${fraction}`}`;
  const sign = negative && /[1-9]/.test(digits) ? '-' : '';
  return { value: `${sign}${digits}`, used: k - i, point, fractional: fraction !== '' };
}

/**
 * Reads English number talk from the start of `words`: cardinals ("five hundred sixty four"),
 * digit groups ("five sixty four point two"), "point" decimals with zeros as spoken ("point five
 * six four oh" → "0.5640"), "and a half", "minus". Words are normalised as in
 * `findSpokenFigures` (lower case, "(2)" alternates and fillers dropped); `used` counts the words
 * given. Returns null when the first word starts no number. "and N tenths" is left for the caller.
 */
export function parseSpokenNumber(words: string[]): SpokenNumber | null {
  const t: string[] = [];
  const origin: number[] = [];
  words.forEach((word, index) => {
    for (const part of normalizeWords(word)) {
      t.push(part);
      origin.push(index);
    }
  });
  const read = readNumber(t, 0, t.length);
  if (!read) return null;
  // Counted in the caller's words: a filler inside the number or a hyphenated "sixty-four" counts once.
  return { value: read.value, used: (origin[read.used - 1] ?? -1) + 1 };
}

// ---------------------------------------------------------------------------------------------
// Units

/** What a unit phrase means before the caller's context is applied. */
type UnitMeaning =
  | { kind: 'unit'; unit: AnyUnit }
  | { kind: 'mil' }
  | { kind: 'pounds' }
  | { kind: 'fraction'; places: 1 | 2 | 3 };

interface UnitPhrase {
  words: readonly string[];
  meaning: UnitMeaning;
  /** After a whole number other than one this word is an adjective ("a ten millimetre socket"). */
  singular?: boolean;
  /** Read only with a spoken decimal ("twelve point five seconds"). */
  needsPoint?: boolean;
}

function phrases(unit: AnyUnit, plural: readonly string[], singular: readonly string[] = []): UnitPhrase[] {
  return [
    ...plural.map((p) => ({ words: p.split(' '), meaning: { kind: 'unit', unit } as const })),
    ...singular.map((p) => ({ words: p.split(' '), meaning: { kind: 'unit', unit } as const, singular: true })),
  ];
}

const unitPhraseList: UnitPhrase[] = [
  ...phrases('in', ['inches'], ['inch']),
  ...phrases('thou', ['thou', 'thous']),
  { words: ['thousandths'], meaning: { kind: 'fraction', places: 3 } },
  { words: ['thousandth'], meaning: { kind: 'fraction', places: 3 }, singular: true },
  { words: ['hundredths'], meaning: { kind: 'fraction', places: 2 } },
  { words: ['hundredth'], meaning: { kind: 'fraction', places: 2 }, singular: true },
  { words: ['tenths'], meaning: { kind: 'fraction', places: 1 } },
  { words: ['tenth'], meaning: { kind: 'fraction', places: 1 }, singular: true },
  { words: ['mils'], meaning: { kind: 'mil' } },
  { words: ['mil'], meaning: { kind: 'mil' }, singular: true },
  ...phrases(
    'mm',
    ['millimetres', 'millimeters', 'milli metres', 'milli meters', 'mil lee metres', 'mil lee meters'],
    ['millimetre', 'millimeter', 'milli metre', 'milli meter', 'mil lee metre', 'mil lee meter'],
  ),
  ...phrases('um', ['microns', 'micrometres'], ['micron', 'micrometre']),
  ...phrases(
    'cc',
    ['cc', 'ccs', 'c c', 'c cs', 'cubic centimetres', 'cubic centimeters'],
    ['cubic centimetre', 'cubic centimeter'],
  ),
  ...phrases('ml', ['millilitres', 'milliliters', 'mls', 'm l'], ['millilitre', 'milliliter']),
  ...phrases('cu_in', ['cubic inches', 'cu in'], ['cubic inch']),
  ...phrases('deg', ['degrees'], ['degree']),
  ...phrases(
    'degC',
    ['degrees c', 'degrees celsius', 'degrees centigrade', 'celsius', 'centigrade'],
    ['degree c', 'degree celsius', 'degree centigrade'],
  ),
  ...phrases('degF', ['degrees f', 'degrees fahrenheit', 'fahrenheit'], ['degree f', 'degree fahrenheit']),
  ...phrases(
    'N_m',
    ['newton metres', 'newton meters', 'newtons metres', 'newtons meters', 'n m'],
    ['newton metre', 'newton meter'],
  ),
  ...phrases(
    'lbf_ft',
    ['foot pounds', 'foot lbs', 'ft lbs', 'ft lb', 'pound feet', 'pounds feet', 'lb ft', 'feet pounds'],
    ['foot pound', 'pound foot'],
  ),
  ...phrases('lbf_in', ['inch pounds', 'inch lbs', 'in lbs', 'pound inches', 'pounds inches'], ['inch pound', 'pound inch']),
  ...phrases('psi', ['psi', 'p s i', 'pounds per square inch', 'pound per square inch']),
  { words: ['pounds'], meaning: { kind: 'pounds' } },
  { words: ['lbs'], meaning: { kind: 'pounds' } },
  { words: ['pound'], meaning: { kind: 'pounds' }, singular: true },
  ...phrases('bar', ['bar', 'bars']),
  ...phrases('kPa', ['kilopascals', 'kpa', 'k p a'], ['kilopascal']),
  ...phrases('g', ['grams', 'grammes'], ['gram', 'gramme']),
  { words: ['seconds'], meaning: { kind: 'unit', unit: 's' }, needsPoint: true },
  { words: ['second'], meaning: { kind: 'unit', unit: 's' }, singular: true, needsPoint: true },
];

/** Longest phrases first, so "inch pounds" wins over "inch" and "degrees c" over "degrees". */
const UNIT_PHRASES: readonly UnitPhrase[] = [...unitPhraseList].sort((a, b) => b.words.length - a.words.length);

/** The longest unit phrase at `i`, or null. */
function matchUnit(t: readonly string[], i: number, end: number): UnitPhrase | null {
  for (const phrase of UNIT_PHRASES) {
    if (i + phrase.words.length > end) continue;
    if (phrase.words.every((w, j) => t[i + j] === w)) return phrase;
  }
  return null;
}

const LENGTH_UNITS: ReadonlySet<AnyUnit> = new Set<AnyUnit>(['in', 'thou', 'tenth', 'mm', 'um']);

/** Whether the phrase is a length ("thou", "millimetre", "tenth", "mil"): what "a" and "half a" may count. */
function isLengthPhrase(phrase: UnitPhrase | null): boolean {
  if (!phrase) return false;
  const m = phrase.meaning;
  return m.kind === 'mil' || m.kind === 'fraction' || (m.kind === 'unit' && LENGTH_UNITS.has(m.unit));
}

/** psi or lbf·ft for bare "pounds", when the caller's units settle it. */
function poundsUnit(opts: FindSpokenFiguresOptions): 'psi' | 'lbf_ft' | null {
  const candidates = (['psi', 'lbf_ft'] as const).filter((u) =>
    opts.units ? opts.units.includes(u) : opts.defaultUnit === u,
  );
  if (candidates.length === 1) return candidates[0] ?? null;
  if (candidates.length === 2 && (opts.defaultUnit === 'psi' || opts.defaultUnit === 'lbf_ft')) return opts.defaultUnit;
  return null;
}

/** A torque context: lbf·ft is what the caller expects and psi is not. */
function torqueContext(opts: FindSpokenFiguresOptions): boolean {
  return poundsUnit(opts) === 'lbf_ft';
}

/** Divides decimal text by 10^places exactly, as text: ("25", 2) → "0.25", ("-2.5", 1) → "-0.25". */
function shiftDecimal(value: string, places: number): string {
  const negative = value.startsWith('-');
  const [whole = '0', fraction = ''] = (negative ? value.slice(1) : value).split('.');
  const padded = whole.padStart(places + 1, '0');
  const cut = padded.length - places;
  const shifted = `${padded.slice(0, cut).replace(/^0+(?=\d)/, '')}.${padded.slice(cut)}${fraction}`;
  return `${negative ? '-' : ''}${shifted}`;
}

/** a < b for decimal text. */
function decimalLess(a: string, b: string): boolean {
  const x = parseDecimalText(a);
  const y = parseDecimalText(b);
  if (!x || !y) return false;
  const scale = Math.max(x.scale, y.scale);
  return x.coefficient * 10n ** BigInt(scale - x.scale) < y.coefficient * 10n ** BigInt(scale - y.scale);
}

function isWhole(value: string): boolean {
  return /^-?\d+$/.test(value);
}

// ---------------------------------------------------------------------------------------------
// Feel words and brackets

const FEEL_PHRASES: readonly { words: readonly string[]; feel: BladeFeel }[] = [
  ...[
    'slides',
    'slide',
    'slid',
    'goes',
    'goes in',
    'goes through',
    'drags',
    'drag',
    'enters',
    'fits',
    'passes',
  ].map((p) => ({ words: p.split(' '), feel: 'passes' as const })),
  ...[
    "won't go",
    'wont go',
    "won't enter",
    'wont enter',
    "won't fit",
    'wont fit',
    "won't",
    "doesn't go",
    'doesnt go',
    "doesn't enter",
    "doesn't fit",
    'does not go',
    'does not enter',
    'will not go',
    'stops',
    'tight',
    'too tight',
    'binds',
    'no go',
  ].map((p) => ({ words: p.split(' '), feel: 'stops' as const })),
].sort((a, b) => b.words.length - a.words.length);

/** Words that may stand between a figure and its feel word: "three thou blade slides". */
const BLADE_WORDS = new Set(['blade', 'feeler', 'leaf', 'gauge', 'gage']);
/** Words that may stand between the two halves of a bracket. */
const CONNECTORS = new Set(['and', 'but', 'then', 'while', 'so', 'yet', 'though', 'the', 'a']);
const MAX_CONNECTORS = 2;

function matchFeel(t: readonly string[], i: number, end: number): { feel: BladeFeel; to: number } | null {
  let k = i;
  while (k < end && k - i < 2 && BLADE_WORDS.has(t[k] ?? '')) k += 1;
  for (const phrase of FEEL_PHRASES) {
    if (k + phrase.words.length > end) continue;
    if (phrase.words.every((w, j) => t[k + j] === w)) return { feel: phrase.feel, to: k + phrase.words.length };
  }
  return null;
}

// ---------------------------------------------------------------------------------------------
// Finding figures

interface Token {
  word: string;
  start: number;
  end: number;
  confidence: number;
}

/** A number with what followed it, before brackets are paired and defaults applied. */
interface Candidate {
  from: number;
  to: number;
  value: string;
  unit: AnyUnit | null;
  point: boolean;
  feel: BladeFeel | null;
  note?: string;
}

/** What a number turned out to be: a figure (maybe without a unit yet), or talk to skip up to `to`. */
type Reading =
  | { kind: 'figure'; to: number; value: string; unit: AnyUnit | null; note?: string }
  | { kind: 'nothing'; to: number };

function tokenize(words: readonly TimedWord[]): Token[] {
  const tokens: Token[] = [];
  for (const w of words) {
    for (const word of normalizeWords(w.word)) {
      tokens.push({ word, start: w.start, end: w.end, confidence: w.confidence });
    }
  }
  return tokens;
}

/** Where each token's phrase ends (exclusive): phrases break at pauses longer than a figure may hold. */
function phraseEnds(tokens: readonly Token[]): number[] {
  const ends = new Array<number>(tokens.length);
  let end = tokens.length;
  for (let i = tokens.length - 1; i >= 0; i -= 1) {
    const next = tokens[i + 1];
    const token = tokens[i];
    if (next && token && next.start - token.end > MAX_GAP_IN_FIGURE) end = i + 1;
    ends[i] = end;
  }
  return ends;
}

/** A number at `i`: number talk, or "a" / "half a(n)" before a length unit. */
function numberAt(t: readonly string[], i: number, end: number): NumberRead | null {
  const read = readNumber(t, i, end);
  if (read) return read;
  if ((t[i] === 'a' || t[i] === 'an') && isLengthPhrase(matchUnit(t, i + 1, end))) {
    return { value: '1', used: 1, point: false, fractional: false };
  }
  if (t[i] === 'half' && (t[i + 1] === 'a' || t[i + 1] === 'an') && isLengthPhrase(matchUnit(t, i + 2, end))) {
    return { value: '0.5', used: 2, point: false, fractional: true };
  }
  return null;
}

/**
 * "[and] Y tenth(s)" after a count of thou: Y as decimal text and where the words end. Y is one
 * digit when no unit was said ("five sixty four and two tenths"), any whole number after "thou".
 */
function tenthsAfter(
  t: readonly string[],
  k: number,
  end: number,
  form: 'bare' | 'after-thou',
): { tenths: string; to: number } | null {
  const at = t[k] === 'and' ? k + 1 : k;
  if (form === 'bare') {
    const digit = digitOf(t[at]);
    if (at === k || digit === undefined || at + 1 >= end || !TENTHS_WORDS.has(t[at + 1] ?? '')) return null;
    return { tenths: digit, to: at + 2 };
  }
  const count = readNumber(t, at, end);
  if (!count || !/^\d+$/.test(count.value)) return null;
  const after = at + count.used;
  if (after >= end || !TENTHS_WORDS.has(t[after] ?? '')) return null;
  return { tenths: count.value, to: after + 1 };
}

/** |value| + extra, keeping value's sign: "minus two thou and two tenths" is −2.2 thou. */
function extendMagnitude(value: string, extra: string): string {
  const x = parseDecimalText(value);
  const y = parseDecimalText(extra);
  if (!x || !y) return value;
  const scale = Math.max(x.scale, y.scale);
  const magnitude = (x.coefficient < 0n ? -x.coefficient : x.coefficient) * 10n ** BigInt(scale - x.scale);
  const sum = magnitude + y.coefficient * 10n ** BigInt(scale - y.scale);
  return decimalToText({ coefficient: x.coefficient < 0n ? -sum : sum, scale });
}

/** The unit a fraction word names with "of a(n) <unit>", e.g. "tenths of a thou" → tenths. */
function fractionOf(value: string, places: 1 | 2 | 3, of: AnyUnit): { value: string; unit: AnyUnit } {
  if (places === 1 && of === 'thou') return { value, unit: 'tenth' };
  if (places === 3 && of === 'in') return { value, unit: 'thou' };
  if (places === 3 && of === 'mm') return { value, unit: 'um' };
  return { value: shiftDecimal(value, places), unit: of };
}

function unitOfMeaning(meaning: UnitMeaning, opts: FindSpokenFiguresOptions): AnyUnit | null {
  if (meaning.kind === 'unit') return meaning.unit;
  if (meaning.kind === 'mil') return opts.mil ?? 'thou';
  return null;
}

/** What follows the number read at `i` (ending at `k`): a unit, tenths, a ratio, or nothing. */
function readAfterNumber(
  t: readonly string[],
  i: number,
  num: NumberRead,
  end: number,
  opts: FindSpokenFiguresOptions,
): Reading {
  const k = i + num.used;

  // "five hundred sixty four and two tenths": a count of thou and tenths of a thou.
  const tenths = isWhole(num.value) ? tenthsAfter(t, k, end, 'bare') : null;
  if (tenths) {
    const value = extendMagnitude(num.value, shiftDecimal(tenths.tenths, 1));
    const after = matchUnit(t, tenths.to, end);
    if (after) {
      // "fourteen and three tenths millimetres" is 14.3 mm; a unit we cannot settle gives nothing.
      const named = after.meaning.kind === 'fraction' ? null : unitOfMeaning(after.meaning, opts);
      const to = tenths.to + after.words.length;
      return named ? { kind: 'figure', to, value, unit: named } : { kind: 'nothing', to };
    }
    // Without a unit word, only a count of hundreds of thou is taken for thou and tenths (a
    // micrometer reading, "five sixty four and two tenths"); "forty two and six tenths" could as
    // well be cc or mm, and a wrong unit costs more than a missed figure.
    if (Number(num.value) < 100) return { kind: 'nothing', to: tenths.to };
    const note = 'tenths after a count: read as thou and tenths of a thou';
    return { kind: 'figure', to: tenths.to, value, unit: 'thou', note };
  }

  const phrase = matchUnit(t, k, end);
  if (!phrase) {
    if ((t[k] === 'to' || t[k] === 'too') && t[k + 1] === 'one' && k + 1 < end) {
      const named = t[k + 2] === 'compression' || t[k + 2] === 'ratio';
      if (num.fractional || named) return { kind: 'figure', to: k + 2 + (named ? 1 : 0), value: num.value, unit: '1' };
      return { kind: 'nothing', to: k + 2 };
    }
    return { kind: 'figure', to: k, value: num.value, unit: null };
  }

  const to = k + phrase.words.length;
  const one = num.value === '1' || num.value === '-1';
  if (phrase.singular && !one && !num.fractional) return { kind: 'nothing', to };
  if (phrase.needsPoint && !num.point) return { kind: 'nothing', to };

  const meaning = phrase.meaning;
  if (meaning.kind === 'fraction') {
    if (t[to] === 'of') {
      const article = t[to + 1] === 'a' || t[to + 1] === 'an' ? 1 : 0;
      const of = matchUnit(t, to + 1 + article, end);
      const ofUnit = of ? unitOfMeaning(of.meaning, opts) : null;
      if (!of || !ofUnit) return { kind: 'nothing', to };
      const read = fractionOf(num.value, meaning.places, ofUnit);
      return { kind: 'figure', to: to + 1 + article + of.words.length, ...read };
    }
    if (meaning.places === 1) return withTail(t, to, end, num.value, 'tenth');
    if (meaning.places === 3) return withTail(t, to, end, num.value, 'thou');
    return { kind: 'nothing', to };
  }

  if (meaning.kind === 'pounds') {
    if (t[k - 1] === 'hundred') {
      // "sixty five hundred pounds" is what the recognizer hears for "sixty five foot pounds".
      const before = readNumber(t, i, k - 1);
      const count = before && before.used === k - 1 - i && isWhole(before.value) ? Number(before.value) : NaN;
      if (torqueContext(opts) && count > 0 && count < 100) {
        return {
          kind: 'figure',
          to,
          value: before?.value ?? '',
          unit: 'lbf_ft',
          note: 'heard "hundred pounds", read as "foot pounds", which the recognizer mistakes for it',
        };
      }
      return { kind: 'nothing', to };
    }
    const unit = poundsUnit(opts);
    return unit ? { kind: 'figure', to, value: num.value, unit } : { kind: 'nothing', to };
  }

  const unit = unitOfMeaning(meaning, opts);
  if (!unit) return { kind: 'nothing', to };
  return withTail(t, to, end, num.value, unit);
}

/** After the unit: "X thou [and] Y tenths" = X + Y/10 thou; "X <unit> and a half" = X.5 <unit>. */
function withTail(t: readonly string[], to: number, end: number, value: string, unit: AnyUnit): Reading {
  const tenths = unit === 'thou' ? tenthsAfter(t, to, end, 'after-thou') : null;
  if (tenths) return { kind: 'figure', to: tenths.to, value: extendMagnitude(value, shiftDecimal(tenths.tenths, 1)), unit };
  if (andAHalfAt(t, to, end) && isWhole(value)) return { kind: 'figure', to: to + 3, value: extendMagnitude(value, '0.5'), unit };
  return { kind: 'figure', to, value, unit };
}

/** "plus or minus two thou", "plus minus", "give or take": a tolerance, not a reading. */
function isTolerance(t: readonly string[], i: number): boolean {
  const before = t[i - 1];
  if (t[i] === 'minus') return before === 'or' || before === 'plus';
  return before === 'take' && t[i - 2] === 'or';
}

type Span = Pick<SpokenFigureBase, 'start' | 'end' | 'confidence' | 'words'>;

/** Times, least confidence (within 0…1) and words of tokens [from, to). */
function figureSpan(tokens: readonly Token[], from: number, to: number): Span {
  const span = tokens.slice(from, to);
  const confidence = Math.min(...span.map((x) => (Number.isFinite(x.confidence) ? x.confidence : 0)));
  return {
    start: span[0]?.start ?? 0,
    end: span[span.length - 1]?.end ?? 0,
    confidence: Math.min(1, Math.max(0, confidence)),
    words: span.map((x) => x.word).join(' '),
  };
}

function collectCandidates(tokens: readonly Token[], opts: FindSpokenFiguresOptions): Candidate[] {
  const t = tokens.map((x) => x.word);
  const ends = phraseEnds(tokens);
  const candidates: Candidate[] = [];
  let i = 0;
  while (i < t.length) {
    const end = ends[i] ?? t.length;
    const num = numberAt(t, i, end);
    if (!num) {
      i += 1;
      continue;
    }
    const reading = readAfterNumber(t, i, num, end, opts);
    if (reading.kind === 'nothing' || isTolerance(t, i)) {
      i = Math.max(reading.to, i + 1);
      continue;
    }
    const feel = matchFeel(t, reading.to, end);
    const to = feel ? feel.to : reading.to;
    candidates.push({
      from: i,
      to,
      value: reading.value,
      unit: reading.unit,
      point: num.point,
      feel: feel?.feel ?? null,
      ...(reading.note ? { note: reading.note } : {}),
    });
    i = Math.max(to, i + 1);
  }
  return candidates;
}

/** The bracket two neighbouring blades make, or null. */
function pairBracket(
  a: Candidate,
  b: Candidate,
  tokens: readonly Token[],
  opts: FindSpokenFiguresOptions,
): SpokenBracket | null {
  if (!a.feel || !b.feel || a.feel === b.feel) return null;
  const between = tokens.slice(a.to, b.from);
  if (between.length > MAX_CONNECTORS || !between.every((x) => CONNECTORS.has(x.word))) return null;
  const aEnd = tokens[a.to - 1]?.end ?? 0;
  const bStart = tokens[b.from]?.start ?? 0;
  if (bStart - aEnd > MAX_GAP_IN_BRACKET) return null;
  if (a.unit && b.unit && a.unit !== b.unit) return null;
  const heard = a.unit ?? b.unit;
  const unit = heard ?? opts.defaultUnit ?? null;
  if (!unit) return null;
  const passes = a.feel === 'passes' ? a : b;
  const stops = a.feel === 'passes' ? b : a;
  if (!decimalLess(passes.value, stops.value)) return null;
  return {
    kind: 'bracket',
    passes: passes.value,
    stops: stops.value,
    unit,
    unitHeard: heard !== null,
    ...figureSpan(tokens, a.from, b.to),
    ...(heard ? {} : { note: 'no unit said: the default unit' }),
  };
}

/**
 * Finds the readings spoken in a stream of recognizer words: direct values ("fourteen point three
 * three one millimetres", "five hundred sixty four and two tenths") and feeler brackets ("three
 * thou slides, four thou won't go"), in the order heard. Ordinary talk ("cylinder one", "two
 * bolts") gives nothing; the rules are in this file's header.
 */
export function findSpokenFigures(words: readonly TimedWord[], opts: FindSpokenFiguresOptions = {}): SpokenFigure[] {
  const tokens = tokenize(words);
  const candidates = collectCandidates(tokens, opts);
  const figures: SpokenFigure[] = [];
  for (let c = 0; c < candidates.length; c += 1) {
    const a = candidates[c];
    if (!a) continue;
    const b = candidates[c + 1];
    const bracket = b ? pairBracket(a, b, tokens, opts) : null;
    if (bracket) {
      figures.push(bracket);
      c += 1;
      continue;
    }
    const unit = a.unit ?? (a.point ? (opts.defaultUnit ?? null) : null);
    if (!unit) continue;
    const heard = a.unit !== null;
    const note = a.note ?? (heard ? undefined : 'no unit said: the default unit');
    figures.push({
      kind: 'value',
      value: a.value,
      unit,
      feel: a.feel,
      unitHeard: heard,
      ...figureSpan(tokens, a.from, a.to),
      ...(note ? { note } : {}),
    });
  }
  return opts.units ? figures.filter((f) => opts.units?.includes(f.unit)) : figures;
}

// ---------------------------------------------------------------------------------------------
// Vocabulary

const EXTRA_WORDS = [
  'hundred',
  'thousand',
  'point',
  'and',
  'a',
  'an',
  'half',
  'minus',
  'negative',
  'plus',
  'or',
  'give',
  'take',
  'to',
  'of',
  'compression',
  'ratio',
];

/**
 * Every word this module understands (numbers, units, feel words, connectors), sorted, for a
 * recognizer's vocabulary or language model.
 */
export const TRADE_VOCABULARY: readonly string[] = Object.freeze(
  [
    ...new Set([
      ...Object.keys(DIGITS),
      ...Object.keys(TEENS),
      ...Object.keys(TENS),
      ...EXTRA_WORDS,
      ...UNIT_PHRASES.flatMap((p) => p.words),
      ...FEEL_PHRASES.flatMap((p) => p.words),
      ...BLADE_WORDS,
      ...CONNECTORS,
    ]),
  ].sort(),
);
