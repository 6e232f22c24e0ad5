/**
 * A spec's limits and what a judged value is against them, in words, for every place a reader sees
 * a verdict (the story's claim panel, the inspection sheet and its verification page). One verdict
 * is stated against the spec band; the preferred band and the reject limit are secondary facts in
 * plain words ("Outside the preferred band 0.003–0.005 in."), never a second verdict. No zod here:
 * the verification page is a reader's first load.
 */
import { formatLimit, formatLimitSpan, limitDecimals } from '../measure/format';
import { convertedDecimalsIn, formatValue, withUnit } from '../measure/format-quantity';
import { convertNumber, type AnyUnit } from '../measure/quantities';
import type { Verdict } from '../measure/spec';
import { micrometresToPicometres, type LengthUnit } from '../measure/units';
import { decimalsOfNumber } from './quantity-figures';

/** A spec's limits in µm, as a clearance result carries them (`bandUmSchema`). */
export interface SpecLimitsUm {
  minUm: number | null;
  maxUm: number | null;
  preferredMinUm: number | null;
  preferredMaxUm: number | null;
  rejectUm: number | null;
}

/** The limits written out in one unit; null where the spec has none. */
export interface SpecLimitTexts {
  /** "0.0015–0.0040 in", "at most 0.0060 in". */
  band: string | null;
  /** "0.0020–0.0030 in". An open side is the band's own limit, as the engine judges it. */
  preferred: string | null;
  /** "0.0050 in". */
  reject: string | null;
}

const pm = (um: number | null) => (um === null ? null : micrometresToPicometres(um));

/**
 * The limits of a spec written in `writtenIn`, shown in `shownIn`: every limit at the places the spec
 * was written to, converted by NIST SP 811 B.7.2 (shared/measure/format.ts, `limitDecimals`).
 */
export function specLimitTexts(limits: SpecLimitsUm, writtenIn: LengthUnit, shownIn: LengthUnit = writtenIn): SpecLimitTexts {
  const min = pm(limits.minUm);
  const max = pm(limits.maxUm);
  const hasPreferred = limits.preferredMinUm !== null || limits.preferredMaxUm !== null;
  const preferredMin = hasPreferred ? (pm(limits.preferredMinUm) ?? min) : null;
  const preferredMax = hasPreferred ? (pm(limits.preferredMaxUm) ?? max) : null;
  const reject = pm(limits.rejectUm);
  const all = [min, max, preferredMin, preferredMax, reject].filter((p): p is bigint => p !== null);
  const decimals = limitDecimals(all, writtenIn, shownIn);
  return {
    band: min === null && max === null ? null : formatLimitSpan(min, max, shownIn, decimals),
    preferred: hasPreferred ? formatLimitSpan(preferredMin, preferredMax, shownIn, decimals) : null,
    reject: reject === null ? null : formatLimit(reject, shownIn, decimals),
  };
}

/** A spec's limits in a result's own unit, as a result of any quantity carries them (`bandInUnitSchema`). */
export interface SpecLimitsInUnit {
  min: number | null;
  max: number | null;
  preferredMin: number | null;
  preferredMax: number | null;
  reject: number | null;
}

/**
 * The limits of a spec of any quantity, given in `writtenIn` (the result's unit), shown in
 * `shownIn`: every limit at the places the finest of them needs, converted by NIST SP 811 B.7.2
 * (`convertedDecimalsIn`): "9.5–10.5" (a ratio), "at most 180 psi", "1241–1379 kPa".
 */
export function specLimitTextsIn(limits: SpecLimitsInUnit, writtenIn: AnyUnit, shownIn: AnyUnit = writtenIn): SpecLimitTexts {
  const hasPreferred = limits.preferredMin !== null || limits.preferredMax !== null;
  const preferredMin = hasPreferred ? (limits.preferredMin ?? limits.min) : null;
  const preferredMax = hasPreferred ? (limits.preferredMax ?? limits.max) : null;
  const all = [limits.min, limits.max, preferredMin, preferredMax, limits.reject].filter((v): v is number => v !== null);
  const written = Math.max(0, ...all.map(decimalsOfNumber));
  const decimals = convertedDecimalsIn(written, writtenIn, shownIn);
  const number = (v: number) => formatValue(writtenIn === shownIn ? v : convertNumber(v, writtenIn, shownIn), '1', decimals);
  const text = (v: number) => withUnit(number(v), shownIn);
  // "9.5–10.5", "1241–1379 kPa": the symbol once, after the span.
  const span = (min: number | null, max: number | null): string =>
    min !== null && max !== null ? withUnit(`${number(min)}–${number(max)}`, shownIn) : min !== null ? `at least ${text(min)}` : `at most ${text(max!)}`;
  return {
    band: limits.min === null && limits.max === null ? null : span(limits.min, limits.max),
    preferred: hasPreferred && (preferredMin !== null || preferredMax !== null) ? span(preferredMin, preferredMax) : null,
    reject: limits.reject === null ? null : text(limits.reject),
  };
}

/** Which secondary limit a fact is about. */
export type LimitKind = 'preferred' | 'reject';

const limitFactWords: Record<LimitKind, Record<Verdict, string>> = {
  preferred: {
    conforms: 'Inside the preferred band',
    'does-not-conform': 'Outside the preferred band',
    undecided: 'At the edge of the preferred band',
  },
  reject: {
    conforms: 'Clear of the reject limit',
    'does-not-conform': 'Past the reject limit',
    undecided: 'At the reject limit',
  },
};

/**
 * One secondary fact in plain words: "Outside the preferred band 0.003–0.005 in.", "Clear of the
 * reject limit 0.008 in."; "too close to call" reads as "at the edge of … (its uncertainty spans
 * the limit)". `limit` may be null where the figures are shown elsewhere.
 */
export function limitFact(kind: LimitKind, verdict: Verdict, limit: string | null): string {
  const words = `${limitFactWords[kind][verdict]}${limit ? ` ${limit}` : ''}`;
  return verdict === 'undecided' ? `${words} (its uncertainty spans the limit).` : `${words}.`;
}

/** The secondary facts of a judged value, preferred band first; empty when the spec has neither. */
export function limitFacts(judged: { preferredVerdict: Verdict | null; rejectVerdict: Verdict | null }, texts: SpecLimitTexts): string[] {
  const facts: string[] = [];
  if (judged.preferredVerdict) facts.push(limitFact('preferred', judged.preferredVerdict, texts.preferred));
  if (judged.rejectVerdict) facts.push(limitFact('reject', judged.rejectVerdict, texts.reject));
  return facts;
}
