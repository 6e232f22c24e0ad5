import { all, create } from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  calibrationDueOn,
  calibrationStateOn,
  instrumentInputSchema,
  instrumentPatchSchema,
  zeroCheckInputSchema,
} from '@shared/instruments/instrument.schema';
import { lengthTextIn, picometresToExactText } from '@shared/measure/length-text';
import { picometresPerUnit } from '@shared/measure/units';

// Exact decimal arithmetic as an independent referee for the unit conversions.
const big = create(all ?? {}, { number: 'BigNumber', precision: 64 });
/** Exact mm from inches, by 1 in = 25.4 mm (NIST SP 811 (2008), appendix B: 1 in = 2.54 cm exactly). */
const inchesToMm = (inches: string) => big.format(big.multiply(big.bignumber(inches), big.bignumber('25.4')) as never, { notation: 'fixed' });

/** The field names a zod refusal reports (the API's details[].path). */
function paths(result: { success: boolean; error?: { issues: { path: PropertyKey[] }[] } }): string[] {
  return (result.error?.issues ?? []).map((i) => i.path.map(String).join('.'));
}

const micrometer = {
  name: 'Test 0–1 in outside micrometer',
  kind: 'outside-micrometer',
  unit: 'in',
  resolution: '0.0001',
} as const;

describe('lengthTextIn: a typed length as decimal text in a record unit', () => {
  it('keeps the text as typed, trailing zeros and all, when the unit matches or is left off', () => {
    expect(lengthTextIn('0.0001 in', 'in')).toMatchObject({ ok: true, text: '0.0001' });
    expect(lengthTextIn('0.5640', 'in')).toMatchObject({ ok: true, text: '0.5640' });
    expect(lengthTextIn('0.5640"', 'in')).toMatchObject({ ok: true, text: '0.5640' });
    expect(lengthTextIn('-0.0001', 'in')).toMatchObject({ ok: true, text: '-0.0001' });
  });

  it('refuses another unit unless asked to convert, and names the record unit', () => {
    const r = lengthTextIn('0.0001 in', 'mm');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toContain('mm');
  });

  it('converts 0.0001 in to exactly 0.00254 mm', () => {
    // NIST SP 811 (2008), appendix B: 1 in = 25.4 mm exactly, so 0.0001 in = 0.00254 mm.
    expect(inchesToMm('0.0001')).toBe('0.00254');
    expect(lengthTextIn('0.0001 in', 'mm', { convert: true })).toMatchObject({ ok: true, text: '0.00254' });
    expect(lengthTextIn('0.5642 in', 'mm', { convert: true })).toMatchObject({ ok: true, text: inchesToMm('0.5642') });
  });

  it('refuses 0.001 mm in inches: it has no exact decimal at the 8 places an inch holds', () => {
    // 0.001 mm = 1/25 400 in (NIST SP 811 appendix B), and 25 400 = 2³·5²·127: the factor 127
    // makes the decimal expansion endless, so no number of places is exact.
    const inches = big.divide(big.bignumber('0.001'), big.bignumber('25.4')) as never;
    expect(big.format(big.round(inches, 8) as never, { notation: 'fixed' })).not.toBe(big.format(inches, { notation: 'fixed' }));
    const r = lengthTextIn('0.001 mm', 'in', { convert: true });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toContain('no exact value');
  });

  it('refuses what the engine cannot read, saying what it expected', () => {
    const r = lengthTextIn('0.001 furlongs', 'in');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toContain('is not a unit Benchproof reads');
  });
});

describe('picometresToExactText', () => {
  it('writes exact lengths without trailing zeros', () => {
    // NIST SP 811 appendix B: 1 in = 25.4 mm; a thou is 0.001 in, a tenth 0.0001 in.
    expect(picometresToExactText(picometresPerUnit.in, 'mm')).toBe('25.4');
    expect(picometresToExactText(picometresPerUnit.tenth, 'mm')).toBe('0.00254');
    expect(picometresToExactText(picometresPerUnit.tenth, 'thou')).toBe('0.1');
    expect(picometresToExactText(-picometresPerUnit.tenth, 'in')).toBe('-0.0001');
    expect(picometresToExactText(0n, 'in')).toBe('0');
    // 1 µm = 0.001 mm (SI prefixes, BIPM SI Brochure, 9th ed., table 7).
    expect(picometresToExactText(picometresPerUnit.um, 'mm')).toBe('0.001');
  });

  it('answers null when the length needs more places than the unit holds', () => {
    // 0.001 mm = 1/25 400 in: endless in decimal (see above), so never exact at 8 places.
    expect(picometresToExactText(picometresPerUnit.mm / 1000n, 'in')).toBeNull();
    // 1 pm in mm needs 9 places, which mm holds; in µm it needs 6, which µm holds.
    expect(picometresToExactText(1n, 'mm')).toBe('0.000000001');
    expect(picometresToExactText(1n, 'um')).toBe('0.000001');
  });
});

describe('calibration due date and state', () => {
  // Gregorian calendar (ISO 8601-1:2019): 2024 is a leap year (divisible by 4, not a century),
  // 2023 and 2026 are not.
  it('adds the interval in calendar days, across month ends and a leap day', () => {
    expect(calibrationDueOn('2024-02-28', 2)).toBe('2024-03-01');
    expect(calibrationDueOn('2023-02-28', 1)).toBe('2023-03-01');
    expect(calibrationDueOn('2024-01-01', 366)).toBe('2025-01-01');
    expect(calibrationDueOn('2025-06-10', 365)).toBe('2026-06-10');
    expect(calibrationDueOn('2025-12-31', 1)).toBe('2026-01-01');
  });

  it('has no due date without both a last calibration and an interval', () => {
    expect(calibrationDueOn(null, 365)).toBeNull();
    expect(calibrationDueOn('2025-06-10', null)).toBeNull();
  });

  it('is in date on the due day itself and overdue the day after', () => {
    const i = { lastCalibratedOn: '2025-06-10', calibrationIntervalDays: 365 };
    expect(calibrationStateOn(i, '2026-06-09')).toBe('in-date');
    expect(calibrationStateOn(i, '2026-06-10')).toBe('in-date');
    expect(calibrationStateOn(i, '2026-06-11')).toBe('overdue');
    expect(calibrationStateOn({ lastCalibratedOn: null, calibrationIntervalDays: null }, '2026-06-11')).toBe('no-record');
  });
});

describe('instrument bodies name the field they refuse', () => {
  it('accepts a plain micrometer and fills the defaults', () => {
    const r = instrumentInputSchema.parse(micrometer);
    expect(r).toMatchObject({ serial: '', statedUncertainty: null, lastCalibratedOn: null, retired: false });
  });

  it.each([
    ['a unit the engine cannot read', { unit: 'furlong' }, 'unit'],
    ['a resolution of 0', { resolution: '0' }, 'resolution'],
    ['a negative resolution', { resolution: '-0.0001' }, 'resolution'],
    ['a resolution that is not a length', { resolution: 'fine' }, 'resolution'],
    ['a resolution in another unit', { resolution: '0.001 mm' }, 'resolution'],
    ['a negative stated uncertainty', { statedUncertainty: '-0.00005' }, 'statedUncertainty'],
    ['a date that is not a date', { lastCalibratedOn: '2026-02-30' }, 'lastCalibratedOn'],
    ['a date in another form', { lastCalibratedOn: '10/06/2025' }, 'lastCalibratedOn'],
    ['an interval of 0 days', { calibrationIntervalDays: 0 }, 'calibrationIntervalDays'],
    ['an unknown kind', { kind: 'vernier-protractor' }, 'kind'],
  ])('refuses %s', (_what, change, field) => {
    // Every problem found is reported at that one field (a date in another form breaks two rules of it).
    expect([...new Set(paths(instrumentInputSchema.safeParse({ ...micrometer, ...change })))]).toEqual([field]);
  });

  it('a patch that changes the unit must send the resolution in it', () => {
    expect(paths(instrumentPatchSchema.safeParse({ lockVersion: 1, unit: 'mm' }))).toEqual(['resolution']);
    expect(instrumentPatchSchema.safeParse({ lockVersion: 1, unit: 'mm', resolution: '0.001' }).success).toBe(true);
    expect(paths(instrumentPatchSchema.safeParse({ name: 'x' }))).toEqual(['lockVersion']);
  });

  it('a zero check needs a calendar date and two lengths', () => {
    expect(paths(zeroCheckInputSchema.safeParse({ checkedOn: '2026-13-01', standardSize: '0', shown: '0.0001' }))).toEqual(['checkedOn']);
    expect(paths(zeroCheckInputSchema.safeParse({ checkedOn: '2026-12-01', standardSize: '', shown: '0.0001' }))).toEqual(['standardSize']);
    expect(zeroCheckInputSchema.parse({ checkedOn: '2026-12-01', standardSize: '0', shown: '0.0001' })).toMatchObject({ momentId: null, note: '' });
  });
});
