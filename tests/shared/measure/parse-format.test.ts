import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  defaultUnitFor,
  displayDecimals,
  formatLength,
  formatNumber,
  formatResult,
  formatUncertainty,
  systemOf,
} from '@shared/measure/format';
import { parseLength } from '@shared/measure/parse';
import { type LengthUnit, picometresPerUnit } from '@shared/measure/units';

function parsed(text: string) {
  const result = parseLength(text);
  if (!result.ok) throw new Error(`expected "${text}" to parse: ${result.message}`);
  return result.length;
}

function refusal(text: string, options?: { defaultUnit?: LengthUnit }) {
  const result = parseLength(text, options);
  if (result.ok) throw new Error(`expected "${text}" to be refused`);
  return result.message;
}

describe('reading what builders type', () => {
  it.each([
    ['0.5642 in', 'in', '0.5642'],
    ['0.5642"', 'in', '0.5642'],
    ['0.5642 ″', 'in', '0.5642'],
    ['0.5642in', 'in', '0.5642'],
    ['2 inches', 'in', '2'],
    ['564.2 thou', 'thou', '564.2'],
    ['3.5 thou', 'thou', '3.5'],
    ['3.5thou', 'thou', '3.5'],
    ['3.5 mil', 'thou', '3.5'],
    ['3.5 mils', 'thou', '3.5'],
    ['14.33 mm', 'mm', '14.33'],
    ['14.33mm', 'mm', '14.33'],
    ['14.33 millimetres', 'mm', '14.33'],
    ['14.33 Millimeter', 'mm', '14.33'],
    ['2.9 tenths', 'tenth', '2.9'],
    ['1 tenth', 'tenth', '1'],
    ['12 µm', 'um', '12'],
    ['12 μm', 'um', '12'], // Greek mu, which phones often produce instead of the micro sign
    ['12um', 'um', '12'],
    ['12 microns', 'um', '12'],
    ['12 micrometres', 'um', '12'],
    ['.5 mm', 'mm', '0.5'],
    ['−0.0002 in', 'in', '-0.0002'],
  ] as const)('reads %s as %s %s', (text, unit, number) => {
    const length = parsed(text);
    expect(length.unit).toBe(unit);
    expect(length.text).toBe(number);
  });

  it('keeps the four places of 0.5640 in, and the resolution they imply', () => {
    const length = parsed('0.5640 in');
    expect(length.text).toBe('0.5640');
    expect(length.lastPlacePm).toBe(picometresPerUnit.tenth); // one step of the 4th place = 0.0001 in
    expect(length.pm).toBe(5640n * picometresPerUnit.tenth);
  });

  it('gives the same length for the same size in different units', () => {
    // 1 thou = 0.001 in, 1 tenth = 0.0001 in (definitions); 14.33 mm and 14330 µm likewise.
    expect(parsed('564.2 thou').pm).toBe(parsed('0.5642 in').pm);
    expect(parsed('5642 tenths').pm).toBe(parsed('0.5642 in').pm);
    expect(parsed('14.33 mm').pm).toBe(parsed('14330 um').pm);
  });

  it('uses the unit chosen beside the box when the text has none', () => {
    expect(parseLength('0.003', { defaultUnit: 'in' })).toMatchObject({ ok: true, length: { unit: 'in' } });
  });

  it('refuses what it cannot read, saying what was expected', () => {
    expect(refusal('')).toMatch(/Enter a number and a unit/);
    expect(refusal('0.003')).toMatch(/Add a unit.*thou.*mm/);
    expect(refusal('3 ft')).toMatch(/"ft" is not a unit.*in.*thou.*tenths.*mm.*µm/);
    expect(refusal('about 3 thou')).toMatch(/does not start with a number/);
    expect(refusal('14,33 mm')).toMatch(/decimal point, not a comma/);
    expect(refusal('1/64 in')).toMatch(/Fractions/);
    expect(refusal('1e-4 in')).toMatch(/in full/);
    expect(refusal('0.00001 tenths')).toMatch(/at most 4/);
    expect(refusal('3000 mm')).toMatch(/2 m/);
    expect(refusal('1'.repeat(80) + ' mm')).toMatch(/too long/);
  });

  it('never throws, whatever the text', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 80 }), (text) => {
        const result = parseLength(text);
        expect(typeof result.ok).toBe('boolean');
        if (!result.ok) expect(result.message.length).toBeGreaterThan(0);
      }),
      { numRuns: 2000 },
    );
  });
});

describe('showing lengths at their resolution', () => {
  // Our rule (format.ts): the display step is the largest power of ten of the display unit not
  // coarser than the resolution. Expected values below are arithmetic on that rule.
  const tenthRes = picometresPerUnit.tenth; // 0.0001 in
  const hundredthMm = picometresPerUnit.mm / 100n; // 0.01 mm

  it.each([
    [tenthRes, 'in', 4],
    [tenthRes, 'thou', 1],
    [tenthRes, 'tenth', 0],
    [tenthRes, 'mm', 3], // 0.00254 mm → 0.001 mm step
    [tenthRes, 'um', 0], // 2.54 µm → 1 µm step
    [hundredthMm, 'mm', 2],
    [hundredthMm, 'um', 0],
    [hundredthMm, 'in', 4], // 0.000394 in → 0.0001 in step
    [hundredthMm, 'thou', 1],
    [picometresPerUnit.mm / 500n, 'mm', 3], // a 0.002 mm vernier micrometer → 3 places
  ] as const)('a resolution of %s pm shows in %s with %s decimal places', (resolution, unit, decimals) => {
    expect(displayDecimals(resolution, unit)).toBe(decimals);
  });

  it('never shows a step coarser than the resolution, nor ten times finer', () => {
    fc.assert(
      fc.property(
        fc.bigInt({ min: 1n, max: 10n ** 10n }),
        fc.constantFrom<LengthUnit>('in', 'thou', 'tenth', 'mm', 'um'),
        (resolution, unit) => {
          const d = displayDecimals(resolution, unit);
          const stepPm = Number(picometresPerUnit[unit]) / 10 ** d;
          expect(stepPm).toBeLessThanOrEqual(Number(resolution) * (1 + 1e-12));
          if (d > 0) expect(stepPm * 10).toBeGreaterThan(Number(resolution) * (1 - 1e-12));
        },
      ),
    );
  });

  it('shows a 0.5642 in reading as 14.331 mm, 14331 µm and 564.2 thou', () => {
    const { pm, lastPlacePm } = parsed('0.5642 in');
    // 0.5642 × 25.4 = 14.33068 mm (NIST SP 811 exact inch), rounded to the rule's step.
    expect(formatLength(pm, 'mm', lastPlacePm)).toBe('14.331 mm');
    expect(formatLength(pm, 'um', lastPlacePm)).toBe('14331 µm');
    expect(formatLength(pm, 'thou', lastPlacePm)).toBe('564.2 thou');
    expect(formatLength(pm, 'in', lastPlacePm)).toBe('0.5642 in');
  });

  it('rounds half away from zero for display, exactly', () => {
    const half = parsed('0.00125 in').pm; // exactly half a step at 4 places
    expect(formatNumber(half, 'in', 4)).toBe('0.0013');
    expect(formatNumber(-half, 'in', 4)).toBe('−0.0013');
  });

  it('writes "tenth" for exactly one and "tenths" otherwise', () => {
    expect(formatLength(picometresPerUnit.tenth, 'tenth', picometresPerUnit.tenth)).toBe('1 tenth');
    expect(formatLength(29n * picometresPerUnit.tenth, 'tenth', picometresPerUnit.tenth)).toBe('29 tenths');
  });

  it('gives uncertainties two significant digits and a result the same last place (GUM 7.2.6)', () => {
    expect(formatUncertainty(0.7332, 'um')).toBe('0.73 µm');
    expect(formatUncertainty(7.332, 'in')).toBe('0.00029 in');
    const { value, uncertainty } = formatResult(parsed('0.0035 in').pm, 7.332, 'in');
    expect(value).toBe('0.00350 in');
    expect(uncertainty).toBe('0.00029 in');
  });

  it('maps each system to its units', () => {
    expect(defaultUnitFor('imperial')).toBe('in');
    expect(defaultUnitFor('metric')).toBe('mm');
    expect(systemOf('tenth')).toBe('imperial');
    expect(systemOf('um')).toBe('metric');
  });
});
