import { describe, expect, it } from 'vitest';
import { convertExact, type AnyUnit } from '@shared/measure/quantities';
import { figureTextIn, lookupAnyUnit, parseFigureText } from '@shared/measure/quantity-text';
import { Fraction, fractionToExactText } from '@shared/measure/exact';

function read(text: string, options: Parameters<typeof parseFigureText>[1] = {}) {
  const parsed = parseFigureText(text, options);
  if (!parsed.ok) throw new Error(`expected "${text}" to read: ${parsed.message}`);
  return parsed.figure;
}

describe('figures of every quantity as people type them', () => {
  it.each<[string, AnyUnit, string]>([
    ['64.2 cc', 'cc', '64.2'],
    ['64.20cc', 'cc', '64.20'],
    ['64.2 ml', 'ml', '64.2'],
    ['3.92 cu in', 'cu_in', '3.92'],
    ['3.92 in³', 'cu_in', '3.92'],
    ['108°', 'deg', '108'],
    ['-4 deg', 'deg', '-4'],
    ['35 lb-ft', 'lbf_ft', '35'],
    ['35 ft-lbs', 'lbf_ft', '35'],
    ['35 lbf·ft', 'lbf_ft', '35'],
    ['420 in-lb', 'lbf_in', '420'],
    ['47 N·m', 'N_m', '47'],
    ['47 Nm', 'N_m', '47'],
    ['45 psi', 'psi', '45'],
    ['3.1 bar', 'bar', '3.1'],
    ['310 kPa', 'kPa', '310'],
    ['92 °C', 'degC', '92'],
    ['198°F', 'degF', '198'],
    ['12.5 s', 's', '12.5'],
    ['512 g', 'g', '512'],
    ['10.2:1', '1', '10.2'],
    ['.5 cc', 'cc', '0.5'],
  ])('%s reads as %s, keeping the digits typed', (text, unit, number) => {
    const figure = read(text);
    expect(figure.unit).toBe(unit);
    expect(figure.text).toBe(number);
  });

  it('reads lengths exactly as before, trailing zeros kept (the resolution they imply)', () => {
    const figure = read('0.5640 in');
    expect(figure.unit).toBe('in');
    expect(figure.text).toBe('0.5640');
    expect(figure.decimal.scale).toBe(4);
  });

  it('takes the default unit for a bare number, and refuses a unit of another quantity by name', () => {
    expect(read('64.2', { defaultUnit: 'cc' }).unit).toBe('cc');
    const wrong = parseFigureText('35 lb-ft', { quantity: 'length' });
    expect(wrong.ok).toBe(false);
    if (!wrong.ok) expect(wrong.message).toMatch(/pound-force feet is not a length: enter it in in, thou, tenths, mm, µm/);
    const alsoWrong = parseFigureText('64.2 cc', { defaultUnit: 'lbf_ft' });
    expect(alsoWrong.ok).toBe(false);
  });

  it('refuses a comma for a point, a word that is no unit, and text without a number', () => {
    expect(parseFigureText('64,2 cc')).toEqual({ ok: false, message: 'Use a decimal point, not a comma (64.2 cc, not 64,2 cc).' });
    const unknown = parseFigureText('12 furlongs', { quantity: 'length' });
    expect(unknown.ok).toBe(false);
    const none = parseFigureText('cc', { defaultUnit: 'cc' });
    expect(none.ok).toBe(false);
    if (!none.ok) expect(none.message).toMatch(/does not start with a number.*64\.2 cc/);
  });

  it('looks every unit code up by itself', () => {
    for (const unit of ['in', 'thou', 'tenth', 'mm', 'um', 'cc', 'ml', 'cu_in', 'deg', 'N_m', 'lbf_ft', 'lbf_in', 'psi', 'bar', 'kPa', 'degC', 'degF', 's', 'g'] as const) {
      expect(lookupAnyUnit(unit), unit).toBe(unit);
    }
  });

  it('converts a typed figure into a record’s unit only when the value is exact', () => {
    // 1 ml = 1 cm³ = 1 cc (NIST SP 811 B.8, litre: 1 L = 1 dm³).
    expect(figureTextIn('64.2 ml', 'cc', { convert: true })).toMatchObject({ ok: true, text: '64.2' });
    // 1 psi = 6.894757293168361 kPa (NIST SP 811 B.8, 6.894 757 E+03 Pa, exact from 1 lbf and 1 in): no exact decimal.
    const psi = figureTextIn('45 psi', 'kPa', { convert: true });
    expect(psi.ok).toBe(false);
    // Without `convert`, a typed unit must be the record's.
    expect(figureTextIn('64.2 ml', 'cc').ok).toBe(false);
  });

  it('converts exactly with the NIST SP 811 B.8 factors behind the aliases', () => {
    // 1 lbf·ft = 1.3558179483314004 N·m (NIST SP 811 B.8: 1 lbf = 4.4482216152605 N, 1 ft = 0.3048 m, both exact).
    expect(fractionToExactText(convertExact(new Fraction(read('1 lb-ft').text), 'lbf_ft', 'N_m'))).toBe('1.3558179483314004');
    // 1 ft = 12 in exactly, so 12 lbf·in = 1 lbf·ft.
    expect(fractionToExactText(convertExact(new Fraction(read('12 in-lb').text), 'lbf_in', 'lbf_ft'))).toBe('1');
  });
});
