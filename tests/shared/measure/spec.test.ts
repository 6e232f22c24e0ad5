import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import Fraction from 'fraction.js';
import { computeCalc, evaluateCalc, judgeInterval, parseCalcRequest } from '@shared/measure/calc';
import { decisionRuleText, guardedLimits, judge, verdictWords } from '@shared/measure/spec';
import { judgeSpec, specSchema } from '@shared/measure/spec.schema';
import { picometresPerUnit } from '@shared/measure/units';

// Decision zones per ISO 14253-1 with guard band w = U (ILAC-G8:09/2019 guarded acceptance and
// rejection). Limits inclusive; conformance tested first, so U = 0 makes guarded = simple.
const thou = picometresPerUnit.thou;
const band = { minPm: 3n * thou, maxPm: 5n * thou }; // 0.003–0.005 in
const U = 2_000_000n; // 2 µm

function verdictAt(valuePm: bigint, rule: 'guarded' | 'simple', expanded = U) {
  return judge(valuePm, expanded, band, rule).verdict;
}

describe('the guarded rule (ISO 14253-1, ILAC-G8 guard band = U)', () => {
  it.each([
    ['well inside', 4n * thou, 'conforms'],
    ['exactly min + U', band.minPm + U, 'conforms'],
    ['1 pm below min + U', band.minPm + U - 1n, 'undecided'],
    ['exactly on min', band.minPm, 'undecided'],
    ['1 pm above min − U', band.minPm - U + 1n, 'undecided'],
    ['exactly min − U', band.minPm - U, 'does-not-conform'],
    ['far below', 0n, 'does-not-conform'],
    ['exactly max − U', band.maxPm - U, 'conforms'],
    ['1 pm above max − U', band.maxPm - U + 1n, 'undecided'],
    ['exactly on max', band.maxPm, 'undecided'],
    ['1 pm below max + U', band.maxPm + U - 1n, 'undecided'],
    ['exactly max + U', band.maxPm + U, 'does-not-conform'],
    ['far above', 10n * thou, 'does-not-conform'],
  ] as const)('a value %s is %s', (_, value, expected) => {
    expect(verdictAt(value, 'guarded')).toBe(expected);
  });

  it('reports the guarded limits a band picture draws', () => {
    expect(guardedLimits(band, U, 'guarded')).toEqual({
      acceptMinPm: band.minPm + U,
      acceptMaxPm: band.maxPm - U,
      rejectBelowPm: band.minPm - U,
      rejectAbovePm: band.maxPm + U,
    });
  });

  it('can prove nothing conforms when U is wider than half the band', () => {
    const wide = band.maxPm - band.minPm; // U > half the band: the acceptance zone is empty
    fc.assert(
      fc.property(fc.bigInt({ min: -10n * thou, max: 20n * thou }), (value) => {
        expect(verdictAt(value, 'guarded', wide)).not.toBe('conforms');
      }),
    );
  });

  it('with U = 0 agrees with the simple rule everywhere, limits included', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: 0n, max: 8n * thou }), (value) => {
        expect(verdictAt(value, 'guarded', 0n)).toBe(verdictAt(value, 'simple', 0n));
      }),
    );
    expect(verdictAt(band.minPm, 'guarded', 0n)).toBe('conforms');
  });

  it('never contradicts the simple rule: guarded within ⇒ simple within, guarded out ⇒ simple out', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: -2n * thou, max: 8n * thou }), fc.bigInt({ min: 0n, max: 2n * thou }), (value, expanded) => {
        const guarded = verdictAt(value, 'guarded', expanded);
        const simple = verdictAt(value, 'simple', expanded);
        if (guarded === 'conforms') expect(simple).toBe('conforms');
        if (guarded === 'does-not-conform') expect(simple).toBe('does-not-conform');
      }),
    );
  });
});

describe('the simple rule (ILAC-G8 simple acceptance)', () => {
  it.each([
    ['exactly on min', band.minPm, 'conforms'],
    ['1 pm below min', band.minPm - 1n, 'does-not-conform'],
    ['exactly on max', band.maxPm, 'conforms'],
    ['1 pm above max', band.maxPm + 1n, 'does-not-conform'],
    ['within U of a limit', band.maxPm - 1n, 'conforms'],
  ] as const)('a value %s is %s', (_, value, expected) => {
    expect(verdictAt(value, 'simple')).toBe(expected);
  });

  it('is never undecided', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: -10n * thou, max: 20n * thou }), fc.bigInt({ min: 0n, max: 5n * thou }), (value, expanded) => {
        expect(verdictAt(value, 'simple', expanded)).not.toBe('undecided');
      }),
    );
  });
});

describe('one-sided specs', () => {
  it('judges a maximum-only spec on its one side', () => {
    const maxOnly = { maxPm: 6n * thou };
    expect(judge(1n, U, maxOnly, 'guarded').verdict).toBe('conforms');
    expect(judge(6n * thou - U, U, maxOnly, 'guarded').verdict).toBe('conforms');
    expect(judge(6n * thou, U, maxOnly, 'guarded').verdict).toBe('undecided');
    expect(judge(6n * thou + U, U, maxOnly, 'guarded').verdict).toBe('does-not-conform');
    expect(guardedLimits(maxOnly, U, 'guarded')).toEqual({ acceptMaxPm: 6n * thou - U, rejectAbovePm: 6n * thou + U });
  });

  it('judges a minimum-only spec on its one side', () => {
    const minOnly = { minPm: 2n * thou };
    expect(judge(100n * thou, U, minOnly, 'guarded').verdict).toBe('conforms');
    expect(judge(2n * thou - U, U, minOnly, 'guarded').verdict).toBe('does-not-conform');
    expect(judge(2n * thou, U, minOnly, 'simple').verdict).toBe('conforms');
  });
});

describe('words and rule text', () => {
  it('uses our words for the three zones and always has the rule text to show', () => {
    // DESIGN.md: "within spec", "out of spec", "too close to call".
    expect(verdictWords).toEqual({ conforms: 'within spec', 'does-not-conform': 'out of spec', undecided: 'too close to call' });
    const judgement = judge(4n * thou, U, band, 'guarded');
    expect(judgement.words).toBe('within spec');
    expect(judgement.ruleText).toBe(decisionRuleText.guarded);
    expect(decisionRuleText.guarded).toMatch(/ISO 14253-1/);
    expect(decisionRuleText.simple).toMatch(/simple/i);
  });
});

describe('judging a coverage interval (the calculator\'s guarded rule)', () => {
  // ISO 14253-1 guarded rule on the coverage interval itself: within spec when the whole
  // interval lies inside every limit, out of spec when it lies wholly outside one; touching a
  // limit counts as inside (low = min, high = max) or as outside (high = min, low = max).
  const F = (x: string) => new Fraction(x);
  const band35 = { min: F('3'), max: F('5') };
  const verdictOf = (value: string, low: string, high: string, rule: 'guarded' | 'simple' = 'guarded') =>
    judgeInterval(F(value), F(low), F(high), band35, rule).verdict;

  it.each([
    ['well inside', '4', '3.8', '4.2', 'conforms'],
    ['touching min from inside', '3.2', '3', '3.5', 'conforms'],
    ['touching max from inside', '4.8', '4.5', '5', 'conforms'],
    ['straddling min', '3.1', '2.9', '3.3', 'undecided'],
    ['straddling max', '4.9', '4.7', '5.1', 'undecided'],
    ['touching min from outside', '2.8', '2.5', '3', 'does-not-conform'],
    ['touching max from outside', '5.2', '5', '5.4', 'does-not-conform'],
    ['wider than the band', '4', '2.5', '5.5', 'undecided'],
  ] as const)('an interval %s is %s', (_, value, low, high, expected) => {
    expect(verdictOf(value, low, high)).toBe(expected);
  });

  it('uses each end of an asymmetric interval, not a symmetric ± U', () => {
    // value 4, interval [3.9, 4.3] against max 4.25: value + (value − low) = 4.1 ≤ 4.25, but the
    // interval's high end 4.3 is past the limit, so it cannot be shown within spec.
    const judged = judgeInterval(F('4'), F('3.9'), F('4.3'), { max: F('4.25') }, 'guarded');
    expect(judged.verdict).toBe('undecided');
    // Where the decision changes for this interval: acceptMax = max − (high − value) = 3.95,
    // rejectAbove = max + (value − low) = 4.35.
    expect(judged.limits.acceptMax).toBeCloseTo(3.95, 12);
    expect(judged.limits.rejectAbove).toBeCloseTo(4.35, 12);
    expect(judged.words).toBe('too close to call');
  });

  it('compares the value alone under the simple rule (ILAC-G8 simple acceptance)', () => {
    expect(verdictOf('3', '2.5', '3.5', 'simple')).toBe('conforms');
    expect(verdictOf('5.1', '4.9', '5.3', 'simple')).toBe('does-not-conform');
  });
});

describe('the whole calculator at an exact boundary', () => {
  // k = 2 chosen, so the interval is y ± 2u_c (GUM 6.2.1) with no Monte Carlo run and does not move
  // with the spec; the result in µm so that a spec limit to the picometre (6 places) is exact.
  const readings = { gap: { kind: 'direct', value: 0.0047, unit: 'in', resolution: 0.0001 } } as const;
  const terms = [{ reading: 'gap', sign: 1 }] as const;
  const base = { readings, terms, coverageFactor: 2, resultUnit: 'um' } as const;
  const [low, high] = computeCalc(base).coverageInterval;
  /** The interval end as an exact fraction of its shortest decimal, rounded to a picometre (µm, 6 places). */
  const pmBelow = (x: number) => new Fraction(String(x)).floor(6);
  const pmAbove = (x: number) => new Fraction(String(x)).ceil(6);
  const onePm = new Fraction(1, 1_000_000);
  const text = (f: Fraction) => f.toString(6);

  it('is within spec with min at or below the interval\'s low end and too close to call a picometre higher', () => {
    expect(computeCalc({ ...base, spec: { min: text(pmBelow(low)), unit: 'um' } }).verdict).toBe('conforms');
    expect(computeCalc({ ...base, spec: { min: text(pmBelow(low).add(onePm)), unit: 'um' } }).verdict).toBe('undecided');
  });

  it('is within spec with max at or above the interval\'s high end and too close to call a picometre lower', () => {
    expect(computeCalc({ ...base, spec: { max: text(pmAbove(high)), unit: 'um' } }).verdict).toBe('conforms');
    expect(computeCalc({ ...base, spec: { max: text(pmAbove(high).sub(onePm)), unit: 'um' } }).verdict).toBe('undecided');
  });

  it('is out of spec with min at or above the interval\'s high end and too close to call a picometre lower', () => {
    expect(computeCalc({ ...base, spec: { min: text(pmAbove(high)), unit: 'um' } }).verdict).toBe('does-not-conform');
    expect(computeCalc({ ...base, spec: { min: text(pmAbove(high).sub(onePm)), unit: 'um' } }).verdict).toBe('undecided');
  });
});

describe('a full spec with a preferred band and a reject limit', () => {
  // Rotor-type oil pump, outer rotor to body: 0.003–0.004 in ideal, 0.008–0.010 in scrap —
  // common practice (no published source). Modelled as band 0.003–0.008 in, preferred
  // 0.003–0.004 in, reject 0.008 in (the start of the scrap range).
  const pumpSpec = specSchema.parse({
    unit: 'in',
    min: 0.003,
    max: 0.008,
    preferred: { min: 0.003, max: 0.004 },
    reject: 0.008,
    source: { kind: 'common-practice', text: 'Rotor-type oil pump outer rotor to body clearance (no published source)' },
    version: 1,
  });
  const calcSpec = { unit: 'in', min: 0.003, max: 0.008, preferred: { min: 0.003, max: 0.004 }, reject: 0.008 } as const;

  /** The calculator's verdicts on a bracket, and the library judge's with the same value and U. */
  const judgedBracket = (passes: number | string, stops: number | string) => {
    const readings = { g: { kind: 'bracket', passes, stops, unit: 'in' } } as const;
    const terms = [{ reading: 'g', sign: 1 }] as const;
    const evaluation = evaluateCalc(parseCalcRequest({ readings, terms, spec: calcSpec }));
    const result = computeCalc({ readings, terms });
    const library = judgeSpec(BigInt(Math.round(result.value_um! * 1e6)), BigInt(Math.round(result.expandedUncertainty_um! * 1e6)), pumpSpec);
    return { evaluation, library };
  };

  it('proves a 0.003–0.004 in bracket within the preferred 0.003–0.004 in band: the gap lies between the blades', () => {
    // 95 % interval 0.0035 in ± 0.95 × 0.0005 in = [0.003025, 0.003975] in (rectangular between
    // the blades, GUM 4.3.7, G.1.3; JCGM 101:2008 6.4.2): inside the band and the preferred band.
    const { evaluation, library } = judgedBracket(0.003, 0.004);
    expect(evaluation.judgement?.verdict).toBe('conforms');
    expect(evaluation.preferredJudgement?.verdict).toBe('conforms');
    expect(evaluation.rejectJudgement).toMatchObject({ verdict: 'conforms', side: 'upper', words: 'clear of the reject limit' });
    // The library judge, with U the larger side of the same interval, agrees.
    expect([library.band.verdict, library.preferred?.verdict, library.reject?.verdict]).toEqual(['conforms', 'conforms', 'conforms']);
  });

  it('proves a 0.004–0.005 in bracket within the band and outside the preferred band', () => {
    // [0.004025, 0.004975] in: inside 0.003–0.008; wholly above the preferred 0.004 in (the 0.004 in
    // blade entered), so outside it by the guarded rule (ISO 14253-1).
    const { evaluation, library } = judgedBracket(0.004, 0.005);
    expect(evaluation.judgement?.verdict).toBe('conforms');
    expect(evaluation.preferredJudgement?.verdict).toBe('does-not-conform');
    expect(evaluation.rejectJudgement?.verdict).toBe('conforms');
    expect([library.band.verdict, library.preferred?.verdict, library.reject?.verdict]).toEqual(['conforms', 'does-not-conform', 'conforms']);
  });

  it('cannot place a bracket whose blades straddle the preferred limit', () => {
    // 0.0035 / 0.0045 in blades: 0.004 in ± 0.000475 in = [0.003525, 0.004475] in straddles the
    // preferred 0.004 in, so too close to call against it; inside the band.
    const { evaluation } = judgedBracket('0.0035', '0.0045');
    expect(evaluation.judgement?.verdict).toBe('conforms');
    expect(evaluation.preferredJudgement?.verdict).toBe('undecided');
  });

  it('finds a worn pump past its reject limit', () => {
    // [0.009025, 0.009975] in lies wholly above 0.008 in.
    const { evaluation, library } = judgedBracket(0.009, 0.01);
    expect(evaluation.judgement?.verdict).toBe('does-not-conform');
    expect(evaluation.rejectJudgement?.verdict).toBe('does-not-conform');
    expect(evaluation.rejectJudgement?.words).toBe('past the reject limit');
    expect(library.band.verdict).toBe('does-not-conform');
    expect(library.reject?.verdict).toBe('does-not-conform');
  });

  it('refuses a spec whose preferred band leaves the limits, whose reject lies inside, or with no source', () => {
    const base = { unit: 'in', min: 0.003, max: 0.008, source: { kind: 'manual', text: 'Workshop manual, section 2' }, version: 1 };
    const paths = (input: unknown) => specSchema.safeParse(input).error?.issues.map((i) => i.path.join('.'));
    expect(paths({ ...base, preferred: { min: 0.002, max: 0.004 } })).toContain('preferred');
    expect(paths({ ...base, reject: 0.005 })).toContain('reject');
    expect(paths({ ...base, source: undefined })).toContain('source');
    expect(paths({ ...base, source: { kind: 'blog', text: 'somewhere' } })).toContain('source.kind');
    expect(paths({ ...base, version: 0 })).toContain('version');
    expect(paths({ ...base, min: 0.009 })).toContain('min');
    expect(specSchema.safeParse(base).success).toBe(true);
  });
});
