import { describe, expect, it } from 'vitest';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';
import { evaluateReading } from '@shared/measure/readings';
import type { Reading } from '@shared/readings/reading.schema';
import { toEngineReading } from '@shared/readings/reading-figures';
import { readingBudgetLines } from '@/features/readings/components/reading-budget';
import { blankReadingForm, kindsFor, readingFormIssues, readsLength, toReadingInput, unitAfterChoosing } from '@/features/readings/lib/reading-form';
import { enteredFigures, estimateSortKey, estimateText, uncertaintyText, withReadingUnit } from '@/features/readings/lib/reading-text';

/** A register entry as the API shows it (invented figures). */
function instrument(over: Partial<Instrument>): Instrument {
  return {
    id: 1,
    ownerId: 1,
    name: 'Invented instrument',
    kind: 'outside-micrometer',
    serial: '',
    unit: 'in',
    resolution: '0.0001',
    statedUncertainty: null,
    calibrationUncertainty: null,
    calibrationCoverageFactor: null,
    maxPermissibleError: null,
    settingStandardUncertainty: null,
    settingStandardCoverageFactor: null,
    calibrationIntervalDays: null,
    lastCalibratedOn: null,
    calibrationDueOn: null,
    calibrationState: 'no-record',
    calibratedBy: '',
    note: '',
    retired: false,
    needsZeroCheck: false,
    latestZeroCheck: null,
    lockVersion: 1,
    createdAt: '2026-12-01T00:00:00.000Z',
    updatedAt: '2026-12-01T00:00:00.000Z',
    ...over,
  };
}

const wrench = instrument({ id: 2, name: 'Invented click wrench', kind: 'torque-wrench', unit: 'lbf_ft', resolution: '1' });
const burette = instrument({ id: 3, name: 'Invented burette', kind: 'burette', unit: 'cc', resolution: '0.1', statedUncertainty: '0.12' });
const mic = instrument({ id: 4 });

/** Just what the display helpers read of a reading DTO. */
function reading(over: Partial<Reading>): Reading {
  return { kind: 'direct', entered: {}, value: null, passes: null, stops: null, values: null, ...over } as Reading;
}

describe('readings of any quantity, as the workspace shows them', () => {
  it('show a torque and a volume with their own symbol, and a length exactly as before', () => {
    // u = 1 lbf·ft / (2√3) = 0.2887 lbf·ft (GUM F.2.2.1), two significant digits (GUM 7.2.6).
    const torque = reading({
      unit: 'lbf_ft',
      value: '35',
      entered: { value: '35 lb-ft' },
      result: { quantity: 'torque', valueUm: null, standardUncertaintyUm: null, value: 35, standardUncertainty: 1 / (2 * Math.sqrt(3)), display: '35 lbf·ft', steps: [] },
    });
    expect(estimateText(torque)).toBe('35 lbf·ft ± 0.29 lbf·ft');
    expect(enteredFigures(torque)).toBe('35 lb-ft');
    const volume = reading({
      unit: 'cc',
      value: '64.2',
      entered: { value: '64.2' },
      result: { quantity: 'volume', valueUm: null, standardUncertaintyUm: null, value: 64.2, standardUncertainty: 0.1245, display: '64.2 cc', steps: [] },
    });
    expect(estimateText(volume)).toBe('64.2 cc ± 0.12 cc');
    expect(enteredFigures(volume)).toBe('64.2 cc');
    // A length keeps its µm path: 0.0001 in/(2√3) = 0.0000289 in = 0.7332 µm.
    const length = reading({
      unit: 'in',
      value: '0.5642',
      entered: { value: '0.5642' },
      result: { quantity: 'length', valueUm: 14330.68, standardUncertaintyUm: 0.7332, value: 0.5642, standardUncertainty: 0.0000289, display: '0.5642 in', steps: [] },
    });
    expect(estimateText(length)).toBe('0.5642 in ± 0.000029 in');
    expect(enteredFigures(length)).toBe('0.5642 in');
    expect(uncertaintyText(length)).toBe('0.000029 in');
    expect(withReadingUnit('108', 'deg')).toBe('108°');
    expect(withReadingUnit('2', 'tenth')).toBe('2 tenths');
  });

  it('sort estimates within a quantity whatever unit each was read in', () => {
    const result = (value: number) => ({ quantity: 'torque' as const, valueUm: null, standardUncertaintyUm: null, value, standardUncertainty: 0.3, display: '', steps: [] });
    // 400 lbf·in = 33.3 lbf·ft (NIST SP 811 B.8: 1 ft = 12 in), so it sorts before 35 lbf·ft.
    const a = estimateSortKey({ unit: 'lbf_ft', result: result(35) });
    const b = estimateSortKey({ unit: 'lbf_in', result: result(400) });
    expect(a[0]).toBe(b[0]);
    expect(b[1]).toBeLessThan(a[1]);
    // Lengths sort before torques, by µm as before.
    const length = estimateSortKey({ unit: 'in', result: { quantity: 'length', valueUm: 100, standardUncertaintyUm: 1, display: '', steps: [] } });
    expect(length).toEqual([0, 100]);
    expect(length[0]).toBeLessThan(a[0]);
  });

  it('offer a feeler bracket and the part temperature for length instruments only', () => {
    expect(kindsFor(mic)).toEqual(['direct', 'bracket', 'repeated']);
    expect(kindsFor(wrench)).toEqual(['direct', 'repeated']);
    expect(kindsFor(undefined)).toEqual(['direct', 'bracket', 'repeated']);
    expect(readsLength(burette)).toBe(false);
    // A temperature typed while a micrometer was chosen is not sent with a torque.
    const values = { ...blankReadingForm(wrench, null, 'Head bolt 1', 'degC'), value: '35 lb-ft', temperatureC: '21', material: 'cast iron' };
    const body = toReadingInput(values, 9);
    expect(body).toMatchObject({ unit: 'lbf_ft', value: '35 lb-ft', temperatureC: null, material: null, kind: 'direct' });
    expect(readingFormIssues(values, [wrench])).toEqual([]);
  });

  it('keep the unit on the instrument’s quantity, and refuse a unit of another', () => {
    expect(blankReadingForm(wrench, null).unit).toBe('lbf_ft');
    // lbf·in picked by hand stays on another torque wrench; a burette brings its own unit.
    expect(unitAfterChoosing({ unit: 'N_m' }, 'lbf_in', true)).toBe('lbf_in');
    expect(unitAfterChoosing(burette, 'lbf_in', true)).toBe('cc');
    expect(unitAfterChoosing({ unit: 'N_m' }, 'lbf_in', false)).toBe('N_m');
    const issues = readingFormIssues({ ...blankReadingForm(wrench, null, 'Head bolt 1'), value: '35 psi' }, [wrench]);
    expect(issues.map((i) => i.path)).toEqual(['value']);
    expect(issues[0]!.message).toMatch(/not a torque/);
  });

  it('list a torque reading’s budget in its own unit, its shares adding to its u²', () => {
    const built = toEngineReading({ kind: 'direct', unit: 'lbf_ft', value: '35', passes: null, stops: null, values: null, entered: {}, temperatureC: null, material: null }, wrench, null);
    const evaluated = evaluateReading('head-bolt-1', built.engine, engineInstrumentsMap([built.instrument]));
    const lines = readingBudgetLines(evaluated);
    expect(lines).toHaveLength(1);
    // The resolution alone: u = 1/(2√3) = 0.28868 lbf·ft, sensitivity 1, the whole variance.
    expect(lines[0]!.sensitivity).toBeCloseTo(1, 12);
    expect(lines[0]!.contribution).toBeCloseTo(1 / (2 * Math.sqrt(3)), 12);
    expect(lines[0]!.share).toBeCloseTo(1, 12);
    expect(lines[0]!.source).toMatch(/^Resolution 1 lbf·ft/);
  });
});
