import fc from 'fast-check';
import Fraction from 'fraction.js';
import Qty from 'js-quantities';
import { unit as mathUnit } from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  allUnits,
  type AnyUnit,
  convertExact,
  convertNumber,
  defaultUnitFor,
  describeDimension,
  type Dimension,
  dimensionOf,
  divideDimensions,
  factorNumber,
  fractionFromNumber,
  fromBase,
  isAnyUnit,
  multiplyDimensions,
  powerDimension,
  quantityDimensions,
  quantityKinds,
  quantityOf,
  quantityOfDimension,
  sameDimension,
  toBase,
  unitsOf,
  unitSystemsForDefaults,
  unitTable,
} from '@shared/measure/quantities';

/** Exact decimal text to a fraction (fraction.js parses strings exactly, numbers approximately). */
const q = (text: string) => new Fraction(text);

/** Asserts two fractions are the same rational, showing both as a/b on failure. */
function expectExact(actual: Fraction, expected: Fraction | string) {
  const want = typeof expected === 'string' ? q(expected) : expected;
  expect(actual.toFraction()).toBe(want.toFraction());
}

function expectRelativelyClose(actual: number, expected: number, tolerance = 1e-12) {
  const scale = Math.max(Math.abs(expected), Number.MIN_VALUE);
  expect(Math.abs(actual - expected) / scale, `${actual} vs ${expected}`).toBeLessThan(tolerance);
}

const LENGTH: Dimension = [1, 0, 0, 0, 0];
const MASS: Dimension = [0, 1, 0, 0, 0];
const TIME: Dimension = [0, 0, 1, 0, 0];
const FORCE = divideDimensions(multiplyDimensions(MASS, LENGTH), powerDimension(TIME, 2));

describe('the unit table', () => {
  it('lists every unit once, under exactly one quantity, in picker order', () => {
    const grouped = quantityKinds.flatMap((kind) => unitsOf(kind));
    expect(grouped).toEqual([...allUnits]);
    expect(new Set(allUnits).size).toBe(allUnits.length);
    expect(unitsOf('length')).toEqual(['in', 'thou', 'tenth', 'mm', 'um']);
    expect(unitsOf('volume')).toEqual(['cc', 'ml', 'cu_in']);
    expect(unitsOf('torque')).toEqual(['N_m', 'lbf_ft', 'lbf_in']);
    expect(unitsOf('temperature')).toEqual(['degC', 'degF']);
    expect(unitsOf('ratio')).toEqual(['1']);
  });

  it('gives each unit its display symbol', () => {
    const symbols = Object.fromEntries(allUnits.map((u) => [u, unitTable[u].symbol]));
    expect(symbols).toEqual({
      in: 'in',
      thou: 'thou',
      tenth: 'tenths',
      mm: 'mm',
      um: 'µm',
      cc: 'cc',
      ml: 'ml',
      cu_in: 'in³',
      deg: '°',
      N_m: 'N·m',
      lbf_ft: 'lbf·ft',
      lbf_in: 'lbf·in',
      psi: 'psi',
      bar: 'bar',
      kPa: 'kPa',
      degC: '°C',
      degF: '°F',
      s: 's',
      g: 'g',
      '1': '',
    });
    for (const u of allUnits) expect(unitTable[u].name.length).toBeGreaterThan(0);
    expect(unitTable.cc.name).toBe('cubic centimetres (cc)');
    expect(unitTable.lbf_ft.name).toBe('pound-force feet');
  });

  it('has offsets only on °C and °F, and each unit carries its quantity’s dimension', () => {
    for (const u of allUnits) {
      const info = unitTable[u];
      if (u !== 'degC' && u !== 'degF') expectExact(info.offset, '0');
      expect(info.dimension).toEqual(quantityDimensions[info.quantity]);
      expect(dimensionOf(u)).toBe(info.dimension);
      expect(quantityOf(u)).toBe(info.quantity);
    }
  });

  it('marks the unit system of each unit', () => {
    expect(unitTable.in.system).toBe('imperial');
    expect(unitTable.psi.system).toBe('imperial');
    expect(unitTable.mm.system).toBe('metric');
    expect(unitTable.kPa.system).toBe('metric');
    expect(unitTable.deg.system).toBe('any');
    expect(unitTable['1'].system).toBe('any');
  });

  it('is frozen, so nobody can change a factor under everyone else', () => {
    expect(Object.isFrozen(unitTable)).toBe(true);
    expect(Object.isFrozen(unitTable.in)).toBe(true);
    expect(Object.isFrozen(unitTable.in.factor)).toBe(true);
    expect(Object.isFrozen(unitTable.in.dimension)).toBe(true);
  });

  it('recognises unit codes and nothing else', () => {
    for (const u of allUnits) expect(isAnyUnit(u)).toBe(true);
    for (const x of ['inch', 'IN', 'toString', '', 1, null, undefined, {}]) expect(isAnyUnit(x)).toBe(false);
    expect(() => quantityOf('furlong' as AnyUnit)).toThrow(RangeError);
    expect(() => toBase(q('1'), 'furlong' as AnyUnit)).toThrow(RangeError);
  });
});

describe('factors are the exact NIST definitions', () => {
  it('holds the inch, thou and tenth exactly', () => {
    expectExact(unitTable.in.factor, '0.0254'); // NIST SP 811 B.8: inch to metre 2.54 E-02, exact (from memory)
    expectExact(unitTable.thou.factor, '0.0000254'); // thou (mil) = 0.001 in, NIST SP 811 B.8 "mil" (from memory)
    expectExact(unitTable.tenth.factor, '0.00000254'); // tenth = 0.0001 in, trade usage (from memory)
    expectExact(unitTable.mm.factor, '0.001'); // SI prefix milli, SP 811 table 5 (from memory)
    expectExact(unitTable.um.factor, '0.000001'); // SI prefix micro, SP 811 table 5 (from memory)
  });

  it('holds 1 in³ as exactly 16.387064 cc', () => {
    // NIST SP 811 B.8: cubic inch to cubic metre 1.638 706 4 E-05, exact (= 0.0254³) (from memory).
    expectExact(unitTable.cu_in.factor, '0.000016387064');
    expectExact(convertExact(q('1'), 'cu_in', 'cc'), '16.387064');
    // NIST SP 811 B.8: cubic centimetre and millilitre are both 1 E-06 m³, exact (from memory).
    expectExact(unitTable.cc.factor, '0.000001');
    expectExact(convertExact(q('1'), 'cc', 'ml'), '1');
  });

  it('builds the pound-force from the pound and standard gravity', () => {
    // NIST SP 811 B.8 footnote (from memory): 1 lbf = 0.45359237 kg × 9.80665 m/s²
    // = 4.4482216152605 N exactly.
    const lbf = q('0.45359237').mul(q('9.80665'));
    expectExact(lbf, '4.4482216152605');
    expectExact(unitTable.lbf_in.factor.div(unitTable.in.factor), lbf);
  });

  it('holds 1 lbf·ft as exactly 1.35581794833140040 N·m', () => {
    // 4.4482216152605 N × 0.3048 m (NIST SP 811 B.8 lbf and ft); B.8 rounds it to 1.355 818 E+00 (from memory).
    expectExact(convertExact(q('1'), 'lbf_ft', 'N_m'), '1.35581794833140040');
    expectExact(convertExact(q('12'), 'lbf_in', 'lbf_ft'), '1'); // 12 in = 1 ft, NIST SP 811 B.8 (from memory)
  });

  it('holds 1 lbf·in as exactly 0.11298482902761670 N·m', () => {
    // 4.4482216152605 N × 0.0254 m (NIST SP 811 B.8); B.8 rounds it to 1.129 848 E-01 (from memory).
    expectExact(convertExact(q('1'), 'lbf_in', 'N_m'), '0.11298482902761670');
  });

  it('holds 1 psi as the exact rational lbf/in², whose decimal never ends', () => {
    // psi = 4.4482216152605 N / 0.0254² m² (NIST SP 811 B.8 lbf and in, from memory);
    // B.8 rounds it to 6.894 757 E+03 (from memory).
    const psi = toBase(q('1'), 'psi');
    expectExact(psi, q('4.4482216152605').div(q('0.00064516')));
    expect(psi.toFraction()).toBe('8896443230521/1290320000');
    // 0.0254² = 64516 × 10⁻⁸ and 64516 = 2² × 127², so the factor 127 keeps it from terminating.
    expect(psi.d % 127n).toBe(0n);
    expect(psi.round(12).toString(12)).toBe('6894.757293168361');
  });

  it('converts bar, kPa and psi', () => {
    // NIST SP 811 B.8: bar to pascal 1.0 E+05, exact (from memory).
    expectExact(convertExact(q('1'), 'bar', 'kPa'), '100');
    // 1 bar / 1 psi = 10⁵ / (4.4482216152605 / 0.00064516), from the factors above;
    // about 14.5038 psi per bar (from memory).
    const psiPerBar = convertExact(q('1'), 'bar', 'psi');
    expectExact(psiPerBar, q('100000').mul(q('0.00064516')).div(q('4.4482216152605')));
    expect(psiPerBar.round(12).toString(12)).toBe('14.503773773021');
  });

  it('converts temperatures with their offsets', () => {
    // NIST SP 811 B.9: T/K = t/°C + 273.15 and T/K = (t/°F + 459.67)/1.8, both exact (from memory).
    expectExact(toBase(q('100'), 'degC'), '373.15');
    expectExact(toBase(q('212'), 'degF'), '373.15');
    expectExact(convertExact(q('212'), 'degF', 'degC'), '100');
    expectExact(convertExact(q('-40'), 'degF', 'degC'), '-40'); // the scales cross at −40 (arithmetic from B.9)
    expectExact(convertExact(q('32'), 'degF', 'degC'), '0');
    expectExact(toBase(q('0'), 'degF'), q('459.67').mul(q('5')).div(q('9')));
    expectExact(unitTable.degF.factor, q('5').div(q('9')));
  });

  it('treats a temperature difference without the offset', () => {
    // NIST SP 811 B.9: a 1 °F interval is 5/9 K, so a 9 °F rise is a 5 K (and 5 °C) rise (from memory).
    expectExact(toBase(q('9'), 'degF', { difference: true }), '5');
    expectExact(convertExact(q('9'), 'degF', 'degC', { difference: true }), '5');
    expectExact(fromBase(q('5'), 'degF', { difference: true }), '9');
    // Without the flag, 9 °F is an absolute temperature: (9 + 459.67) × 5/9 K.
    expectExact(toBase(q('9'), 'degF'), q('468.67').mul(q('5')).div(q('9')));
  });

  it('holds the remaining base units', () => {
    expectExact(unitTable.g.factor, '0.001'); // kilogram is the SI base, SP 811 table 1 (from memory)
    expectExact(unitTable.deg.factor, '1'); // the degree is our own base for angle (no trig)
    expectExact(unitTable.s.factor, '1'); // SI base, SP 811 table 1 (from memory)
    expectExact(unitTable['1'].factor, '1');
  });
});

describe('round trips', () => {
  // Decimal text up to 9 places and ±10⁶, the range of anything read off an engine.
  const decimalText = fc
    .record({
      whole: fc.integer({ min: 0, max: 1_000_000 }),
      places: fc.integer({ min: 0, max: 9 }),
      digits: fc.integer({ min: 0, max: 999_999_999 }),
      negative: fc.boolean(),
    })
    .map(({ whole, places, digits, negative }) => {
      const tail = places === 0 ? '' : `.${String(digits).padStart(9, '0').slice(0, places)}`;
      return `${negative ? '-' : ''}${whole}${tail}`;
    });

  it('returns exactly to every unit through the base, as a value and as a difference', () => {
    fc.assert(
      fc.property(decimalText, fc.constantFrom(...allUnits), fc.boolean(), (text, u, difference) => {
        const value = q(text);
        expectExact(fromBase(toBase(value, u, { difference }), u, { difference }), value);
      }),
    );
  });

  it('returns exactly through every other unit of the same quantity', () => {
    const pairs = allUnits.flatMap((from) => unitsOf(quantityOf(from)).map((to) => [from, to] as const));
    fc.assert(
      fc.property(decimalText, fc.constantFrom(...pairs), fc.boolean(), (text, [from, to], difference) => {
        const value = q(text);
        const there = convertExact(value, from, to, { difference });
        expectExact(convertExact(there, to, from, { difference }), value);
      }),
    );
  });
});

describe('dimensions', () => {
  it('names the dimension of each quantity', () => {
    expect(quantityOfDimension(powerDimension(LENGTH, 3))).toBe('volume');
    expect(quantityOfDimension(multiplyDimensions(FORCE, LENGTH))).toBe('torque');
    expect(quantityOfDimension(divideDimensions(FORCE, powerDimension(LENGTH, 2)))).toBe('pressure');
    expect(quantityOfDimension([0, 0, 0, 0, 0])).toBe('ratio');
    expect(quantityOfDimension(divideDimensions(dimensionOf('cc'), dimensionOf('cu_in')))).toBe('ratio');
    for (const kind of quantityKinds) expect(quantityOfDimension(quantityDimensions[kind])).toBe(kind);
  });

  it('answers null for dimensions no quantity has', () => {
    expect(quantityOfDimension(powerDimension(LENGTH, 2))).toBeNull(); // area
    expect(quantityOfDimension(FORCE)).toBeNull();
    expect(quantityOfDimension(divideDimensions(LENGTH, TIME))).toBeNull(); // speed
    expect(quantityOfDimension(powerDimension(LENGTH, 0.5))).toBeNull();
  });

  it('multiplies, divides and raises dimensions', () => {
    expect(multiplyDimensions(dimensionOf('mm'), dimensionOf('mm'))).toEqual([2, 0, 0, 0, 0]);
    expect(divideDimensions(dimensionOf('cc'), dimensionOf('mm'))).toEqual([2, 0, 0, 0, 0]);
    expect(powerDimension(dimensionOf('psi'), -1)).toEqual([1, -1, 2, 0, 0]);
    // No −0 from 0 × −1, which toEqual would tell apart from 0.
    expect(powerDimension(dimensionOf('mm'), -1)).toEqual([-1, 0, 0, 0, 0]);
    expect(powerDimension(dimensionOf('cu_in'), 1 / 3)).toEqual(LENGTH);
    expect(() => powerDimension(LENGTH, Number.NaN)).toThrow(RangeError);
  });

  it('compares dimensions exponent by exponent', () => {
    expect(sameDimension(dimensionOf('N_m'), dimensionOf('lbf_in'))).toBe(true);
    expect(sameDimension(dimensionOf('N_m'), dimensionOf('psi'))).toBe(false);
    expect(sameDimension(dimensionOf('deg'), dimensionOf('1'))).toBe(false);
  });

  it('describes dimensions for messages', () => {
    expect(describeDimension(dimensionOf('in'))).toBe('a length');
    expect(describeDimension(dimensionOf('cc'))).toBe('a volume');
    expect(describeDimension(dimensionOf('deg'))).toBe('an angle');
    expect(describeDimension(dimensionOf('1'))).toBe('a ratio');
    expect(describeDimension([2, 1, 0, 0, 0])).toBe('m²·kg');
    expect(describeDimension(FORCE)).toBe('m·kg·s⁻²');
    expect(describeDimension([0, 0, -1, 1, 0])).toBe('s⁻¹·K');
    expect(describeDimension([0.5, 0, 0, 0, 0])).toBe('m^0.5');
  });
});

describe('conversions', () => {
  it('refuses to convert between quantities', () => {
    expect(() => convertExact(q('1'), 'in', 'cc')).toThrow(RangeError);
    expect(() => convertExact(q('1'), 'N_m', 'psi')).toThrow(/torque.*pressure/);
    expect(() => convertExact(q('1'), 'deg', '1')).toThrow(RangeError);
    expect(() => convertNumber(1, 'degC', 's')).toThrow(RangeError);
  });

  it('converts doubles exactly on the decimal they print as, rounding once', () => {
    expect(convertNumber(212, 'degF', 'degC')).toBe(100); // NIST SP 811 B.9 (from memory)
    expect(convertNumber(-40, 'degC', 'degF')).toBe(-40);
    expect(convertNumber(9, 'degF', 'degC', { difference: true })).toBe(5);
    expect(convertNumber(0.3, 'mm', 'um')).toBe(300); // 0.3 × 1000 in doubles is 300.00000000000006
    expect(convertNumber(1, 'in', 'mm')).toBe(25.4); // NIST SP 811 B.8 (from memory)
    expect(convertNumber(2.5e-7, 'in', 'um')).toBe(0.00635);
    expect(convertNumber(Number.NaN, 'in', 'mm')).toBeNaN();
    expect(convertNumber(Number.POSITIVE_INFINITY, 'in', 'mm')).toBe(Number.POSITIVE_INFINITY);
  });

  it('reads doubles as the decimals they print as', () => {
    expectExact(fractionFromNumber(0.1), '0.1');
    expectExact(fractionFromNumber(123456.789), '123456.789'); // new Fraction(123456.789) gives 10000000/81
    expectExact(fractionFromNumber(1e-7), '0.0000001');
    expectExact(fractionFromNumber(-2.5e21), '-2500000000000000000000');
    expect(() => fractionFromNumber(Number.NaN)).toThrow(RangeError);
  });

  it('gives each factor as the nearest double', () => {
    expect(factorNumber('in')).toBe(0.0254);
    expect(factorNumber('bar')).toBe(100_000);
    expect(factorNumber('lbf_ft')).toBe(Number('1.35581794833140040'));
    // n and d are below 2⁵³, so one division rounds correctly; lbf/in², NIST SP 811 B.8 (from memory).
    expect(factorNumber('psi')).toBe(Number('6894.75729316836133672'));
  });
});

describe('default units', () => {
  it('picks each quantity’s unit per system', () => {
    const table = Object.fromEntries(
      unitSystemsForDefaults.map((system) => [system, quantityKinds.map((kind) => defaultUnitFor(kind, system))]),
    );
    // Order: length, volume, angle, torque, pressure, temperature, time, mass, ratio.
    expect(table).toEqual({
      imperial: ['in', 'cc', 'deg', 'lbf_ft', 'psi', 'degF', 's', 'g', '1'],
      metric: ['mm', 'cc', 'deg', 'N_m', 'kPa', 'degC', 's', 'g', '1'],
    });
  });

  it('lets the temperature scale override the system', () => {
    expect(defaultUnitFor('temperature', 'imperial', 'degC')).toBe('degC');
    expect(defaultUnitFor('temperature', 'metric', 'degF')).toBe('degF');
    expect(defaultUnitFor('length', 'metric', 'degF')).toBe('mm');
  });
});

describe('agrees with independent reference libraries', () => {
  // [value, our unit, our target, js-quantities from, js-quantities to]. Units whose definition in
  // js-quantities is exact only: it rounds lbf to 4.448222 N and psi to 6894.76 Pa (checked below).
  const qtyCases: [number, AnyUnit, AnyUnit, string, string][] = [
    [1, 'cu_in', 'cc', 'in^3', 'cm^3'],
    [45.2, 'cc', 'cu_in', 'ml', 'in^3'],
    [0.0015, 'in', 'um', 'in', 'um'],
    [3.25, 'mm', 'thou', 'mm', 'mil'],
    [212, 'degF', 'degC', 'tempF', 'tempC'],
    [-40, 'degC', 'degF', 'tempC', 'tempF'],
    [20, 'degC', 'degF', 'tempC', 'tempF'],
    [2.5, 'bar', 'kPa', 'bar', 'kPa'],
  ];

  it.each(qtyCases)('js-quantities: %s %s in %s', (value, from, to, qFrom, qTo) => {
    const reference = Qty(value, qFrom).to(qTo).scalar;
    expectRelativelyClose(convertNumber(value, from, to), reference);
  });

  it('js-quantities: grams and kelvin through the base units', () => {
    expectRelativelyClose(toBase(q('1250'), 'g').valueOf(), Qty(1250, 'g').to('kg').scalar);
    expectRelativelyClose(toBase(q('68'), 'degF').valueOf(), Qty(68, 'tempF').to('tempK').scalar);
  });

  it('js-quantities: temperature differences (degF, degC are intervals there)', () => {
    expectRelativelyClose(convertNumber(9, 'degF', 'degC', { difference: true }), Qty(9, 'degF').to('degC').scalar);
  });

  it('js-quantities: pound-force units agree only to its rounded lbf and psi', () => {
    // js-quantities defines lbf = 4.448222 N and psi = 6894.76 Pa (7 digits), hence 1e-6.
    expectRelativelyClose(convertNumber(1, 'lbf_ft', 'N_m'), Qty(1, 'ft*lbf').to('N*m').scalar, 1e-6);
    expectRelativelyClose(convertNumber(1, 'psi', 'kPa'), Qty(1, 'psi').to('kPa').scalar, 1e-6);
  });

  // [value, our unit, our target, mathjs from, mathjs to].
  const mathCases: [number, AnyUnit, AnyUnit, string, string][] = [
    [1, 'cu_in', 'cc', 'cuin', 'cm^3'],
    [1, 'lbf_ft', 'N_m', 'lbf ft', 'N m'],
    [65, 'lbf_ft', 'N_m', 'lbf ft', 'N m'],
    [1, 'lbf_in', 'N_m', 'lbf in', 'N m'],
    [120, 'N_m', 'lbf_in', 'N m', 'lbf in'],
    [14.7, 'psi', 'kPa', 'lbf / in^2', 'kPa'],
    [1, 'bar', 'psi', 'bar', 'lbf / in^2'],
    [212, 'degF', 'degC', 'degF', 'degC'],
    [90, 'degC', 'degF', 'degC', 'degF'],
    [0.004, 'in', 'mm', 'inch', 'mm'],
  ];

  it.each(mathCases)('mathjs: %s %s in %s', (value, from, to, mFrom, mTo) => {
    // psi as lbf/in²: mathjs's own psi constant is 6894.75729276459 Pa, 6e-11 from the exact value.
    expectRelativelyClose(convertNumber(value, from, to), mathUnit(value, mFrom).toNumber(mTo));
  });

  it('mathjs: 1 psi in pascals, through the base unit', () => {
    expectRelativelyClose(toBase(q('1'), 'psi').valueOf(), mathUnit(1, 'lbf / in^2').toNumber('Pa'));
  });
});
