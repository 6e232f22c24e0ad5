/**
 * The lengths a sentence states, the way builders write them: with digits and a unit the engine
 * reads ("0.0047 in", "4.7 thou", ".12 mm", `0.003"`), or in words ("three thou", "half a thou",
 * "a thou and a half", "two tenths", "twelve microns", "twenty-five microns").
 *
 * Every stated length carries the rounding it implies: half a step of its last digit either side
 * ("0.0047 in" is 0.00465–0.00475 in, "three thou" is 2.5–3.5 thou), or a quarter either side
 * when the words give halves ("a thou and a half" is 1.25–1.75 thou).
 */
import { unitAliases, parseLength } from '../measure/parse';
import { picometresPerUnit, type LengthUnit } from '../measure/units';

/** A length found in a sentence, with the interval its own rounding implies. */
export interface StatedLength {
  /** The words as written ("three thou", "0.0047 in"). */
  readonly text: string;
  /** Offset of `text` in the sentence. */
  readonly index: number;
  /** The unit it was stated in (a tenth of a millimetre is stated in mm). */
  readonly unit: LengthUnit;
  /** The stated value in picometres. */
  readonly pm: bigint;
  /** The step the statement is rounded to, in picometres; the interval is pm ± step / 2. */
  readonly stepPm: bigint;
}

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

// Longest spelling first, so "tenths of a thou" wins over "tenths" and "in." over "in".
const aliasPattern = Object.values(unitAliases)
  .flat()
  .sort((a, b) => b.length - a.length)
  .map((alias) => escapeRegExp(alias).replace(/ /g, '\\s+'))
  .join('|');

// A number not glued to a word or another number ("R4", "v1.2" are names, not lengths).
const DIGITS_WITH_UNIT = new RegExp(`(?<![\\p{L}\\p{N}.])((?:\\d+(?:\\.\\d*)?|\\.\\d+))\\s*(${aliasPattern})(?![\\p{L}\\p{N}])`, 'giu');

function digitLengths(text: string): StatedLength[] {
  const found: StatedLength[] = [];
  for (const match of text.matchAll(DIGITS_WITH_UNIT)) {
    const parsed = parseLength(`${match[1]} ${(match[2] ?? '').replace(/\s+/g, ' ')}`);
    if (!parsed.ok) continue;
    found.push({
      text: match[0],
      index: match.index,
      unit: parsed.length.unit,
      pm: parsed.length.pm,
      stepPm: parsed.length.lastPlacePm,
    });
  }
  return found;
}

const ones: Readonly<Record<string, number>> = {
  one: 1,
  two: 2,
  three: 3,
  four: 4,
  five: 5,
  six: 6,
  seven: 7,
  eight: 8,
  nine: 9,
};
const belowTwenty: Readonly<Record<string, number>> = {
  ...ones,
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
const tens: Readonly<Record<string, number>> = {
  twenty: 20,
  thirty: 30,
  forty: 40,
  fifty: 50,
  sixty: 60,
  seventy: 70,
  eighty: 80,
  ninety: 90,
};

/** Unit phrases in words, with the picometres in one of them. "in" alone is left out: "one in ten" is not a length. */
const wordUnits: readonly { words: readonly string[]; unit: LengthUnit; pm: bigint }[] = (() => {
  const list: { words: string[]; unit: LengthUnit; pm: bigint }[] = [];
  const add = (unit: LengthUnit, pm: bigint, ...phrases: string[]) => {
    for (const phrase of phrases) list.push({ words: phrase.split(' '), unit, pm });
  };
  const mmWords = ['mm', 'millimetre', 'millimeter'];
  for (const mm of mmWords) {
    add('mm', picometresPerUnit.mm / 10n, `tenth of a ${mm}`, `tenths of a ${mm}`);
    add('mm', picometresPerUnit.mm / 100n, `hundredth of a ${mm}`, `hundredths of a ${mm}`);
  }
  add('thou', picometresPerUnit.thou, 'thousandth of an inch', 'thousandths of an inch', 'thou', 'thous', 'mil', 'mils', 'thousandth', 'thousandths');
  add('tenth', picometresPerUnit.tenth, 'tenth of a thou', 'tenths of a thou', 'tenth', 'tenths');
  add('mm', picometresPerUnit.mm, 'mm', 'millimetre', 'millimetres', 'millimeter', 'millimeters');
  add('um', picometresPerUnit.um, 'micron', 'microns', 'um', 'µm', 'μm', 'micrometre', 'micrometres', 'micrometer', 'micrometers');
  add('in', picometresPerUnit.in, 'inch', 'inches');
  return list.sort((a, b) => b.words.length - a.words.length);
})();

interface Word {
  readonly text: string;
  readonly start: number;
  readonly end: number;
}

function words(text: string): Word[] {
  // "twenty-five" is two number words; other punctuation separates phrases.
  const spaced = text.replace(/(?<=\p{L})[-‐](?=\p{L})/gu, ' ');
  return [...spaced.matchAll(/\p{L}+|\S/gu)].map((m) => ({ text: m[0].toLowerCase(), start: m.index, end: m.index + m[0].length }));
}

function isAndAHalf(list: readonly Word[], at: number): boolean {
  return list[at]?.text === 'and' && list[at + 1]?.text === 'a' && list[at + 2]?.text === 'half';
}

/** A count in words at `at`, in halves (so "one and a half" is 3). */
function readCount(list: readonly Word[], at: number): { halves: number; next: number } | null {
  const word = list[at]?.text;
  if (word === undefined) return null;
  if (word === 'half' && (list[at + 1]?.text === 'a' || list[at + 1]?.text === 'an')) return { halves: 1, next: at + 2 };
  let count: number | undefined;
  let next = at + 1;
  if (word === 'a' || word === 'an') count = 1;
  else if (tens[word] !== undefined) {
    count = tens[word];
    const unit = ones[list[next]?.text ?? ''];
    if (unit !== undefined) {
      count += unit;
      next += 1;
    }
  } else count = belowTwenty[word];
  if (count === undefined) return null;
  let halves = count * 2;
  if (isAndAHalf(list, next)) {
    halves += 1;
    next += 3;
  }
  return { halves, next };
}

function readUnit(list: readonly Word[], at: number): { unit: LengthUnit; pm: bigint; next: number } | null {
  for (const candidate of wordUnits) {
    if (candidate.words.every((w, i) => list[at + i]?.text === w)) return { unit: candidate.unit, pm: candidate.pm, next: at + candidate.words.length };
  }
  return null;
}

function wordLengths(text: string): StatedLength[] {
  const list = words(text);
  const found: StatedLength[] = [];
  let at = 0;
  while (at < list.length) {
    const count = readCount(list, at);
    const unit = count ? readUnit(list, count.next) : null;
    if (!count || !unit) {
      at += 1;
      continue;
    }
    let { halves } = count;
    let next = unit.next;
    // "a thou and a half": the half comes after the unit.
    if (halves % 2 === 0 && isAndAHalf(list, next)) {
      halves += 1;
      next += 3;
    }
    const first = list[at];
    const last = list[next - 1];
    if (first && last) {
      found.push({
        text: text.slice(first.start, last.end),
        index: first.start,
        unit: unit.unit,
        // Every unit here is an even number of picometres, so halves divide exactly.
        pm: (BigInt(halves) * unit.pm) / 2n,
        stepPm: halves % 2 === 1 ? unit.pm / 2n : unit.pm,
      });
    }
    at = next;
  }
  return found;
}

/** Every length `text` states, in digits or in words, in the order written. */
export function findStatedLengths(text: string): StatedLength[] {
  const digits = digitLengths(text);
  // "3 tenths of a thou" is one length, not also "a thou".
  const inDigits = (w: StatedLength) => digits.some((d) => w.index < d.index + d.text.length && d.index < w.index + w.text.length);
  return [...digits, ...wordLengths(text).filter((w) => !inDigits(w))].sort((a, b) => a.index - b.index);
}
