import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { computeCalc } from '@shared/measure/calc';
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

describe('the whole calculator at an exact boundary', () => {
  it('is within spec at exactly min + U and too close to call a picometre lower', () => {
    const readings = { gap: { kind: 'direct', value: 0.0047, unit: 'in', resolution: 0.0001 } } as const;
    const terms = [{ reading: 'gap', sign: 1 }] as const;
    const bare = computeCalc({ readings, terms });
    const valuePm = Math.round(bare.value_um * 1e6);
    const expandedPm = Math.round(bare.expandedUncertainty_um * 1e6); // U is held to the picometre
    const minAt = (pm: number) => pm / 1e6; // µm with 6 places = whole picometres, exact
    const atBoundary = computeCalc({ readings, terms, spec: { min: minAt(valuePm - expandedPm), unit: 'um' } });
    const justInside = computeCalc({ readings, terms, spec: { min: minAt(valuePm - expandedPm + 1), unit: 'um' } });
    expect(atBoundary.verdict).toBe('conforms');
    expect(justInside.verdict).toBe('undecided');
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
  const bracketU = (passes: number, stops: number) =>
    computeCalc({ readings: { g: { kind: 'bracket', passes, stops, unit: 'in' } }, terms: [{ reading: 'g', sign: 1 }] });

  const judgedBracket = (passes: number, stops: number) => {
    const result = bracketU(passes, stops);
    return judgeSpec(BigInt(Math.round(result.value_um * 1e6)), BigInt(Math.round(result.expandedUncertainty_um * 1e6)), pumpSpec);
  };

  it('finds feeler blades in 0.001 in steps too coarse to prove a gap of 0.003–0.004 in', () => {
    // 0.0035 in ± 0.00058 in (U = 2 × 0.0005 in/√3, GUM 4.3.7): within U of the 0.003 in limit,
    // so neither the band nor the preferred band can be proved either way.
    const judged = judgedBracket(0.003, 0.004);
    expect(judged.band.verdict).toBe('undecided');
    expect(judged.preferred?.verdict).toBe('undecided');
    expect(judged.reject).toMatchObject({ verdict: 'conforms', side: 'upper', words: 'clear of the reject limit' });
  });

  it('proves a 0.004–0.005 in bracket within the band but cannot place it against the preferred band', () => {
    // 0.0045 in ± 0.00058 in: at least U inside 0.003–0.008; less than U past the preferred 0.004 in.
    const judged = judgedBracket(0.004, 0.005);
    expect(judged.band.verdict).toBe('conforms');
    expect(judged.preferred?.verdict).toBe('undecided');
    expect(judged.reject?.verdict).toBe('conforms');
  });

  it('finds a worn pump past its reject limit', () => {
    const judged = judgedBracket(0.009, 0.01);
    expect(judged.band.verdict).toBe('does-not-conform');
    expect(judged.reject?.verdict).toBe('does-not-conform');
    expect(judged.reject?.words).toBe('past the reject limit');
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
