import { describe, expect, it } from 'vitest';
import { convertedQuantityDisplay, decimalsOfNumber, firstNumberDecimals, quantityFigureFor, quantityFigureIn, readerUnitFor, shortDecimalText } from '@shared/public/quantity-figures';

/*
 * Published figures of other quantities than a length, as readers see them: in their own unit,
 * or in their system's usual one. Conversions by the exact factors of NIST SP 811 (2008) B.8;
 * the places a converted figure keeps by B.7.2. Figures invented.
 */

describe('the unit a reader sees a figure in', () => {
  it('keeps a unit of the reader’s system or of both, and volumes in cc for everyone', () => {
    expect(readerUnitFor('lbf_ft', 'imperial')).toBe('lbf_ft');
    expect(readerUnitFor('lbf_in', 'imperial')).toBe('lbf_in');
    expect(readerUnitFor('deg', 'metric')).toBe('deg');
    expect(readerUnitFor('1', 'metric')).toBe('1');
    expect(readerUnitFor('cc', 'imperial')).toBe('cc');
    expect(readerUnitFor('ml', 'imperial')).toBe('ml');
  });

  it('takes the other system’s usual unit otherwise', () => {
    expect(readerUnitFor('lbf_ft', 'metric')).toBe('N_m');
    expect(readerUnitFor('N_m', 'imperial')).toBe('lbf_ft');
    expect(readerUnitFor('psi', 'metric')).toBe('kPa');
    expect(readerUnitFor('bar', 'imperial')).toBe('psi');
    expect(readerUnitFor('degF', 'metric')).toBe('degC');
    expect(readerUnitFor('cu_in', 'metric')).toBe('cc');
  });
});

describe('a figure in the reader’s system', () => {
  it('keeps the places it was read to when converted, and U to two significant digits', () => {
    // 35 lbf·ft = 47.45 N·m; a step of 1 lbf·ft is 1.36 N·m, so whole N·m. U 1.2 lbf·ft = 1.63 N·m.
    const torque = { unit: 'lbf_ft' as const, value: 35, expandedUncertainty: 1.2, decimals: 0 };
    expect(quantityFigureFor(torque, 'metric')).toEqual({ unit: 'N_m', value: '47 N·m', uncertainty: '1.6 N·m', main: '47 N·m ± 1.6 N·m' });
    expect(quantityFigureFor(torque, 'imperial').main).toBe('35 lbf·ft ± 1.2 lbf·ft');
    // 45 psi = 310.26 kPa; a step of 1 psi is 6.9 kPa, so whole kPa.
    expect(quantityFigureFor({ unit: 'psi', value: 45, expandedUncertainty: 0.8, decimals: 0 }, 'metric').main).toBe('310 kPa ± 5.5 kPa');
    expect(quantityFigureFor({ unit: 'cc', value: 64.2, expandedUncertainty: 0.3, decimals: 1 }, 'imperial').main).toBe('64.2 cc ± 0.30 cc');
  });

  it('puts a value without stated places at U’s place (GUM 7.2.6), and a ratio without a unit', () => {
    expect(quantityFigureIn({ unit: '1', value: 10.174452, expandedUncertainty: 0.081, decimals: null }).main).toBe('10.174 ± 0.081');
  });

  it('takes the scale’s offset for a temperature, but not for its U', () => {
    // NIST SP 811 B.9: t/°C = (t/°F − 32)/1.8: 212 °F is 100 °C; a U of 1.8 °F is 1 °C. A step of 1 °F is 0.56 °C, so one place (B.7.2).
    expect(quantityFigureIn({ unit: 'degF', value: 212, expandedUncertainty: 1.8, decimals: 0 }, 'degC').main).toBe('100.0 °C ± 1.0 °C');
  });

  it('is the server’s `converted` only when the unit changes', () => {
    const torque = { unit: 'lbf_ft' as const, value: 35, expandedUncertainty: 1.2, decimals: 0 };
    expect(convertedQuantityDisplay(torque, 2, 'metric')).toBe('47 N·m ± 1.6 N·m (k = 2)');
    expect(convertedQuantityDisplay(torque, 2, 'imperial')).toBeNull();
    expect(convertedQuantityDisplay(torque, 2, null)).toBeNull();
    expect(convertedQuantityDisplay({ unit: 'cc', value: 64.2, expandedUncertainty: 0.3, decimals: 1 }, 2, 'imperial')).toBeNull();
  });
});

describe('decimal places of figures as written', () => {
  it('reads them from a display and from a double', () => {
    expect(firstNumberDecimals('35 lbf·ft ± 1.2 lbf·ft (k = 2)')).toBe(0);
    expect(firstNumberDecimals('10.174, 95 % interval 10.095 to 10.255')).toBe(3);
    expect(firstNumberDecimals('no figure')).toBeNull();
    expect(shortDecimalText(9.500000000000002)).toBe('9.5');
    expect(shortDecimalText(1e-7)).toBe('0.0000001');
    expect(decimalsOfNumber(10.25)).toBe(2);
    expect(decimalsOfNumber(40)).toBe(0);
  });
});
