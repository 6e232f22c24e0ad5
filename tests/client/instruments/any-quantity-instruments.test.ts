import { describe, expect, it } from 'vitest';
import { blankInstrumentFor, newInstrumentUnit, unitForKind } from '@/features/instruments/lib/instrument-form';
import { figureProblem, liveOffset, resolutionOnlyUncertainty, signedWithUnit, withUnit } from '@/features/instruments/lib/instrument-format';
import { unitChoiceGroups, unitChoiceLabel } from '@/features/instruments/lib/unit-choices';

const imperial = { system: 'imperial', temperatureScale: null } as const;
const metric = { system: 'metric', temperatureScale: null } as const;
const unset = { system: null, temperatureScale: null } as const;

describe('the instruments register for every quantity', () => {
  it('starts a kind in its quantity’s unit in the builder’s system, lengths as before', () => {
    expect(blankInstrumentFor(unset).unit).toBe('in');
    expect(blankInstrumentFor(metric).unit).toBe('mm');
    expect(newInstrumentUnit(imperial, 'torque-wrench')).toBe('lbf_ft');
    expect(newInstrumentUnit(metric, 'torque-wrench')).toBe('N_m');
    expect(newInstrumentUnit(metric, 'pressure-gauge')).toBe('kPa');
    // Builders cc a chamber in cc whichever system they work in.
    expect(newInstrumentUnit(imperial, 'burette')).toBe('cc');
    expect(newInstrumentUnit({ system: 'imperial', temperatureScale: 'degC' }, 'thermometer')).toBe('degC');
    expect(newInstrumentUnit(unset, 'other')).toBe('in');
  });

  it('moves the unit with the kind only when it is of another quantity', () => {
    expect(unitForKind('torque-wrench', 'in', imperial)).toBe('lbf_ft');
    expect(unitForKind('torque-wrench', 'lbf_in', metric)).toBe('lbf_in');
    expect(unitForKind('outside-micrometer', 'lbf_in', metric)).toBe('mm');
    // "Other" reads anything: the unit stays.
    expect(unitForKind('other', 'psi', imperial)).toBe('psi');
  });

  it('offers one quantity’s units for a kind that has one, every quantity’s for “Other”', () => {
    expect(unitChoiceGroups('torque').map((g) => g.units)).toEqual([['N_m', 'lbf_ft', 'lbf_in']]);
    const all = unitChoiceGroups(null);
    expect(all.map((g) => g.heading)).toEqual(['Length', 'Volume', 'Angle', 'Torque', 'Pressure', 'Temperature', 'Time', 'Mass']);
    expect(unitChoiceGroups(null, { withRatio: true }).at(-1)).toEqual({ quantity: 'ratio', heading: 'Ratio', units: ['1'] });
    expect(unitChoiceLabel('in')).toBe('inches');
    expect(unitChoiceLabel('thou')).toBe('thou (0.001 in)');
    expect(unitChoiceLabel('lbf_ft')).toBe('pound-force feet (lbf·ft)');
    expect(unitChoiceLabel('bar')).toBe('bar');
    expect(unitChoiceLabel('1')).toBe('ratio (no unit)');
  });

  it('shows figures with the unit’s symbol and works out the resolution-only u for any quantity', () => {
    expect(withUnit('0.0001', 'in')).toBe('0.0001 in');
    expect(withUnit('1', 'tenth')).toBe('1 tenth');
    expect(withUnit('1', 'lbf_ft')).toBe('1 lbf·ft');
    expect(withUnit('0.5', 'deg')).toBe('0.5°');
    expect(signedWithUnit('-0.5', 'psi')).toBe('−0.5 psi');
    expect(signedWithUnit('0.0002', 'in')).toBe('+0.0002 in');
    // GUM F.2.2.1: u = δx/(2√3); 0.0001 in → 0.0000289 in, 1 lbf·ft → 0.2887 lbf·ft, 0.1 cc → 0.02887 cc (two significant digits, GUM 7.2.6).
    expect(resolutionOnlyUncertainty('0.0001', 'in')).toBe('0.000029 in');
    expect(resolutionOnlyUncertainty('1', 'lbf_ft')).toBe('0.29 lbf·ft');
    expect(resolutionOnlyUncertainty('0.1 cc', 'cc')).toBe('0.029 cc');
    expect(resolutionOnlyUncertainty('0', 'cc')).toBeNull();
  });

  it('refuses a figure in another unit and says how, and reads a zero check of any quantity', () => {
    expect(figureProblem('0.001 mm', 'in', true)).toBe("enter it in in (this record's unit), or leave the unit off");
    expect(figureProblem('2 psi', 'bar', true)).toBe("enter it in bar (this record's unit), or leave the unit off");
    expect(figureProblem('0', 'lbf_ft', true)).toBe('resolution must be greater than 0');
    expect(figureProblem('-0.1', 'psi', false)).toBe('uncertainty cannot be negative');
    expect(figureProblem('0.5 psi', 'psi', true)).toBeUndefined();
    // Offset = shown − standard: 1.0002 in − 1.0000 in = +0.0002 in; a gauge showing 0.4 psi open to the air, +0.4 psi; a scale at −1.5 g empty, −1.5 g.
    expect(liveOffset('1.0000', '1.0002', 'in')).toEqual({ ok: true, text: '+0.0002 in' });
    expect(liveOffset('0', '0.4', 'psi')).toEqual({ ok: true, text: '+0.4 psi' });
    expect(liveOffset('0', '-1.5 g', 'g')).toEqual({ ok: true, text: '−1.5 g' });
    expect(liveOffset('100.00', '100', 'g')).toEqual({ ok: true, text: '0.00 g' });
    expect(liveOffset('0', '3 bar', 'psi')).toEqual({ ok: false });
  });
});
