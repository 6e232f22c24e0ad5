/**
 * Properties of the engine (`computeCalc`) over random valid requests: direct, bracket and
 * repeated readings in mixed length units, an optional shared instrument, random signs, random
 * specs placed around the result, either decision rule and any way of asking for coverage.
 *
 * Reference values are exact: every figure is a decimal string, held here as a fraction of
 * picometres (1 in = 25.4 mm exactly, NIST SP 811 B.8), and spec limits lie on a 254 pm grid
 * (10⁻⁸ in), which every length unit writes exactly.
 */
import fc from 'fast-check';
import Fraction from 'fraction.js';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { computeCalc } from '@shared/measure/calc';
import { calcResponseSchema, type CalcRequestInput, type CalcResponse } from '@shared/measure/calc.schema';

const units = ['in', 'thou', 'tenth', 'mm', 'um'] as const;
type LengthUnit = (typeof units)[number];

/** Picometres per unit, exact. */
const PM: Record<LengthUnit, bigint> = { in: 25_400_000_000n, thou: 25_400_000n, tenth: 2_540_000n, mm: 1_000_000_000n, um: 1_000_000n };
/** Decimal places a length figure may have in each unit (a whole number of picometres). */
const MAX_DECIMALS: Record<LengthUnit, number> = { in: 8, thou: 5, tenth: 4, mm: 9, um: 6 };
/** How readings are typed in each unit: decimal places and the largest size. */
const TYPED: Record<LengthUnit, { decimals: [number, number]; max: number }> = {
  in: { decimals: [2, 5], max: 3 },
  thou: { decimals: [0, 2], max: 3000 },
  tenth: { decimals: [0, 1], max: 30000 },
  mm: { decimals: [1, 4], max: 75 },
  um: { decimals: [0, 2], max: 75000 },
};
/** The spec grid: 10⁻⁸ in. */
const GRID_PM = 254n;

/** The decimal text of n·10⁻ᵈ, trailing zeros kept. */
function decimalText(n: bigint, d: number): string {
  const negative = n < 0n;
  const digits = (negative ? -n : n).toString().padStart(d + 1, '0');
  const text = d > 0 ? `${digits.slice(0, -d)}.${digits.slice(-d)}` : digits;
  return negative ? `-${text}` : text;
}

/** A length of `pm` picometres (a multiple of 254) written in `unit`. */
function lengthText(pm: bigint, unit: LengthUnit): string {
  const d = MAX_DECIMALS[unit];
  const scaled = pm * 10n ** BigInt(d);
  if (scaled % PM[unit] !== 0n) throw new Error(`${pm} pm is not a whole number of 10^-${d} ${unit}`);
  return decimalText(scaled / PM[unit], d);
}

const pmOf = (figure: string, unit: LengthUnit) => new Fraction(figure).mul(PM[unit]);

// --------------------------------------------------------------------------------------------
// Random requests
// --------------------------------------------------------------------------------------------

interface ReadingCase {
  reading: CalcRequestInput['readings'][string];
  /** The reading's estimate in picometres, exact. */
  pm: Fraction;
}

function figureArb(unit: LengthUnit) {
  const { decimals, max } = TYPED[unit];
  return fc.integer({ min: decimals[0], max: decimals[1] }).chain((d) =>
    fc.record({
      d: fc.constant(d),
      n: fc.integer({ min: 10, max: max * 10 ** d }),
    }),
  );
}

function readingArb(hasInstrument: boolean): fc.Arbitrary<ReadingCase> {
  const instrumentArb = hasInstrument ? fc.option(fc.constant('mic'), { nil: undefined }) : fc.constant(undefined);
  return fc.constantFrom(...units).chain((unit) =>
    fc.oneof(
      // A direct reading, its resolution the last place typed or a coarser step.
      fc.record({ f: figureArb(unit), step: fc.constantFrom(null, 1, 2, 5), instrument: instrumentArb }).map(({ f, step, instrument }): ReadingCase => {
        const value = decimalText(BigInt(f.n), f.d);
        return {
          reading: {
            kind: 'direct',
            value,
            unit,
            ...(step !== null && { resolution: decimalText(BigInt(step), f.d) }),
            ...(instrument && { instrument }),
          },
          pm: pmOf(value, unit),
        };
      }),
      // Feeler blades: the thickest that enters and the thinnest that stops.
      fc.record({ f: figureArb(unit), gap: fc.integer({ min: 1, max: 5 }), instrument: instrumentArb }).map(({ f, gap, instrument }): ReadingCase => {
        const passes = decimalText(BigInt(f.n), f.d);
        const stops = decimalText(BigInt(f.n + gap), f.d);
        return {
          reading: { kind: 'bracket', passes, stops, unit, ...(instrument && { instrument }) },
          pm: pmOf(passes, unit).add(pmOf(stops, unit)).div(2),
        };
      }),
      // Repeated readings: two to eight (two to four rarely: their Monte Carlo runs are the longest).
      fc
        .record({
          f: figureArb(unit),
          count: fc.oneof({ arbitrary: fc.constantFrom(2, 3, 4), weight: 1 }, { arbitrary: fc.integer({ min: 5, max: 8 }), weight: 4 }),
          instrument: instrumentArb,
        })
        .chain(({ f, count, instrument }) =>
          fc.array(fc.integer({ min: -6, max: 6 }), { minLength: count, maxLength: count }).map((deltas): ReadingCase => {
            const values = deltas.map((delta) => decimalText(BigInt(f.n + delta), f.d));
            const sum = values.reduce((acc, v) => acc.add(pmOf(v, unit)), new Fraction(0));
            return {
              reading: { kind: 'repeated', values, unit, ...(instrument && { instrument }) },
              pm: sum.div(values.length),
            };
          }),
        ),
    ),
  );
}

const instrumentArb = fc.oneof(
  fc.constant(undefined),
  fc.record({
    calibration: fc.record({
      expandedUncertainty: fc.constantFrom('0.0001', '0.0002', '0.0005'),
      coverageFactor: fc.constantFrom(1, 2, 2.5, 3),
      unit: fc.constant('in' as const),
    }),
  }),
  fc.record({ calibration: fc.record({ expandedUncertainty: fc.constantFrom('0.002', '0.004'), coverageFactor: fc.constant(2), unit: fc.constant('mm' as const) }) }),
  fc.record({ maxPermissibleError: fc.record({ value: fc.constantFrom('1', '2', '4'), unit: fc.constant('um' as const) }) }),
);

const coverageArb = fc.constantFrom<Partial<CalcRequestInput>>({}, { coverageProbability: 0.9 }, { coverageProbability: 0.95 }, { coverageProbability: 0.99 }, { coverageFactor: 2 }, { coverageFactor: 3 });

interface SpecCase {
  sides: 'both' | 'min' | 'max';
  /** Where the limits go from the value, in hundredths of 3·u_c. */
  from: number;
  width: number;
  unit: LengthUnit;
  rule: 'guarded' | 'simple';
}

const specArb: fc.Arbitrary<SpecCase> = fc.record({
  sides: fc.constantFrom('both' as const, 'both' as const, 'min' as const, 'max' as const),
  from: fc.oneof(fc.integer({ min: -400, max: 400 }), fc.constantFrom(-100, 0, 100)),
  width: fc.oneof(fc.integer({ min: 0, max: 600 }), fc.constant(200)),
  unit: fc.constantFrom(...units),
  rule: fc.constantFrom('guarded' as const, 'guarded' as const, 'simple' as const),
});

interface Case {
  readings: ReadingCase[];
  signs: (1 | -1)[];
  instrument: NonNullable<CalcRequestInput['instruments']>[string] | undefined;
  resultUnit: LengthUnit | undefined;
  coverage: Partial<CalcRequestInput>;
  spec: SpecCase;
}

const caseArb: fc.Arbitrary<Case> = instrumentArb.chain((instrument) =>
  fc.record({
    readings: fc.array(readingArb(instrument !== undefined), { minLength: 1, maxLength: 3 }),
    signs: fc.array(fc.constantFrom<1 | -1>(1, -1), { minLength: 3, maxLength: 3 }),
    instrument: fc.constant(instrument),
    resultUnit: fc.option(fc.constantFrom(...units), { nil: undefined }),
    coverage: coverageArb,
    spec: specArb,
  }),
);

function requestOf(c: Case, overrides: { resultUnit?: LengthUnit | undefined } = {}): CalcRequestInput {
  const resultUnit = 'resultUnit' in overrides ? overrides.resultUnit : c.resultUnit;
  return {
    readings: Object.fromEntries(c.readings.map((r, i) => [`r${i}`, r.reading])),
    ...(c.instrument && { instruments: { mic: c.instrument } }),
    terms: c.readings.map((_, i) => ({ reading: `r${i}`, sign: c.signs[i]! })),
    ...(resultUnit && { resultUnit }),
    ...c.coverage,
  };
}

/** The exact result in picometres: the signed sum of the estimates. */
const exactPm = (c: Case) => c.readings.reduce((acc, r, i) => (c.signs[i] === 1 ? acc.add(r.pm) : acc.sub(r.pm)), new Fraction(0));

const pmPerUnit = (unit: string) => Number(PM[unit as LengthUnit]);

interface Limits {
  minPm?: bigint;
  maxPm?: bigint;
}

/**
 * Limits placed around a request's result, on the 254 pm grid, in hundredths of 3·u_c from the
 * value. The scale comes from a quick GUM run with k = 3 (no Monte Carlo): where the limits fall
 * against the real interval is what the properties then check.
 */
function limitsAround(request: CalcRequestInput, spec: SpecCase): Limits {
  const quick: CalcRequestInput = { ...request, coverageFactor: 3 };
  delete quick.coverageProbability;
  delete quick.spec;
  const baseline = run(quick);
  const per = pmPerUnit(baseline.unit);
  const value = baseline.value * per;
  const U = baseline.expandedUncertainty * per;
  const snap = (pm: number) => BigInt(Math.round(pm / 254)) * GRID_PM;
  const min = snap(value + (spec.from / 100) * U);
  const max = snap(value + ((spec.from + spec.width) / 100) * U);
  return {
    ...(spec.sides !== 'max' && { minPm: min }),
    ...(spec.sides !== 'min' && { maxPm: max }),
  };
}

function specOf(limits: Limits, unit: LengthUnit, rule: SpecCase['rule']): NonNullable<CalcRequestInput['spec']> {
  return {
    ...(limits.minPm !== undefined && { min: lengthText(limits.minPm, unit) }),
    ...(limits.maxPm !== undefined && { max: lengthText(limits.maxPm, unit) }),
    unit,
    ...(rule === 'simple' && { rule }),
  };
}

/** Runs a request and checks the response against the published schema. */
function run(request: CalcRequestInput): CalcResponse {
  const response = computeCalc(request);
  const parsed = calcResponseSchema.safeParse(response);
  if (!parsed.success) throw new Error(`response does not match calcResponseSchema: ${parsed.error.message}`);
  return response;
}

/** A judged case: the baseline places the limits, the judged response is checked. */
function judge(c: Case) {
  const request = requestOf(c);
  const limits = limitsAround(request, c.spec);
  const judged = run({ ...request, spec: specOf(limits, c.spec.unit, c.spec.rule) });
  return { request, limits, judged };
}

const NUM_RUNS = Number(process.env.ENGINE_PROPERTY_RUNS ?? 60);

// --------------------------------------------------------------------------------------------

describe('the coverage interval and its figures', () => {
  it('U ≥ 0, low ≤ value ≤ high, U the larger side, k·u = U, the value exact', () => {
    fc.assert(
      fc.property(caseArb, (c) => {
        const r = run(requestOf(c));
        const [low, high] = r.coverageInterval;
        const scale = Math.max(1, Math.abs(r.value), Math.abs(low), Math.abs(high));
        const eps = 1e-12 * scale;
        expect(r.expandedUncertainty).toBeGreaterThanOrEqual(0);
        expect(r.standardUncertainty).toBeGreaterThan(0);
        expect(low).toBeLessThanOrEqual(r.value + eps);
        expect(r.value).toBeLessThanOrEqual(high + eps);
        expect(Math.abs(r.expandedUncertainty - Math.max(r.value - low, high - r.value))).toBeLessThanOrEqual(eps);
        expect(Math.abs(r.coverageFactor * r.standardUncertainty - r.expandedUncertainty)).toBeLessThanOrEqual(1e-12 * r.expandedUncertainty + eps);
        if (c.coverage.coverageFactor !== undefined) {
          expect(r.method).toBe('gum');
          expect(r.coverageFactor).toBeCloseTo(c.coverage.coverageFactor, 9);
        }
        // The value is exact: the signed sum of the estimates, in the result's unit.
        const expected = exactPm(c).div(PM[r.unit as LengthUnit]).valueOf();
        expect(Math.abs(r.value - expected)).toBeLessThanOrEqual(1e-15 * Math.max(1, Math.abs(expected)));
        expect(r.probabilityOfConformance).toBeNull();
        expect(r.verdict).toBeNull();
      }),
      { numRuns: Math.max(30, Math.round(NUM_RUNS / 2)) },
    );
  });
});

describe('verdicts', () => {
  it('guarded: "conforms" only when the whole interval is inside, "does not conform" only when wholly outside', () => {
    let seen = { conforms: 0, 'does-not-conform': 0, undecided: 0 };
    fc.assert(
      fc.property(
        caseArb.map((c) => ({ ...c, spec: { ...c.spec, rule: 'guarded' as const } })),
        (c) => {
          const { limits, judged } = judge(c);
          const per = pmPerUnit(judged.unit);
          const lowPm = judged.coverageInterval[0] * per;
          const highPm = judged.coverageInterval[1] * per;
          const min = limits.minPm === undefined ? undefined : Number(limits.minPm);
          const max = limits.maxPm === undefined ? undefined : Number(limits.maxPm);
          const eps = 1e-6 + 1e-12 * Math.max(Math.abs(lowPm), Math.abs(highPm));
          const inside = (min === undefined || lowPm >= min - eps) && (max === undefined || highPm <= max + eps);
          const outside = (min !== undefined && highPm <= min + eps) || (max !== undefined && lowPm >= max - eps);
          const clearlyInside = (min === undefined || lowPm > min + eps) && (max === undefined || highPm < max - eps);
          const clearlyOutside = (min !== undefined && highPm < min - eps) || (max !== undefined && lowPm > max + eps);
          const verdict = judged.verdict!;
          seen = { ...seen, [verdict]: seen[verdict] + 1 };
          const context = `${verdict}: interval [${lowPm}, ${highPm}] pm, limits ${min}…${max} pm, ${judged.method}`;
          if (verdict === 'conforms') expect(inside, context).toBe(true);
          if (verdict === 'does-not-conform') expect(outside, context).toBe(true);
          if (clearlyInside) expect(verdict, context).toBe('conforms');
          if (clearlyOutside) expect(verdict, context).toBe('does-not-conform');
          if (!inside && !outside) expect(verdict, context).toBe('undecided');
        },
      ),
      { numRuns: NUM_RUNS },
    );
    // The generator reaches every verdict (not a property of the engine; a check on the test).
    expect(seen.conforms).toBeGreaterThan(0);
    expect(seen['does-not-conform']).toBeGreaterThan(0);
    expect(seen.undecided).toBeGreaterThan(0);
  });

  it('the probability of conformance tells the same story as the verdict (JCGM 106 7.2)', () => {
    // An interval of coverage probability p inside the band leaves at least p of the result's
    // distribution inside; one wholly beyond a limit leaves at most (1 − p)/2 (the tail on the
    // band's side; 1 − p for a chosen k). Both hold when p and p_c come from the same distribution.
    fc.assert(
      fc.property(
        caseArb.map((c) => ({ ...c, spec: { ...c.spec, rule: 'guarded' as const } })),
        (c) => {
          const { judged } = judge(c);
          const pc = judged.probabilityOfConformance!;
          const p = judged.coverageProbability;
          const slack = judged.trials !== null ? 1e-5 : 1e-9;
          const context = `${judged.verdict}, p = ${p}, p_c = ${pc}, ${judged.method}, trials ${judged.trials}, interval ${judged.coverageInterval}`;
          expect(pc).toBeGreaterThanOrEqual(0);
          expect(pc).toBeLessThanOrEqual(1);
          if (judged.verdict === 'conforms') expect(pc, context).toBeGreaterThanOrEqual(p - slack);
          // A probabilistically symmetric interval leaves (1 − p)/2 in each tail; y ± k·u_c with a chosen k
          // need not split its outside mass evenly, so there only the whole 1 − p bounds p_c.
          const outside = 'coverageFactor' in c.coverage && c.coverage.coverageFactor !== undefined ? 1 - p : (1 - p) / 2;
          if (judged.verdict === 'does-not-conform') expect(pc, context).toBeLessThanOrEqual(outside + slack);
        },
      ),
      { numRuns: NUM_RUNS },
    );
  });

  it('simple: the verdict depends on the value alone (limits inclusive)', () => {
    fc.assert(
      fc.property(
        caseArb.map((c) => ({ ...c, spec: { ...c.spec, rule: 'simple' as const } })),
        (c) => {
          const { request, limits, judged } = judge(c);
          const value = exactPm(c);
          const within = (limits.minPm === undefined || value.gte(new Fraction(limits.minPm))) && (limits.maxPm === undefined || value.lte(new Fraction(limits.maxPm)));
          expect(judged.verdict).toBe(within ? 'conforms' : 'does-not-conform');
          // However the uncertainty is asked for: the verdict stays.
          const wider = { ...request, coverageFactor: 4, spec: specOf(limits, c.spec.unit, 'simple') };
          delete wider.coverageProbability;
          expect(run(wider).verdict).toBe(judged.verdict);
        },
      ),
      { numRuns: Math.max(20, Math.round(NUM_RUNS / 2.5)) },
    );
  });
});

describe('reproducibility', () => {
  let fresh: typeof import('@shared/measure/calc');
  beforeAll(async () => {
    // A second copy of the module has its own memo, so it works the request out again.
    vi.resetModules();
    fresh = await import('@shared/measure/calc');
  });

  it('the same request gives the same response, again and in another module instance (seeded Monte Carlo)', () => {
    expect(fresh.computeCalc).not.toBe(computeCalc);
    fc.assert(
      fc.property(caseArb, (c) => {
        const { request, limits } = judge(c);
        const judgedRequest = { ...request, spec: specOf(limits, c.spec.unit, c.spec.rule) };
        const first = computeCalc(judgedRequest);
        expect(computeCalc(judgedRequest)).toEqual(first);
        expect(fresh.computeCalc(structuredClone(judgedRequest))).toEqual(first);
      }),
      { numRuns: Math.max(12, Math.round(NUM_RUNS / 4)) },
    );
  });
});

describe('unit invariance', () => {
  it('the result and spec in mm or in give the same value, uncertainty and verdict', () => {
    fc.assert(
      fc.property(caseArb, (c) => {
        const inches = requestOf(c, { resultUnit: 'in' });
        const limits = limitsAround(inches, c.spec);
        const rIn = run({ ...inches, spec: specOf(limits, 'in', c.spec.rule) });
        const rMm = run({ ...requestOf(c, { resultUnit: 'mm' }), spec: specOf(limits, 'mm', c.spec.rule) });
        expect(rIn.unit).toBe('in');
        expect(rMm.unit).toBe('mm');
        expect(Math.abs(rMm.value - 25.4 * rIn.value)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(rMm.value)));
        expect(rMm.standardUncertainty / (25.4 * rIn.standardUncertainty)).toBeCloseTo(1, 12);
        // ν_eff is scale-free; its floating-point digits need not be.
        if (rIn.effectiveDegreesOfFreedom === null) expect(rMm.effectiveDegreesOfFreedom).toBeNull();
        else expect(rMm.effectiveDegreesOfFreedom! / rIn.effectiveDegreesOfFreedom).toBeCloseTo(1, 12);
        const context = `in: ${rIn.verdict} [${rIn.coverageInterval.map((x) => x * 25.4)}] ${rIn.method}; mm: ${rMm.verdict} [${rMm.coverageInterval}] ${rMm.method}; limits ${limits.minPm}…${limits.maxPm} pm`;
        expect(rMm.verdict, context).toBe(rIn.verdict);
        if (rIn.method === 'gum' && rMm.method === 'gum') {
          expect(rMm.expandedUncertainty / (25.4 * rIn.expandedUncertainty)).toBeCloseTo(1, 9);
          expect(rMm.probabilityOfConformance!).toBeCloseTo(rIn.probabilityOfConformance!, 9);
        }
      }),
      { numRuns: Math.max(20, Math.round(NUM_RUNS / 3)) },
    );
  });
});
