/**
 * Every quantity a builder measures, its units, and exact conversions to SI-coherent base units.
 *
 * Why rationals (fraction.js) rather than doubles: the customary units are defined as exact
 * decimals of SI ones (NIST SP 811 (2008), appendix B: 1 in = 0.0254 m, 1 ft = 0.3048 m,
 * 1 lbf = 0.45359237 kg × 9.80665 m/s²), but their quotients are not all terminating decimals —
 * psi = lbf/in² is 8896443230521/1290320000 Pa — and °F needs a factor of 5/9. Held as
 * fractions, every factor and every round trip is exact; doubles appear only at the edges
 * (`convertNumber`, `factorNumber`) for uncertainties and drawing.
 *
 * Base units: m, m³, degree, N·m, Pa, K, s, kg, and 1. The degree is its own base, not the
 * radian, because nothing here does trigonometry and π would make every angle inexact.
 * Length here is the general unit table; stored lengths still go through `units.ts`
 * (integer picometres), which this module does not replace.
 */
import Fraction from 'fraction.js';

/** Every kind of quantity a reading can hold. */
export const quantityKinds = [
  'length',
  'volume',
  'angle',
  'torque',
  'pressure',
  'temperature',
  'time',
  'mass',
  'ratio',
] as const;

/** A quantity kind as stored and sent over the API. */
export type QuantityKind = (typeof quantityKinds)[number];

/** What each quantity is called on a screen (headings of unit pickers, labels). */
export const quantityNames: Readonly<Record<QuantityKind, string>> = {
  length: 'Length',
  volume: 'Volume',
  angle: 'Angle',
  torque: 'Torque',
  pressure: 'Pressure',
  temperature: 'Temperature',
  time: 'Time',
  mass: 'Mass',
  ratio: 'Ratio',
};

/** Every unit code, grouped by quantity in picker order. `'1'` is the unit of a ratio. */
export const allUnits = [
  'in',
  'thou',
  'tenth',
  'mm',
  'um',
  'cc',
  'ml',
  'cu_in',
  'deg',
  'N_m',
  'lbf_ft',
  'lbf_in',
  'psi',
  'bar',
  'kPa',
  'degC',
  'degF',
  's',
  'g',
  '1',
] as const;

/** A unit code as stored and sent over the API. */
export type AnyUnit = (typeof allUnits)[number];

/** [length, mass, time, temperature, angle] exponents */
export type Dimension = readonly [number, number, number, number, number];

/** Which unit system a unit belongs to; `any` for units both systems use (s, °, ratio). */
export type UnitSystem = 'imperial' | 'metric' | 'any';

/** Everything known about one unit. `base = value·factor + offset`. */
export interface UnitInfo {
  quantity: QuantityKind;
  symbol: string;
  name: string;
  factor: Fraction;
  /** Zero except for °C and °F, whose zeros are not absolute zero. */
  offset: Fraction;
  dimension: Dimension;
  system: UnitSystem;
}

function dim(length: number, mass: number, time: number, temperature: number, angle: number): Dimension {
  return Object.freeze([length, mass, time, temperature, angle] as const);
}

/**
 * The dimension of each quantity. Torque shares M·L²·T⁻² with energy; builders never record
 * energy, so that dimension is named torque.
 */
export const quantityDimensions: Readonly<Record<QuantityKind, Dimension>> = Object.freeze({
  length: dim(1, 0, 0, 0, 0),
  volume: dim(3, 0, 0, 0, 0),
  angle: dim(0, 0, 0, 0, 1),
  torque: dim(2, 1, -2, 0, 0),
  pressure: dim(-1, 1, -2, 0, 0),
  temperature: dim(0, 0, 0, 1, 0),
  time: dim(0, 0, 1, 0, 0),
  mass: dim(0, 1, 0, 0, 0),
  ratio: dim(0, 0, 0, 0, 0),
});

// Decimal strings, never JS numbers: fraction.js approximates non-integer numbers by continued
// fractions (new Fraction(123456.789) is 10000000/81), while strings parse exactly.
const ZERO = new Fraction(0);
const ONE = new Fraction(1);
/** NIST SP 811 B.8: inch to metre, exact. */
const INCH = new Fraction('0.0254');
/** NIST SP 811 B.8: foot to metre, exact. */
const FOOT = new Fraction('0.3048');
/** NIST SP 811 B.8 footnote: 0.45359237 kg × 9.80665 m/s² = 4.4482216152605 N, exact. */
const POUND_FORCE = new Fraction('0.45359237').mul(new Fraction('9.80665'));
const MILLI = new Fraction(1, 1000);
const MICRO = new Fraction(1, 1_000_000);
const FIVE_NINTHS = new Fraction(5, 9);

interface UnitRow {
  quantity: QuantityKind;
  symbol: string;
  name: string;
  factor: Fraction;
  offset?: Fraction;
  system: UnitSystem;
}

const rows: Record<AnyUnit, UnitRow> = {
  in: { quantity: 'length', symbol: 'in', name: 'inches', factor: INCH, system: 'imperial' },
  thou: { quantity: 'length', symbol: 'thou', name: 'thou (0.001 in)', factor: INCH.mul(MILLI), system: 'imperial' },
  tenth: {
    quantity: 'length',
    // `tenths` reads better than `tenth` after any number but exactly 1 (as in units.ts).
    symbol: 'tenths',
    name: 'tenths (0.0001 in)',
    factor: INCH.div(10_000),
    system: 'imperial',
  },
  mm: { quantity: 'length', symbol: 'mm', name: 'millimetres', factor: MILLI, system: 'metric' },
  um: { quantity: 'length', symbol: 'µm', name: 'micrometres', factor: MICRO, system: 'metric' },
  cc: { quantity: 'volume', symbol: 'cc', name: 'cubic centimetres (cc)', factor: MICRO, system: 'metric' },
  ml: { quantity: 'volume', symbol: 'ml', name: 'millilitres', factor: MICRO, system: 'metric' },
  cu_in: { quantity: 'volume', symbol: 'in³', name: 'cubic inches', factor: INCH.pow(3), system: 'imperial' },
  deg: { quantity: 'angle', symbol: '°', name: 'degrees', factor: ONE, system: 'any' },
  N_m: { quantity: 'torque', symbol: 'N·m', name: 'newton metres', factor: ONE, system: 'metric' },
  lbf_ft: {
    quantity: 'torque',
    symbol: 'lbf·ft',
    name: 'pound-force feet',
    factor: POUND_FORCE.mul(FOOT),
    system: 'imperial',
  },
  lbf_in: {
    quantity: 'torque',
    symbol: 'lbf·in',
    name: 'pound-force inches',
    factor: POUND_FORCE.mul(INCH),
    system: 'imperial',
  },
  psi: {
    quantity: 'pressure',
    symbol: 'psi',
    name: 'pounds per square inch',
    factor: POUND_FORCE.div(INCH.pow(2)),
    system: 'imperial',
  },
  bar: { quantity: 'pressure', symbol: 'bar', name: 'bar', factor: new Fraction(100_000), system: 'metric' },
  kPa: { quantity: 'pressure', symbol: 'kPa', name: 'kilopascals', factor: new Fraction(1000), system: 'metric' },
  degC: {
    quantity: 'temperature',
    symbol: '°C',
    name: 'degrees Celsius',
    factor: ONE,
    offset: new Fraction('273.15'),
    system: 'metric',
  },
  degF: {
    quantity: 'temperature',
    symbol: '°F',
    name: 'degrees Fahrenheit',
    // NIST SP 811 B.9: T/K = (t/°F + 459.67)/1.8.
    factor: FIVE_NINTHS,
    offset: new Fraction('459.67').mul(FIVE_NINTHS),
    system: 'imperial',
  },
  s: { quantity: 'time', symbol: 's', name: 'seconds', factor: ONE, system: 'any' },
  g: { quantity: 'mass', symbol: 'g', name: 'grams', factor: MILLI, system: 'metric' },
  '1': { quantity: 'ratio', symbol: '', name: 'ratio (no unit)', factor: ONE, system: 'any' },
};

function freezeRow(row: UnitRow): UnitInfo {
  return Object.freeze({
    quantity: row.quantity,
    symbol: row.symbol,
    name: row.name,
    factor: Object.freeze(row.factor),
    offset: Object.freeze(row.offset ?? ZERO),
    dimension: quantityDimensions[row.quantity],
    system: row.system,
  });
}

/** Every unit's quantity, symbol, plain name, exact factor and offset to base, and dimension. */
export const unitTable: Readonly<Record<AnyUnit, UnitInfo>> = Object.freeze(
  Object.fromEntries(allUnits.map((unit) => [unit, freezeRow(rows[unit])])) as Record<AnyUnit, UnitInfo>,
);

/** Type guard for a unit code. */
export function isAnyUnit(x: unknown): x is AnyUnit {
  return typeof x === 'string' && (allUnits as readonly string[]).includes(x);
}

// Callers pass codes that came over the wire; a stray string should fail loudly, not as
// "cannot read properties of undefined".
function infoOf(unit: AnyUnit): UnitInfo {
  if (!isAnyUnit(unit)) throw new RangeError(`Unknown unit: ${String(unit)}`);
  return unitTable[unit];
}

/** The quantity a unit measures. */
export function quantityOf(unit: AnyUnit): QuantityKind {
  return infoOf(unit).quantity;
}

const unitsByQuantity: Readonly<Record<QuantityKind, readonly AnyUnit[]>> = Object.freeze(
  Object.fromEntries(
    quantityKinds.map((q) => [q, Object.freeze(allUnits.filter((unit) => unitTable[unit].quantity === q))]),
  ) as Record<QuantityKind, readonly AnyUnit[]>,
);

/** The units of one quantity, in picker order (the order of `allUnits`). */
export function unitsOf(quantity: QuantityKind): readonly AnyUnit[] {
  return unitsByQuantity[quantity];
}

/** The dimension of a unit's quantity. */
export function dimensionOf(unit: AnyUnit): Dimension {
  return infoOf(unit).dimension;
}

/** Whether two dimensions are the same, exponent by exponent. */
export function sameDimension(a: Dimension, b: Dimension): boolean {
  return a.every((exponent, i) => exponent === b[i]);
}

/** The named quantity with dimension `d` (dimensionless is a ratio), or null for any other. */
export function quantityOfDimension(d: Dimension): QuantityKind | null {
  return quantityKinds.find((q) => sameDimension(quantityDimensions[q], d)) ?? null;
}

// `+ 0` turns −0 (from 0 × −1) into 0, so that results compare equal under Object.is too.
function combine(a: Dimension, b: Dimension, op: (x: number, y: number) => number): Dimension {
  return dim(op(a[0], b[0]) + 0, op(a[1], b[1]) + 0, op(a[2], b[2]) + 0, op(a[3], b[3]) + 0, op(a[4], b[4]) + 0);
}

/** The dimension of a product. */
export function multiplyDimensions(a: Dimension, b: Dimension): Dimension {
  return combine(a, b, (x, y) => x + y);
}

/** The dimension of a quotient `a / b`. */
export function divideDimensions(a: Dimension, b: Dimension): Dimension {
  return combine(a, b, (x, y) => x - y);
}

/** The dimension of `d` raised to `exponent` (fractional exponents allowed, for roots). */
export function powerDimension(d: Dimension, exponent: number): Dimension {
  if (!Number.isFinite(exponent)) throw new RangeError(`Exponent must be finite, got ${exponent}`);
  return combine(d, d, (x) => x * exponent);
}

const quantityPhrases: Readonly<Record<QuantityKind, string>> = {
  length: 'a length',
  volume: 'a volume',
  angle: 'an angle',
  torque: 'a torque',
  pressure: 'a pressure',
  temperature: 'a temperature',
  time: 'a time',
  mass: 'a mass',
  ratio: 'a ratio',
};

const baseSymbols = ['m', 'kg', 's', 'K', '°'] as const;
const superscripts: Readonly<Record<string, string>> = {
  '-': '⁻',
  '0': '⁰',
  '1': '¹',
  '2': '²',
  '3': '³',
  '4': '⁴',
  '5': '⁵',
  '6': '⁶',
  '7': '⁷',
  '8': '⁸',
  '9': '⁹',
};

function withExponent(symbol: string, exponent: number): string {
  if (exponent === 1) return symbol;
  // Superscript digits exist only for integers; a root keeps a plain caret.
  if (!Number.isInteger(exponent)) return `${symbol}^${exponent}`;
  return symbol + [...String(exponent)].map((c) => superscripts[c] ?? c).join('');
}

/**
 * A dimension for messages: "a length", "a volume", "a ratio" for named quantities, otherwise
 * base units in SI order, e.g. "m²·kg" or "m·s⁻²".
 */
export function describeDimension(d: Dimension): string {
  const named = quantityOfDimension(d);
  if (named) return quantityPhrases[named];
  return d
    .map((exponent, i) => (exponent === 0 ? '' : withExponent(baseSymbols[i] ?? '?', exponent)))
    .filter((part) => part !== '')
    .join('·');
}

/** Options for conversions. */
export interface ConvertOptions {
  /**
   * The value is a difference (a temperature rise, an uncertainty), so the offset of °C and °F
   * does not apply: a 9 °F rise is a 5 K rise, while 9 °F is 260.37 K.
   */
  difference?: boolean;
}

/** base = value·factor + offset (offset only when !difference) */
export function toBase(value: Fraction, unit: AnyUnit, opts: ConvertOptions = {}): Fraction {
  const info = infoOf(unit);
  const scaled = value.mul(info.factor);
  return opts.difference ? scaled : scaled.add(info.offset);
}

/** The inverse of `toBase`: value = (base − offset) / factor. */
export function fromBase(value: Fraction, unit: AnyUnit, opts: ConvertOptions = {}): Fraction {
  const info = infoOf(unit);
  const shifted = opts.difference ? value : value.sub(info.offset);
  return shifted.div(info.factor);
}

function assertSameQuantity(from: AnyUnit, to: AnyUnit): void {
  const a = quantityOf(from);
  const b = quantityOf(to);
  if (a !== b) throw new RangeError(`Cannot convert ${a} (${from}) to ${b} (${to})`);
}

/** Converts exactly between two units of the same quantity; RangeError across quantities. */
export function convertExact(value: Fraction, from: AnyUnit, to: AnyUnit, opts: ConvertOptions = {}): Fraction {
  assertSameQuantity(from, to);
  return fromBase(toBase(value, from, opts), to, opts);
}

/**
 * The exact rational a double stands for as it prints (0.1 → 1/10, not the binary value). Goes
 * through the shortest round-trip decimal because fraction.js approximates non-integer numbers.
 */
export function fractionFromNumber(value: number): Fraction {
  if (!Number.isFinite(value)) throw new RangeError(`Not a finite number: ${value}`);
  const [mantissa = '0', exponent] = String(value).split('e');
  const fraction = new Fraction(mantissa);
  return exponent === undefined ? fraction : fraction.mul(new Fraction(10).pow(Number(exponent)));
}

/**
 * Converts a double (an uncertainty, a coordinate for drawing): exactly on the value as it
 * prints, then rounded once to the nearest double, so 212 °F gives exactly 100 °C. Non-finite
 * values pass through scaled, for callers that carry NaN as "unknown".
 */
export function convertNumber(value: number, from: AnyUnit, to: AnyUnit, opts: ConvertOptions = {}): number {
  assertSameQuantity(from, to);
  if (!Number.isFinite(value)) return value * convertExact(ONE, from, to, { difference: true }).valueOf();
  return convertExact(fractionFromNumber(value), from, to, opts).valueOf();
}

/** Base units per unit as a double (e.g. 0.0254 for inches); the exact value is in `unitTable`. */
export function factorNumber(unit: AnyUnit): number {
  return infoOf(unit).factor.valueOf();
}

/** The unit systems a user can pick as their default. */
export const unitSystemsForDefaults = ['imperial', 'metric'] as const;

/** A user's default unit system. */
export type DefaultUnitSystem = (typeof unitSystemsForDefaults)[number];

/** The temperature scales a user can pick, independent of the unit system. */
export const temperatureScales = ['degC', 'degF'] as const;

/** A temperature scale a user can pick. */
export type TemperatureScale = (typeof temperatureScales)[number];

/**
 * The unit a new reading of `quantity` starts in. Volume is cc in both systems because builders
 * cc chambers either way; temperature follows the user's scale, else °F imperial, °C metric.
 */
export function defaultUnitFor(
  quantity: QuantityKind,
  system: DefaultUnitSystem,
  temperatureScale?: TemperatureScale,
): AnyUnit {
  const imperial = system === 'imperial';
  switch (quantity) {
    case 'length':
      return imperial ? 'in' : 'mm';
    case 'volume':
      return 'cc';
    case 'angle':
      return 'deg';
    case 'torque':
      return imperial ? 'lbf_ft' : 'N_m';
    case 'pressure':
      return imperial ? 'psi' : 'kPa';
    case 'temperature':
      return temperatureScale ?? (imperial ? 'degF' : 'degC');
    case 'time':
      return 's';
    case 'mass':
      return 'g';
    case 'ratio':
      return '1';
  }
}
