import { describe, expect, it } from 'vitest';
import { formulaTemplates } from '@shared/measure/formula-templates';
import { defaultUnitsOf, noDefaultUnits, type DefaultUnits } from '../../src/features/auth/lib/default-units';
import { applyTemplate, examples, initialValues } from '../../src/features/calc/lib/calc-form';
import { nextReadingUnit, startingUnit } from '../../src/features/calc/lib/units-ui';
import { blankInstrumentFor, newInstrumentUnit } from '../../src/features/instruments/lib/instrument-form';
import { chooseUnitSystem } from '../../src/features/public/lib/unit-choice';

/*
 * Where the product proposes a unit, the signed-in builder's default units come first; without
 * them each screen keeps its own fallback (the unit beside it, else inches). Our rules, no
 * published source.
 */

const metric: DefaultUnits = { system: 'metric', temperatureScale: null };
const imperialDegC: DefaultUnits = { system: 'imperial', temperatureScale: 'degC' };
const onlyDegF: DefaultUnits = { system: null, temperatureScale: 'degF' };

describe('an account’s default units as /api/me answers them', () => {
  it('reads both fields, and none when signed out or not chosen', () => {
    expect(defaultUnitsOf({ unitSystem: 'metric', temperatureScale: 'degF' })).toEqual({ system: 'metric', temperatureScale: 'degF' });
    expect(defaultUnitsOf({ unitSystem: null, temperatureScale: null })).toEqual(noDefaultUnits);
    expect(defaultUnitsOf(null)).toEqual(noDefaultUnits);
    // An answer cached before the fields existed.
    expect(defaultUnitsOf({} as never)).toEqual(noDefaultUnits);
  });
});

describe('the calculator’s proposed units', () => {
  it('starts a figure of each quantity in the builder’s system and temperature scale', () => {
    expect(startingUnit('length', 'in', metric)).toBe('mm');
    expect(startingUnit('torque', 'in', metric)).toBe('N_m');
    expect(startingUnit('temperature', 'in', metric)).toBe('degC');
    expect(startingUnit('length', 'mm', imperialDegC)).toBe('in');
    expect(startingUnit('pressure', 'mm', imperialDegC)).toBe('psi');
    expect(startingUnit('temperature', 'mm', imperialDegC)).toBe('degC');
    // A scale alone: the system still follows the unit beside it.
    expect(startingUnit('length', 'mm', onlyDegF)).toBe('mm');
    expect(startingUnit('temperature', 'mm', onlyDegF)).toBe('degF');
  });

  it('without defaults follows the unit beside it, else imperial (as before)', () => {
    expect(startingUnit('length', 'mm')).toBe('mm');
    expect(startingUnit('temperature', 'mm')).toBe('degC');
    expect(startingUnit('length', undefined)).toBe('in');
    expect(startingUnit('temperature', undefined)).toBe('degF');
  });

  it('adds a reading in the row above’s unit when it is already the builder’s, else in their default for that quantity', () => {
    expect(nextReadingUnit('thou', { system: 'imperial', temperatureScale: null })).toBe('thou');
    expect(nextReadingUnit('um', metric)).toBe('um');
    expect(nextReadingUnit('in', metric)).toBe('mm');
    expect(nextReadingUnit('lbf_ft', metric)).toBe('N_m');
    expect(nextReadingUnit('cu_in', metric)).toBe('cc');
    expect(nextReadingUnit('degF', metric)).toBe('degC');
    expect(nextReadingUnit('degF', imperialDegC)).toBe('degC');
    expect(nextReadingUnit('degC', onlyDegF)).toBe('degF');
    expect(nextReadingUnit('in', onlyDegF)).toBe('in');
    // Units both systems use stay.
    expect(nextReadingUnit('deg', { system: 'imperial', temperatureScale: null })).toBe('deg');
    expect(nextReadingUnit('s', { system: 'imperial', temperatureScale: null })).toBe('s');
    // The first row of an empty page.
    expect(nextReadingUnit(undefined, metric)).toBe('mm');
  });

  it('without defaults copies the row above, else inches (as before)', () => {
    expect(nextReadingUnit('mm')).toBe('mm');
    expect(nextReadingUnit('degC')).toBe('degC');
    expect(nextReadingUnit(undefined)).toBe('in');
  });

  it('applies a template in the builder’s units: readings, constants and the result unit', () => {
    const swept = formulaTemplates.find((t) => t.id === 'swept-volume')!;
    // The page starts on an inch example; a metric builder's template still starts in millimetres.
    const values = applyTemplate(initialValues, swept, metric);
    expect(values.readings.map((r) => r.unit)).toEqual(['mm', 'mm']);
    expect(values.resultUnit).toBe('cc');
    expect(values.spec.unit).toBe('cc');

    const imperial = applyTemplate(initialValues, swept, { system: 'imperial', temperatureScale: null });
    expect(imperial.readings.map((r) => r.unit)).toEqual(['in', 'in']);
    expect(imperial.resultUnit).toBe('cc');

    // A slot with its own unit keeps it (chambers are cc'd in either system).
    const cr = applyTemplate(initialValues, formulaTemplates.find((t) => t.id === 'compression-ratio')!, metric);
    expect(Object.fromEntries(cr.readings.map((r) => [r.name, r.unit]))).toMatchObject({ bore: 'mm', chamber: 'cc', dish: 'cc' });
    expect(cr.resultUnit).toBe('1');
  });

  it('leaves the worked examples in the units their figures were written in', () => {
    expect(examples.find((e) => e.id === 'compression-ratio')!.values.readings.find((r) => r.name === 'bore')!.unit).toBe('in');
  });
});

describe('a new instrument’s unit', () => {
  it('is the builder’s default length unit, else inches', () => {
    expect(newInstrumentUnit(metric)).toBe('mm');
    expect(newInstrumentUnit({ system: 'imperial', temperatureScale: 'degC' })).toBe('in');
    expect(newInstrumentUnit(noDefaultUnits)).toBe('in');
    expect(newInstrumentUnit(onlyDegF)).toBe('in');
    expect(blankInstrumentFor(metric)).toMatchObject({ unit: 'mm', name: '', resolution: '' });
  });
});

describe('the reader’s units on a public page', () => {
  const none = { device: null, account: null, accountDefault: null, entryUnit: null } as const;

  it('puts this device’s pick first', () => {
    expect(chooseUnitSystem({ ...none, device: 'metric', account: 'imperial', accountDefault: 'imperial', entryUnit: 'in' })).toEqual({
      system: 'metric',
      chosen: 'metric',
      source: 'browser',
    });
    // Saved in both places by the switch while signed in: "your account".
    expect(chooseUnitSystem({ ...none, device: 'metric', account: 'metric' }).source).toBe('account');
  });

  it('then the account’s pick, then the account’s default units, before the builder’s unit', () => {
    expect(chooseUnitSystem({ ...none, account: 'metric', accountDefault: 'imperial', entryUnit: 'in' })).toEqual({
      system: 'metric',
      chosen: 'metric',
      source: 'account',
    });
    expect(chooseUnitSystem({ ...none, accountDefault: 'metric', entryUnit: 'in' })).toEqual({
      system: 'metric',
      chosen: 'metric',
      source: 'account-default',
    });
  });

  it('follows the builder’s unit when nothing is chosen, else imperial', () => {
    expect(chooseUnitSystem({ ...none, entryUnit: 'um' })).toEqual({ system: 'metric', chosen: null, source: 'builder' });
    expect(chooseUnitSystem({ ...none, entryUnit: 'thou' })).toEqual({ system: 'imperial', chosen: null, source: 'builder' });
    expect(chooseUnitSystem(none)).toEqual({ system: 'imperial', chosen: null, source: 'builder' });
  });
});
