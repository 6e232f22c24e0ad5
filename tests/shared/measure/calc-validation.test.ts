import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ZodError } from 'zod';
import { computeCalc } from '@shared/measure/calc';
import { calcResponseSchema } from '@shared/measure/calc.schema';

const good = () => ({
  readings: {
    bore: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 } as Record<string, unknown>,
    gap: { kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' } as Record<string, unknown>,
    rep: { kind: 'repeated', values: [14.33, 14.331], unit: 'mm' } as Record<string, unknown>,
  } as Record<string, Record<string, unknown>>,
  terms: [{ reading: 'bore', sign: 1 }] as Record<string, unknown>[],
  spec: { min: 0.003, max: 0.005, unit: 'in' } as Record<string, unknown> | undefined,
  coverageFactor: 2 as unknown,
});

function issuesOf(input: unknown) {
  try {
    computeCalc(input);
  } catch (error) {
    if (error instanceof ZodError) return error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
    throw error;
  }
  throw new Error('expected a validation error');
}

type Mutator = (r: ReturnType<typeof good>) => void;

describe('bad calculator input is refused with the field named', () => {
  const cases: [string, Mutator, string, RegExp][] = [
    ['an unknown unit', (r) => void (r.readings.bore!.unit = 'ft'), 'readings.bore.unit', /unit must be one of in, thou, tenth, mm, um/],
    ['a term naming a missing reading', (r) => void (r.terms = [{ reading: 'deck', sign: 1 }]), 'terms.0.reading', /"deck", which is not in readings/],
    ['a reading used in two terms', (r) => void r.terms.push({ reading: 'bore', sign: -1 }), 'terms.1.reading', /second time/],
    ['a sign other than ±1', (r) => void (r.terms[0]!.sign = 2), 'terms.0.sign', /sign must be 1 or -1/],
    ['a bracket whose stops equals passes', (r) => void (r.readings.gap!.stops = 0.003), 'readings.gap.stops', /stops must be thicker than passes/],
    ['a bracket whose stops is below passes', (r) => void (r.readings.gap!.stops = 0.002), 'readings.gap.stops', /stops must be thicker/],
    ['a negative feeler blade', (r) => void (r.readings.gap!.passes = -0.001), 'readings.gap.passes', /passes must be at least 0/],
    ['a negative resolution', (r) => void (r.readings.bore!.resolution = -0.0001), 'readings.bore.resolution', /resolution must be greater than 0/],
    ['a zero resolution', (r) => void (r.readings.bore!.resolution = 0), 'readings.bore.resolution', /resolution must be greater than 0/],
    ['an absurd resolution', (r) => void (r.readings.bore!.resolution = 1), 'readings.bore.resolution', /resolution must be no coarser than 10 mm/],
    ['a negative uncertainty', (r) => void (r.readings.bore!.uncertainty = -0.0001), 'readings.bore.uncertainty', /uncertainty must be at least 0/],
    ['NaN', (r) => void (r.readings.bore!.value = Number.NaN), 'readings.bore.value', /value must be a number or a decimal string/],
    ['Infinity', (r) => void (r.readings.bore!.value = Number.POSITIVE_INFINITY), 'readings.bore.value', /value must be a number or a decimal string/],
    ['a value as text that is not a decimal', (r) => void (r.readings.bore!.value = '0.5642 in'), 'readings.bore.value', /value must be a decimal number like "0\.5640"/],
    ['a value as text with an exponent', (r) => void (r.readings.bore!.value = '5.642e-1'), 'readings.bore.value', /no exponent/],
    ['an empty text value', (r) => void (r.readings.bore!.value = ''), 'readings.bore.value', /value must be a decimal number/],
    ['a missing value', (r) => void delete r.readings.bore!.value, 'readings.bore.value', /value is required/],
    ['a length over 2 m', (r) => void (r.readings.bore!.value = 100), 'readings.bore.value', /value must be no more than 2 m/],
    ['a length of −3 m', (r) => void (r.readings.bore!.value = -3000), 'readings.bore.value', /no more than 2 m/],
    ['more decimals than can be held exactly', (r) => void (r.readings.bore!.value = 0.123456789), 'readings.bore.value', /at most 8/],
    ['a float artefact', (r) => void ((r.readings.rep!.values as number[])[0] = 0.1 + 0.2), 'readings.rep.values.0', /decimal places/],
    ['too many values', (r) => void (r.readings.rep!.values = Array.from({ length: 1001 }, () => 1)), 'readings.rep.values', /at most 1000/],
    ['a repeated reading of one value', (r) => void (r.readings.rep!.values = [1]), 'readings.rep.values', /at least 2/],
    ['an unknown kind', (r) => void (r.readings.bore!.kind = 'guess'), 'readings.bore.kind', /kind must be "direct", "bracket", "blade" or "repeated"/],
    ['a misspelt field', (r) => void (r.readings.bore!.resoluton = 0.0001), 'readings.bore', /resoluton/],
    ['a temperature with no material or coefficient', (r) => void (r.readings.bore!.temperatureC = 30), 'readings.bore.temperatureC', /needs a material or an expansionPerK/],
    ['an unknown material', (r) => void Object.assign(r.readings.bore!, { temperatureC: 30, material: 'unobtainium' }), 'readings.bore.material', /material must be one of/],
    ['a coefficient written without its 10⁻⁶', (r) => void Object.assign(r.readings.bore!, { temperatureC: 30, expansionPerK: 11.7 }), 'readings.bore.expansionPerK', /expansionPerK must be at most/],
    ['a furnace temperature', (r) => void Object.assign(r.readings.bore!, { temperatureC: 900, material: 'steel' }), 'readings.bore.temperatureC', /temperatureC must be at most 150/],
    ['a reading key that is not a name', (r) => void (r.readings['__proto__ '] = { kind: 'direct', value: 1, unit: 'in' }), 'readings.__proto__ ', /reading keys are/],
    ['no readings', (r) => void (r.readings = {}), 'readings', /at least one reading/],
    ['no terms', (r) => void (r.terms = []), 'terms', /at least one term/],
    ['101 terms', (r) => void (r.terms = Array.from({ length: 101 }, () => ({ reading: 'bore', sign: 1 }))), 'terms', /at most 100 terms/],
    ['spec min above max', (r) => void (r.spec = { min: 0.005, max: 0.003, unit: 'in' }), 'spec.min', /min must not be greater than max/],
    ['a spec with no limits', (r) => void (r.spec = { unit: 'in' }), 'spec.min', /needs a min, a max or both/],
    ['a spec with no unit', (r) => void (r.spec = { max: 0.005 }), 'spec.unit', /unit must be one of/],
    ['an unknown rule', (r) => void (r.spec = { max: 0.005, unit: 'in', rule: 'lenient' }), 'spec.rule', /rule must be "guarded" or "simple"/],
    ['a coverage factor of 0', (r) => void (r.coverageFactor = 0), 'coverageFactor', /coverageFactor must be at least 1/],
    ['a coverage factor of 10', (r) => void (r.coverageFactor = 10), 'coverageFactor', /coverageFactor must be at most 4/],
  ];

  it.each(cases)('%s', (_, mutate, path, message) => {
    const request = good();
    mutate(request);
    const issues = issuesOf(request);
    expect(issues).toContainEqual(expect.objectContaining({ path, message: expect.stringMatching(message) }));
  });

  it('refuses 101 readings', () => {
    const readings = Object.fromEntries(Array.from({ length: 101 }, (_, i) => [`r${i}`, { kind: 'direct', value: 1, unit: 'mm' }]));
    expect(issuesOf({ readings, terms: [{ reading: 'r0', sign: 1 }] })).toContainEqual(
      expect.objectContaining({ path: 'readings', message: expect.stringMatching(/at most 100 readings/) }),
    );
  });

  it('refuses a "__proto__" reading from JSON without touching any prototype', () => {
    const input = JSON.parse('{"readings":{"__proto__":{"kind":"direct","value":1,"unit":"in"}},"terms":[{"reading":"__proto__","sign":1}]}');
    expect(issuesOf(input)).toContainEqual(expect.objectContaining({ path: 'terms.0.reading' }));
    expect(({} as Record<string, unknown>).kind).toBeUndefined();
  });

  it.each([null, 42, 'readings', [], {}])('refuses %j as a request', (input) => {
    expect(issuesOf(input).length).toBeGreaterThan(0);
  });

  it('accepts the good request the cases start from', () => {
    expect(calcResponseSchema.safeParse(computeCalc(good())).success).toBe(true);
  });

  it('accepts a value as decimal text, exactly as the number', () => {
    const asText = good();
    asText.readings.bore!.value = '0.5642';
    // 0.5642 in = 14 330.68 µm exactly (1 in = 25.4 mm, NIST SP 811 B.8), whichever way it is sent.
    expect(computeCalc(asText).value_um).toBe(14_330.68);
    expect(computeCalc(asText).value_um).toBe(computeCalc(good()).value_um);
  });
});

describe('no input makes the calculator throw anything but a validation error', () => {
  function neverThrowsOtherwise(input: unknown) {
    try {
      const result = computeCalc(input);
      expect(calcResponseSchema.safeParse(result).success).toBe(true);
      expect(Number.isFinite(result.value_um) && Number.isFinite(result.expandedUncertainty_um)).toBe(true);
      JSON.stringify(result); // bigint would throw here
    } catch (error) {
      if (!(error instanceof ZodError)) throw error;
    }
  }

  it('survives random JSON-ish junk', () => {
    fc.assert(fc.property(fc.jsonValue(), neverThrowsOtherwise), { numRuns: 2000 });
    fc.assert(fc.property(fc.anything(), neverThrowsOtherwise), { numRuns: 1000 });
  });

  it('survives near-miss requests built from plausible and implausible pieces', () => {
    const number = fc.oneof(
      fc.double(),
      fc.integer({ min: -5, max: 5 }),
      fc.constantFrom(0, 0.0001, 0.003, 0.004, 0.5642, 14.33, 1e-7, 2000, 2001, -0.001, 1e308, Number.MIN_VALUE),
    );
    const unit = fc.oneof(fc.constantFrom('in', 'thou', 'tenth', 'mm', 'um'), fc.string());
    const key = fc.constantFrom('a', 'b', 'c', 'constructor', '__proto__', 'toString', '');
    const reading = fc.oneof(
      fc.record(
        {
          kind: fc.constant('direct'),
          value: number,
          unit,
          resolution: number,
          uncertainty: number,
          zeroOffset: number,
          temperatureC: number,
          expansionPerK: number,
          material: fc.oneof(fc.constantFrom('steel', 'brass', 'cast iron'), fc.string()),
        },
        { requiredKeys: ['kind', 'value', 'unit'] },
      ),
      fc.record({ kind: fc.constant('bracket'), passes: number, stops: number, unit }),
      fc.record({ kind: fc.constant('repeated'), values: fc.array(number, { maxLength: 20 }), unit, resolution: number }, { requiredKeys: ['kind', 'values', 'unit'] }),
      fc.anything(),
    );
    const request = fc.record(
      {
        readings: fc.dictionary(key, reading, { maxKeys: 4 }),
        terms: fc.array(fc.record({ reading: key, sign: fc.oneof(fc.constantFrom(1, -1), number) }), { maxLength: 5 }),
        spec: fc.record({ min: number, max: number, unit, rule: fc.oneof(fc.constantFrom('guarded', 'simple'), fc.string()) }, { requiredKeys: [] }),
        coverageFactor: number,
      },
      { requiredKeys: ['readings', 'terms'] },
    );
    fc.assert(fc.property(request, neverThrowsOtherwise), { numRuns: 3000 });
  });

  const unit = fc.constantFrom('in', 'thou', 'tenth', 'mm', 'um');
  const small = fc.integer({ min: 0, max: 100_000 }).map((n) => n / 10_000);
  const validReading = fc.oneof(
    fc.record({ kind: fc.constant('direct'), value: small, unit, resolution: fc.constantFrom(0.01, 0.001, 0.0001) }),
    fc.tuple(small, fc.integer({ min: 1, max: 50 }), unit).map(([p, d, u]) => ({ kind: 'bracket', passes: p, stops: Number((p + d / 1000).toFixed(4)), unit: u })),
  );
  const validRequest = (readings: Record<string, unknown>[], signs: number[]) => ({
    readings: Object.fromEntries(readings.map((r, i) => [`r${i}`, r])),
    terms: readings.map((_, i) => ({ reading: `r${i}`, sign: signs[i] })),
  });
  const signs = fc.array(fc.constantFrom(1, -1), { minLength: 6, maxLength: 6 });

  it('computes something for valid random requests, and it is finite, with U = 2u when k = 2 is asked for', () => {
    fc.assert(
      fc.property(fc.array(validReading, { minLength: 1, maxLength: 6 }), signs, (readings, s) => {
        const result = computeCalc({ ...validRequest(readings, s), coverageFactor: 2 });
        const u = result.standardUncertainty_um!;
        expect(u).toBeGreaterThan(0);
        // U = k·u_c with the chosen k (GUM 6.2.1).
        expect(result.expandedUncertainty_um).toBeCloseTo(2 * u, 9);
        expect(result.method).toBe('gum');
      }),
      { numRuns: 500 },
    );
  });

  it('gives a 95 % interval between the rectangular\'s and the normal\'s by default', () => {
    // Every input here is rectangular (resolutions, feeler brackets), so the output is a
    // convolution of rectangulars: its 95 % coverage factor lies between a lone rectangular's
    // 0.95√3 ≈ 1.645 and the normal's 1.960 (GUM G.1.3, G.2.2), to within the Monte Carlo
    // numerical tolerance δ (JCGM 101:2008 7.9.2: ½ unit in the second significant digit of u,
    // at most 5 % of u).
    fc.assert(
      fc.property(fc.array(validReading, { minLength: 1, maxLength: 6 }), signs, (readings, s) => {
        const result = computeCalc(validRequest(readings, s));
        const u = result.standardUncertainty_um!;
        const U = result.expandedUncertainty_um!;
        expect(result.coverageProbability).toBe(0.95);
        expect(U).toBeGreaterThanOrEqual((0.95 * Math.sqrt(3) - 0.05) * u);
        expect(U).toBeLessThanOrEqual((1.96 + 0.05) * u);
      }),
      { numRuns: 60 },
    );
  });
});
