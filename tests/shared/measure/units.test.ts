import fc from 'fast-check';
import Qty from 'js-quantities';
import { all, create } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { decimalFromNumber, decimalToText, parseDecimalText } from '@shared/measure/decimal';
import {
  decimalToPicometres,
  type LengthUnit,
  lengthUnits,
  maxExactDecimals,
  picometresPerUnit,
  picometresToMicrometres,
} from '@shared/measure/units';

// Exact decimal arithmetic as an independent referee for our integer-picometre conversions.
const big = create(all ?? {}, { number: 'BigNumber', precision: 64 });
const mathjsUnit: Record<LengthUnit, { name: string; factor: string }> = {
  in: { name: 'inch', factor: '1' },
  thou: { name: 'mil', factor: '1' }, // mathjs "mil" = 0.001 inch
  tenth: { name: 'mil', factor: '0.1' }, // a tenth is 0.1 mil; mathjs has no "tenth"
  mm: { name: 'mm', factor: '1' },
  um: { name: 'um', factor: '1' },
};
const qtyUnit: Record<LengthUnit, { name: string; factor: number }> = {
  in: { name: 'in', factor: 1 },
  thou: { name: 'mil', factor: 1 },
  tenth: { name: 'mil', factor: 0.1 },
  mm: { name: 'mm', factor: 1 },
  um: { name: 'um', factor: 1 },
};

/** Exact µm as decimal text from picometres. */
function pmToMicrometreText(pm: bigint): string {
  return decimalToText({ coefficient: pm, scale: 6 }).replace(/\.?0+$/, '').replace(/^-?$/, '0');
}

/** Random decimal text in a unit with no more places than that unit holds exactly, within 2 m. */
function decimalIn(unit: LengthUnit) {
  const maxWhole: Record<LengthUnit, number> = { in: 78, thou: 78_000, tenth: 780_000, mm: 2000, um: 2_000_000 };
  return fc
    .record({
      whole: fc.integer({ min: 0, max: maxWhole[unit] - 1 }),
      places: fc.integer({ min: 0, max: maxExactDecimals[unit] }),
      fraction: fc.bigInt({ min: 0n, max: 10n ** 9n }),
      negative: fc.boolean(),
    })
    .map(({ whole, places, fraction, negative }) => {
      const digits = places === 0 ? '' : `.${(fraction % 10n ** BigInt(places)).toString().padStart(places, '0')}`;
      return `${negative ? '-' : ''}${whole}${digits}`;
    });
}

describe('the inch and its parts are exact', () => {
  it('holds one inch as exactly 25.4 mm', () => {
    // NIST SP 811 (2008), appendix B: 1 in = 2.54 cm exactly, i.e. 25 400 000 000 pm.
    expect(picometresPerUnit.in).toBe(25_400_000_000n);
    expect(picometresPerUnit.in * 10n).toBe(picometresPerUnit.mm * 254n);
  });

  it('holds a thou as 0.001 in and a tenth as 0.0001 in', () => {
    // Definitions: thou (mil) = 1/1000 in; "tenth" = one ten-thousandth of an inch (trade usage).
    expect(picometresPerUnit.thou * 1000n).toBe(picometresPerUnit.in);
    expect(picometresPerUnit.tenth * 10n).toBe(picometresPerUnit.thou);
    expect(picometresPerUnit.um * 1000n).toBe(picometresPerUnit.mm);
  });

  it('allows exactly the decimal places that stay whole picometres', () => {
    // 1 in = 254 × 10^8 pm, so 8 places; thou 5, tenth 4, mm 9, µm 6 (arithmetic from the definitions).
    expect(maxExactDecimals).toEqual({ in: 8, thou: 5, tenth: 4, mm: 9, um: 6 });
    expect(decimalToPicometres(parseDecimalText('0.00000001')!, 'in')).toBe(254n);
    expect(decimalToPicometres(parseDecimalText('0.000000001')!, 'in')).toBeNull();
  });

  it('adds 0.1 mm and 0.2 mm to exactly 0.3 mm, where binary floating point does not', () => {
    const a = decimalToPicometres(decimalFromNumber(0.1)!, 'mm')!;
    const b = decimalToPicometres(decimalFromNumber(0.2)!, 'mm')!;
    expect(0.1 + 0.2).not.toBe(0.3);
    expect(a + b).toBe(decimalToPicometres(decimalFromNumber(0.3)!, 'mm'));
  });
});

describe('exact decimals', () => {
  it('keeps the trailing zeros people type', () => {
    expect(parseDecimalText('0.5640')).toEqual({ coefficient: 5640n, scale: 4 });
    expect(decimalToText(parseDecimalText('0.5640')!)).toBe('0.5640');
    expect(parseDecimalText('.5')).toEqual({ coefficient: 5n, scale: 1 });
    expect(parseDecimalText('-3.5')).toEqual({ coefficient: -35n, scale: 1 });
  });

  it('reads JSON numbers as their shortest decimal, including exponent forms', () => {
    expect(decimalFromNumber(0.5642)).toEqual({ coefficient: 5642n, scale: 4 });
    expect(decimalFromNumber(1e-7)).toEqual({ coefficient: 1n, scale: 7 });
    expect(decimalFromNumber(2.5e-7)).toEqual({ coefficient: 25n, scale: 8 });
    expect(decimalFromNumber(1e21)).toEqual({ coefficient: 10n ** 21n, scale: 0 });
    expect(decimalFromNumber(Number.NaN)).toBeNull();
    expect(decimalFromNumber(Number.POSITIVE_INFINITY)).toBeNull();
  });

  it('round-trips every finite number through its decimal', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
        const d = decimalFromNumber(x)!;
        expect(Number(decimalToText(d))).toBe(x === 0 ? 0 : x);
      }),
    );
  });
});

describe('conversions agree with independent libraries', () => {
  for (const unit of lengthUnits) {
    it(`converts ${unit} to µm exactly as mathjs BigNumber arithmetic does`, () => {
      fc.assert(
        fc.property(decimalIn(unit), (text) => {
          const pm = decimalToPicometres(parseDecimalText(text)!, unit)!;
          const { name, factor } = mathjsUnit[unit];
          const expected = big
            .unit(big.multiply(big.bignumber(text), big.bignumber(factor)) as never, name)
            .toNumeric('um') as unknown as { toFixed(): string };
          const expectedText = big.bignumber(expected.toFixed()).toFixed();
          expect(pmToMicrometreText(pm)).toBe(expectedText === '-0' ? '0' : expectedText);
        }),
        { numRuns: 300 },
      );
    });

    it(`converts ${unit} to mm within 1e-12 relative of js-quantities`, () => {
      fc.assert(
        fc.property(decimalIn(unit), (text) => {
          const pm = decimalToPicometres(parseDecimalText(text)!, unit)!;
          const { name, factor } = qtyUnit[unit];
          const expected = Qty(Number(text) * factor, name).to('mm').scalar;
          const ours = picometresToMicrometres(pm) / 1000;
          expect(Math.abs(ours - expected)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
        }),
        { numRuns: 300 },
      );
    });
  }

  it('agrees with js-quantities on the inch itself', () => {
    // js-quantities defines the inch from the international yard (1959): 25.4 mm.
    expect(Qty('1 in').to('mm').scalar).toBe(25.4);
    expect(picometresToMicrometres(picometresPerUnit.in)).toBe(25_400);
  });
});
