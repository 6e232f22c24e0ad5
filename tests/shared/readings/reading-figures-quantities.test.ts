import { describe, expect, it } from 'vitest';
import { evaluateReading } from '@shared/measure/readings';
import { normaliseReadingFigures, toEngineReading, type ReadingFigures } from '@shared/readings/reading-figures';

const torqueWrench = { unit: 'lbf_ft', kind: 'torque-wrench' } as const;
const burette = { unit: 'cc', kind: 'burette' } as const;
const gauge = { unit: 'psi', kind: 'pressure-gauge' } as const;

function figures(result: ReturnType<typeof normaliseReadingFigures>): ReadingFigures {
  if (!result.ok) throw new Error(`expected figures, got ${JSON.stringify(result.problems)}`);
  return result.figures;
}

function problems(result: ReturnType<typeof normaliseReadingFigures>) {
  if (result.ok) throw new Error('expected a refusal');
  return result.problems;
}

describe('readings of quantities other than length', () => {
  it('stores a torque as typed, in the unit typed, and an instrument-unit default', () => {
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '35 lb-ft' }, torqueWrench))).toEqual({
      unit: 'lbf_ft',
      value: '35',
      passes: null,
      stops: null,
      values: null,
      entered: { value: '35 lb-ft' },
    });
    const inNm = figures(normaliseReadingFigures({ kind: 'direct', value: '47.5 N·m' }, torqueWrench));
    expect(inNm.unit).toBe('N_m');
    expect(inNm.value).toBe('47.5');
  });

  it('keeps the trailing zero of a cc’d volume (the resolution it implies)', () => {
    const f = figures(normaliseReadingFigures({ kind: 'repeated', values: ['64.20', '64.4', '64.3 cc'] }, burette));
    expect(f.unit).toBe('cc');
    expect(f.values).toEqual(['64.20', '64.4', '64.3']);
  });

  it('refuses a figure of another quantity than the instrument reads, naming the field', () => {
    const refused = problems(normaliseReadingFigures({ kind: 'direct', value: '0.5642 in' }, torqueWrench));
    expect(refused).toEqual([{ path: 'value', message: expect.stringMatching(/inches is not a torque: enter it in N·m, lbf·ft, lbf·in/) }]);
  });

  it('refuses a feeler bracket on an instrument that does not read a length', () => {
    const refused = problems(normaliseReadingFigures({ kind: 'bracket', passes: '3', stops: '4' }, gauge));
    expect(refused.map((p) => p.path)).toContain('kind');
  });

  it('refuses a negative volume, but takes a negative angle (before top dead centre) and a negative pressure (vacuum)', () => {
    expect(problems(normaliseReadingFigures({ kind: 'direct', value: '-2 cc' }, burette))[0]!.message).toMatch(/a volume cannot be negative/);
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '-4°' }, { unit: 'deg', kind: 'degree-wheel' })).value).toBe('-4');
    expect(figures(normaliseReadingFigures({ kind: 'direct', value: '-3.5 psi' }, gauge)).value).toBe('-3.5');
  });

  it('refuses values typed in two units in one repeated reading', () => {
    const refused = problems(normaliseReadingFigures({ kind: 'repeated', values: ['35 lb-ft', '420 lb-in'] }, torqueWrench));
    expect(refused[0]!.path).toBe('values.1');
    expect(refused[0]!.message).toMatch(/same unit: this one is in lbf·in, value 1 is in lbf·ft/);
  });

  it('moves an instrument resolution into the reading’s unit, exactly when it can and with a warning when not', () => {
    // A wrench graduated in 5 lbf·in; reading in lbf·ft. 1 ft = 12 in exactly (NIST SP 811 B.8),
    // so 5 lbf·in = 5/12 lbf·ft = 0.41666… lbf·ft, which has no finite decimal: rounded to 12 places.
    const built = toEngineReading(
      { unit: 'lbf_ft', value: '35', passes: null, stops: null, values: null, entered: { value: '35' }, kind: 'direct', temperatureC: null, material: null },
      { unit: 'lbf_in', kind: 'torque-wrench', resolution: '5', statedUncertainty: null },
      null,
    );
    expect(built.engine).toMatchObject({ kind: 'direct', value: '35', unit: 'lbf_ft', resolution: '0.416666666667' });
    expect(built.warnings).toEqual([expect.objectContaining({ code: 'resolution-converted' })]);
    // 60 lbf·in = 5 lbf·ft exactly: no warning.
    const exact = toEngineReading(
      { unit: 'lbf_ft', value: '35', passes: null, stops: null, values: null, entered: { value: '35' }, kind: 'direct', temperatureC: null, material: null },
      { unit: 'lbf_in', kind: 'torque-wrench', resolution: '60', statedUncertainty: null },
      null,
    );
    expect(exact.engine).toMatchObject({ resolution: '5' });
    expect(exact.warnings).toEqual([]);
  });

  it('works a torque reading out with the resolution as a rectangular half-step (GUM 4.3.7, F.2.2.1)', () => {
    const built = toEngineReading(
      { unit: 'lbf_ft', value: '35', passes: null, stops: null, values: null, entered: { value: '35' }, kind: 'direct', temperatureC: null, material: null },
      { unit: 'lbf_ft', kind: 'torque-wrench', resolution: '1', statedUncertainty: null },
      null,
    );
    const evaluated = evaluateReading('torque', built.engine);
    expect(evaluated.quantity).toBe('torque');
    expect(evaluated.estimate.valueOf()).toBe(35);
    // Half of one step, over √3: u = 0.5 / √3 = 0.2887 lbf·ft.
    expect(evaluated.standardUncertainty).toBeCloseTo(0.5 / Math.sqrt(3), 12);
    expect(evaluated.valuePm).toBeNull();
  });
});
