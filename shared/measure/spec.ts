/**
 * Verdicts: does a measured value conform to a spec, given its expanded uncertainty U?
 *
 * ISO 14253-1 (decision rules for verifying conformity) with the guard band w = U described in
 * ILAC-G8:09/2019 ("guarded acceptance" and "guarded rejection"):
 *   conforms          when min + U ≤ value ≤ max − U   (the whole interval value ± U is inside)
 *   does-not-conform  when value ≤ min − U or value ≥ max + U   (the whole interval is outside)
 *   undecided         otherwise.
 * Limits are inclusive. The conformance test is applied first, so with U = 0 a value exactly on
 * a limit conforms (the guarded rule then coincides with the simple one).
 * The simple rule (ILAC-G8 "simple acceptance", w = 0) compares the value alone: conforms when
 * min ≤ value ≤ max, else does-not-conform; never undecided.
 * All comparisons are exact, in integer picometres; U is held to the nearest picometre.
 */

/** Machine verdict codes. */
export const verdicts = ['conforms', 'does-not-conform', 'undecided'] as const;

/** A verdict code. */
export type Verdict = (typeof verdicts)[number];

/** Our words for the three ISO 14253-1 zones (DESIGN.md): never "pass/fail" alone. */
export const verdictWords: Readonly<Record<Verdict, string>> = {
  conforms: 'within spec',
  'does-not-conform': 'out of spec',
  undecided: 'too close to call',
};

/** The decision rules a spec can be judged by. */
export const decisionRules = ['guarded', 'simple'] as const;

/** A decision rule. */
export type DecisionRule = (typeof decisionRules)[number];

/** The rule used when none is chosen. */
export const DEFAULT_DECISION_RULE: DecisionRule = 'guarded';

/** The rule in words, to show beside every verdict. */
export const decisionRuleText: Readonly<Record<DecisionRule, string>> = {
  guarded:
    'Guarded rule (ISO 14253-1): within spec only when the whole coverage interval lies inside every limit; out of spec only when it lies wholly outside a limit; too close to call otherwise.',
  simple:
    'Simple rule (ILAC-G8:09/2019 simple acceptance): the measured value alone is compared with the limits; the uncertainty is reported but not used, so a value near a limit may be judged either way by another measurement.',
};

/** Limits of a band in picometres; either side may be open. */
export interface BandPm {
  readonly minPm?: bigint;
  readonly maxPm?: bigint;
}

/**
 * Where the decision changes, in picometres, for a band picture: values between acceptMin and
 * acceptMax conform; at or below rejectBelow, or at or above rejectAbove, they do not. For the
 * simple rule these coincide with the spec limits.
 */
export interface GuardedLimitsPm {
  readonly acceptMinPm?: bigint;
  readonly acceptMaxPm?: bigint;
  readonly rejectBelowPm?: bigint;
  readonly rejectAbovePm?: bigint;
}

/** The outcome of judging a value against a band. */
export interface Judgement {
  readonly verdict: Verdict;
  readonly words: string;
  readonly rule: DecisionRule;
  readonly ruleText: string;
  readonly limits: GuardedLimitsPm;
}

/** The acceptance and rejection limits of a band under a rule, given U in picometres. */
export function guardedLimits(band: BandPm, expandedPm: bigint, rule: DecisionRule): GuardedLimitsPm {
  const guard = rule === 'guarded' ? (expandedPm < 0n ? -expandedPm : expandedPm) : 0n;
  return {
    ...(band.minPm !== undefined && { acceptMinPm: band.minPm + guard, rejectBelowPm: band.minPm - guard }),
    ...(band.maxPm !== undefined && { acceptMaxPm: band.maxPm - guard, rejectAbovePm: band.maxPm + guard }),
  };
}

/**
 * Judges `valuePm` with expanded uncertainty `expandedPm` against `band` (at least one limit)
 * by `rule`. Exact; see the module comment for the zones.
 */
export function judge(valuePm: bigint, expandedPm: bigint, band: BandPm, rule: DecisionRule): Judgement {
  const limits = guardedLimits(band, expandedPm, rule);
  const aboveAccept = limits.acceptMinPm === undefined || valuePm >= limits.acceptMinPm;
  const belowAccept = limits.acceptMaxPm === undefined || valuePm <= limits.acceptMaxPm;
  let verdict: Verdict;
  if (aboveAccept && belowAccept) verdict = 'conforms';
  else if (rule === 'simple') verdict = 'does-not-conform';
  else if (
    (limits.rejectBelowPm !== undefined && valuePm <= limits.rejectBelowPm) ||
    (limits.rejectAbovePm !== undefined && valuePm >= limits.rejectAbovePm)
  ) {
    verdict = 'does-not-conform';
  } else verdict = 'undecided';
  return { verdict, words: verdictWords[verdict], rule, ruleText: decisionRuleText[rule], limits };
}

/** Which side of the band a reject (scrap) limit lies on. */
export type RejectSide = 'upper' | 'lower';

/** Our words for a value judged against a reject limit. */
export const rejectWords: Readonly<Record<Verdict, string>> = {
  conforms: 'clear of the reject limit',
  'does-not-conform': 'past the reject limit',
  undecided: 'too close to call against the reject limit',
};

/**
 * Judges a value against a reject limit (the size at which a part is scrapped, e.g. an oil pump
 * body worn past its limit) by the same rule: "conforms" means clear of it.
 */
export function judgeRejectLimit(
  valuePm: bigint,
  expandedPm: bigint,
  rejectPm: bigint,
  side: RejectSide,
  rule: DecisionRule,
): Judgement {
  const band: BandPm = side === 'upper' ? { maxPm: rejectPm } : { minPm: rejectPm };
  const judgement = judge(valuePm, expandedPm, band, rule);
  return { ...judgement, words: rejectWords[judgement.verdict] };
}
