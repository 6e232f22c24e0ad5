import { describe, expect, it } from 'vitest';
import { evaluateReading } from '@shared/measure/readings';
import { engineReadingProblems, normaliseReadingFigures, toEngineReading, type ReadingFigures } from '@shared/readings/reading-figures';

const micrometer = { unit: 'in', kind: 'outside-micrometer' } as const;
const blades = { unit: 'in', kind: 'feeler-blades' } as const;
const indicator = { unit: 'mm', kind: 'dial-test-indicator' } as const;
const SQRT3 = Math.sqrt(3);

function figures(result: ReturnType<typeof normaliseReadingFigures>): ReadingFigures {
  if (!result.ok) throw new Error(`expected figures, got ${JSON.stringify(result.problems)}`);
  return result.figures;
}

function problems(result: ReturnType<typeof normaliseReadingFigures>) {
  if (result.ok) throw new Error('expected a refusal');
  return result.problems;
}

describe('normaliseReadingFigures: texts as typed become decimal text in one unit', () => {
  it('keeps the digits as typed, trailing zeros and all, in the instrument unit when none is typed', () => {
    const f = figures(normaliseReadingFigures({ kind: 'direct', value: '0.5640' }, micrometer));
    expect(f).toEqual({ unit: 'in', value: '0.5640', passes: null, stops: null, values: null, entered: { value: '0.5640' } });
  });

  it('takes the unit typed in the text over the unit sent and the instrument unit', () => {
    const f = figures(normaliseReadingFigures({ kind: 'direct', unit: 'mm', value: '564.2 thou' }, micrometer));
    expect(f.unit).toBe('thou');
    expect(f.value).toBe('564.2');
    expect(f.entered).toEqual({ value: '564.2 thou' });
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '0.5642"' }, { unit: 'mm', kind: 'caliper' })).unit).toBe('in');
  });

  it('reads texts without a unit in the unit sent with them', () => {
    const f = figures(normaliseReadingFigures({ kind: 'repeated', unit: 'mm', values: ['14.331', '14.333 mm', '14.330'] }, micrometer));
    expect(f.unit).toBe('mm');
    expect(f.values).toEqual(['14.331', '14.333', '14.330']);
    expect(f.entered).toEqual({ values: ['14.331', '14.333 mm', '14.330'] });
  });

  it('refuses a unit the engine cannot read, naming the field', () => {
    const p = problems(normaliseReadingFigures({ kind: 'bracket', passes: '0.003 cubits', stops: '0.004' }, blades));
    expect(p[0]?.path).toBe('passes');
    expect(p[0]?.message).toMatch(/not a unit Benchproof reads/);
  });

  it('refuses texts in different units within one reading', () => {
    const p = problems(normaliseReadingFigures({ kind: 'bracket', passes: '0.003 in', stops: '0.10 mm' }, blades));
    expect(p).toEqual([{ path: 'stops', message: expect.stringMatching(/same unit/) }]);
    const r = problems(normaliseReadingFigures({ kind: 'repeated', values: ['1.0 mm', '1.0 mm', '0.0394 in'] }, micrometer));
    expect(r[0]?.path).toBe('values.2');
  });

  it('refuses a negative gap and a negative size, but reads a dial indicator below zero', () => {
    expect(problems(normaliseReadingFigures({ kind: 'bracket', passes: '-0.001', stops: '0.002' }, blades))[0]?.path).toBe('passes');
    expect(problems(normaliseReadingFigures({ kind: 'direct', value: '-0.0005' }, micrometer))[0]).toEqual({
      path: 'value',
      message: expect.stringMatching(/cannot be negative/),
    });
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '-0.012' }, indicator)).value).toBe('-0.012');
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '−0.012' }, { unit: 'mm', kind: 'dial-bore-gauge' })).value).toBe('-0.012');
  });

  it('refuses a bracket that runs backwards or whose blades are equal, naming stops in the words of the form', () => {
    for (const [passes, stops] of [
      ['0.004', '0.003'],
      ['0.003', '0.0030'],
    ] as const) {
      const p = problems(normaliseReadingFigures({ kind: 'bracket', passes, stops }, blades));
      expect(p).toEqual([
        { path: 'stops', message: `The blade that does not enter must be thicker than the one that enters (${passes} in enters, ${stops} in does not).` },
      ]);
    }
  });

  it('names a missing figure and a figure the kind does not have', () => {
    expect(problems(normaliseReadingFigures({ kind: 'bracket', passes: '0.003' }, blades))).toEqual([
      { path: 'stops', message: 'enter the thinnest blade that does not enter' },
    ]);
    expect(problems(normaliseReadingFigures({ kind: 'direct', value: '1', passes: '0.003' }, micrometer))[0]?.path).toBe('passes');
  });

  it('refuses more decimal places than the unit holds exactly', () => {
    // 1 in = 25.4 mm exactly (NIST SP 811, B.8), so inches hold 8 places as whole picometres.
    expect(problems(normaliseReadingFigures({ kind: 'direct', value: '0.123456789' }, micrometer))[0]?.path).toBe('value');
  });
});

describe('toEngineReading: the instrument and the day fill in the engine reading', () => {
  const stored = (over: Partial<ReadingFigures> & { kind: 'direct' | 'bracket' | 'repeated'; temperatureC?: number | null; material?: string | null }) => ({
    unit: 'in' as const,
    value: null,
    passes: null,
    stops: null,
    values: null,
    entered: {},
    temperatureC: null,
    material: null,
    ...over,
  });

  it('takes the resolution and stated uncertainty exactly when the units allow it', () => {
    const { engine, warnings } = toEngineReading(
      stored({ kind: 'direct', unit: 'thou', value: '564.2' }),
      { unit: 'in', kind: 'outside-micrometer', resolution: '0.0001', statedUncertainty: '0.00005' },
      null,
    );
    // 0.0001 in = 0.1 thou, 0.00005 in = 0.05 thou, exactly; figures go to the engine as decimal
    // text, so the digits as stored are the digits the engine reads (GUM 3.2.3–3.2.4).
    expect(engine).toEqual({ kind: 'direct', value: '564.2', unit: 'thou', resolution: '0.1', uncertainty: '0.05' });
    expect(warnings).toEqual([]);
  });

  it('rounds a resolution with no exact value in the reading unit, and says so', () => {
    const { engine, warnings } = toEngineReading(
      stored({ kind: 'direct', value: '0.5642' }),
      { unit: 'mm', kind: 'outside-micrometer', resolution: '0.001', statedUncertainty: null },
      null,
    );
    // 0.001 mm / 25.4 mm per in = 0.0000393700787… in, rounded to 8 places (NIST SP 811, B.8).
    expect(engine).toMatchObject({ resolution: '0.00003937' });
    expect(warnings).toEqual([{ code: 'resolution-converted', message: expect.stringMatching(/0\.001 mm .* rounded to 0\.00003937 in/) }]);
  });

  it('applies the day\'s zero offset to a direct reading', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'direct', unit: 'mm', value: '25.012' }),
      { unit: 'mm', kind: 'outside-micrometer', resolution: '0.001', statedUncertainty: null },
      { offset: '0.002', unit: 'mm' },
    );
    const evaluated = evaluateReading('bore', engine);
    // 25.012 mm − 0.002 mm = 25.010 mm: the correction for a known systematic effect (JCGM 100:2008, 3.2.4).
    expect(evaluated.valuePm).toBe(25_010_000_000n);
  });

  it('applies the day\'s zero offset to the mean of a repeated reading', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'repeated', unit: 'in', values: ['0.5641', '0.5643', '0.5642'] }),
      { unit: 'in', kind: 'outside-micrometer', resolution: '0.0001', statedUncertainty: null },
      { offset: '0.0002', unit: 'in' },
    );
    expect(engine).toEqual({ kind: 'repeated', unit: 'in', values: ['0.5641', '0.5643', '0.5642'], resolution: '0.0001', zeroOffset: '0.0002' });
    // Mean 0.5642 in − 0.0002 in = 0.5640 in = 14 325.6 µm (JCGM 100:2008, 3.2.4; 1 in = 25.4 mm).
    expect(evaluateReading('r', engine).valuePm).toBe(14_325_600_000n);
  });

  it('gives a feeler bracket its midpoint and u = a/√3, with no instrument figures', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'bracket', passes: '0.003', stops: '0.004' }),
      { unit: 'in', kind: 'feeler-blades', resolution: '0.001', statedUncertainty: null },
      { offset: '0.001', unit: 'in' },
    );
    expect(engine).toEqual({ kind: 'bracket', passes: '0.003', stops: '0.004', unit: 'in' });
    const evaluated = evaluateReading('gap', engine);
    // Midpoint (0.003 + 0.004)/2 = 0.0035 in = 88.9 µm; rectangular of half-width a = 0.0005 in
    // = 12.7 µm: u = a/√3 (JCGM 100:2008, 4.3.7).
    expect(evaluated.valuePm).toBe(88_900_000n);
    expect(evaluated.standardUncertaintyUm).toBeCloseTo(12.7 / SQRT3, 12);
  });

  it('keeps trailing zeros as stored, so a figure keeps the places it was read to', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'direct', unit: 'mm', value: '25.010' }),
      { unit: 'mm', kind: 'outside-micrometer', resolution: '0.001', statedUncertainty: null },
      null,
    );
    expect(engine).toEqual({ kind: 'direct', value: '25.010', unit: 'mm', resolution: '0.001' });
    expect(evaluateReading('bore', engine).valuePm).toBe(25_010_000_000n);
  });

  it('keeps the temperature and material of a repeated reading, and corrects its mean to 20 °C', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'repeated', unit: 'in', values: ['4.0000', '4.0002'], temperatureC: 30, material: 'cast-iron' }),
      { unit: 'in', kind: 'outside-micrometer', resolution: '0.0001', statedUncertainty: null },
      null,
    );
    expect(engine).toEqual({ kind: 'repeated', unit: 'in', values: ['4.0000', '4.0002'], resolution: '0.0001', temperatureC: 30, material: 'cast-iron' });
    // Mean 4.0001 in = 101 602.54 µm; grey iron α = 11.4×10⁻⁶/K (Callister Table B.6), instrument
    // taken at 20 °C: L20 = L/(1 + α × 10 K) (ISO 1, GUM H.1).
    expect(Number(evaluateReading('bore', engine).valuePm) / 1e6).toBeCloseTo(101_602.54 / (1 + 11.4e-6 * 10), 6);
  });

  it('names the instrument when its figures fail the engine schema', () => {
    const { engine } = toEngineReading(
      stored({ kind: 'direct', unit: 'mm', value: '1.00' }),
      { unit: 'mm', kind: 'other', resolution: '20', statedUncertainty: null },
      null,
    );
    expect(engineReadingProblems(engine)).toEqual([{ path: 'instrumentId', message: expect.stringMatching(/resolution must be no coarser/) }]);
  });
});
