import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import Fraction from 'fraction.js';
import { evaluate as mathjsEvaluate } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { compileFormula, type CompiledFormula, type FormulaInput } from '@shared/measure/formula';
import { formulaTemplates, templateInputs } from '@shared/measure/formula-templates';
import { quantityDimensions, type Dimension } from '@shared/measure/quantities';

const LENGTH = quantityDimensions.length;
const VOLUME = quantityDimensions.volume;
const RATIO = quantityDimensions.ratio;
const AREA: Dimension = [2, 0, 0, 0, 0];

const of = (dimension: Dimension, ...names: string[]): FormulaInput[] => names.map((name) => ({ name, dimension }));

function compiled(text: string, inputs: readonly FormulaInput[]): CompiledFormula {
  const result = compileFormula(text, inputs);
  if (!result.ok) throw new Error(`refused ${text}: ${result.problems.map((p) => p.message).join('; ')}`);
  return result.formula;
}

function problems(text: string, inputs: readonly FormulaInput[]): string[] {
  const result = compileFormula(text, inputs);
  if (result.ok) throw new Error(`expected ${text} to be refused`);
  return result.problems.map((p) => p.message);
}

// NIST SP 811 (2008) B.8: 1 in = 0.0254 m exactly, so 1 in³ = 16.387064 cm³ exactly.
const IN = 0.0254;
const CC = 1e-6;

describe('what a formula may contain', () => {
  const ab = of(RATIO, 'a', 'b');
  const refusals: [string, string, RegExp][] = [
    ['an empty formula', '  ', /^the formula is empty$/],
    ['a formula over 500 characters', `a${' + a'.repeat(125)}`, /is 501 characters long; the limit is 500/],
    ['an assignment', 'a = 3', /"=" \(character 3\) is not allowed: a formula is a value, not an assignment/],
    ['a matrix', '[a, b]', /"\[" \(character 1\) is not allowed: matrices are not allowed/],
    ['a string', '"a"', /text in quotes is not allowed/],
    ['a comparison', 'a < b', /comparisons are not allowed/],
    ['a conditional', 'a ? a : b', /conditionals are not allowed/],
    ['a factorial', 'a!', /"!" \(character 2\) is not allowed: factorials are not allowed/],
    ['a percent', 'a % b', /percent and modulo are not allowed/],
    ['mod', 'a mod b', /^a mod b: the operator "mod" is not allowed/],
    ['a function other than sqrt', 'cos(a)', /^cos\(a\): cos\(\) is not allowed; the only function is sqrt\(\)$/],
    ['sqrt of two arguments', 'sqrt(a, b)', /^sqrt\(a, b\): sqrt takes one argument$/],
    ['a reading called like a function', 'a(b)', /^a\(b\): write \* to multiply/],
    ['implicit multiplication', '2 a', /^2 a: write \* between the factors \(implicit multiplication is not accepted\)$/],
    ['implicit multiplication before a bracket', '2(a + b)', /implicit multiplication is not accepted/],
    ['an unknown name', 'a + c', /^"c" is not one of the readings or constants \(a, b\)$/],
    ['e, which is not a constant here', 'a * e', /^"e" is not one of the readings/],
    ['a property access', 'a.b', /^a\.b: a dot may only be a decimal point$/],
    ['a hexadecimal number', '0x1F + a', /^0x1F: write numbers in decimal$/],
    ['a boolean', 'true + a', /^true is not a number$/],
    ['a reading in an exponent', 'a ^ b', /^a \^ b: the exponent must be a number, not a reading$/],
    ['an unfinished expression', 'a +', /^could not read the formula: Unexpected end of expression \(character 4\)$/],
    ['an unclosed bracket', '(a + b', /^could not read the formula: Parenthesis \) expected \(character 7\)$/],
  ];
  it.each(refusals)('refuses %s', (_, text, message) => {
    expect(problems(text, ab)).toEqual(expect.arrayContaining([expect.stringMatching(message)]));
  });

  it('refuses bad input lists', () => {
    expect(problems('a', [...of(RATIO, 'a'), ...of(RATIO, 'a')])).toContain('"a" is listed twice');
    expect(problems('pi', of(RATIO, 'pi'))[0]).toMatch(/cannot be called "pi"/);
    expect(problems('x', of(RATIO, '2x'))[0]).toMatch(/"2x" is not a valid reading name/);
  });

  it('accepts numbers, pi, π, unary signs, typeset operators and sqrt', () => {
    const f = compiled('-a + +b × 2 ÷ 4 − 1.5e-1 + sqrt(a) * π - pi', of(RATIO, 'a', 'b'));
    const x = Float64Array.of(4, 6);
    // −4 + 6·2/4 − 0.15 + 2π − π = −1.15 + π
    expect(f.evaluate(x)).toBeCloseTo(-1.15 + Math.PI, 14);
    expect(f.display).toBe('−a + +b × 2 ÷ 4 − 0.15 + √a × π − π');
  });

  it('writes the working with superscripts and keeps the builder’s brackets', () => {
    expect(compiled('(a - b)^2 / a^-1', of(RATIO, 'a', 'b')).display).toBe('(a − b)² ÷ a⁻¹');
    expect(compiled('sqrt(a)^2 + sqrt(a*b)', of(RATIO, 'a', 'b')).display).toBe('(√a)² + √(a × b)');
  });

  it('lists used inputs in the given order and reports unused ones', () => {
    const f = compiled('c - a', of(RATIO, 'a', 'b', 'c'));
    expect(f.inputs).toEqual(['a', 'c']);
    expect(f.unused).toEqual(['b']);
    // x follows `inputs`: a = 1, c = 10.
    expect(f.evaluate(Float64Array.of(1, 10))).toBe(9);
  });
});

describe('dimensions', () => {
  it('refuses adding a length and a volume, naming both', () => {
    const inputs = [...of(LENGTH, 'bore-depth'), ...of(VOLUME, 'chamber')];
    expect(problems('bore-depth + chamber', inputs)).toEqual(['bore-depth + chamber: a length and a volume cannot be added']);
    expect(problems('chamber - bore-depth', inputs)).toEqual([
      'chamber - bore-depth: a volume and a length cannot be subtracted',
    ]);
  });

  it('refuses sqrt of a volume: it would be length^1.5', () => {
    expect(problems('sqrt(chamber)', of(VOLUME, 'chamber'))).toEqual([
      'sqrt(chamber): the square root of a volume would be m^1.5, not a whole power of the base units',
    ]);
    expect(problems('chamber ^ 0.5', of(VOLUME, 'chamber'))[0]).toMatch(/a volume to the power 1\/2 would be m\^1\.5/);
    expect(problems('bore ^ pi', of(LENGTH, 'bore'))[0]).toMatch(/can only be raised to an exact number/);
  });

  it('halves even exponents under sqrt and multiplies by a constant power', () => {
    expect(compiled('sqrt(area)', of(AREA, 'area')).dimension).toEqual(LENGTH);
    expect(compiled('chamber^(1/3)', of(VOLUME, 'chamber')).dimension).toEqual(LENGTH);
    expect(compiled('bore^2 * stroke', of(LENGTH, 'bore', 'stroke')).dimension).toEqual(VOLUME);
    expect(compiled('pi/4 * bore^2', of(LENGTH, 'bore')).dimension).toEqual(AREA);
  });

  it('gives a volume over a volume as a ratio', () => {
    expect(compiled('chamber / swept', of(VOLUME, 'chamber', 'swept')).dimension).toEqual(RATIO);
  });

  it('lets a dimensionless base take any power', () => {
    expect(compiled('r ^ pi', of(RATIO, 'r')).dimension).toEqual(RATIO);
  });
});

// Formulas over positive inputs, checked against mathjs's own evaluate (full build, a separate
// interpreter) as the independent reference.
const referenceFormulas = [
  'a + b * c',
  '(a - b) / 2',
  'a^2 * b / c',
  'sqrt(a * b) + c',
  'pi / 4 * a^2 * b',
  '-a + +b - c^3',
  '(a + b + c) / (b + c)',
  'a^-2 + b^(1/3) - c^2.5',
  'a / b / c - (a - (b - c))',
];
const positive = fc.double({ min: 1e-3, max: 1e3, noNaN: true });

describe('evaluation', () => {
  it.each(referenceFormulas)('%s matches mathjs evaluate', (text) => {
    const f = compiled(text, of(RATIO, 'a', 'b', 'c'));
    fc.assert(
      fc.property(positive, positive, positive, (a, b, c) => {
        const scope = { a, b, c };
        const expected = mathjsEvaluate(text, scope) as number;
        const x = Float64Array.from(f.inputs.map((name) => scope[name as keyof typeof scope]));
        const actual = f.evaluate(x);
        expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
      }),
    );
  });

  it.each(referenceFormulas)('%s: gradient matches central differences', (text) => {
    const f = compiled(text, of(RATIO, 'a', 'b', 'c'));
    fc.assert(
      fc.property(positive, positive, positive, (a, b, c) => {
        const x = Float64Array.of(a, b, c).subarray(0, f.inputs.length);
        const g = f.gradient(x);
        for (let i = 0; i < f.inputs.length; i++) {
          // Central difference, step 1e-6 relative: error O(h²) plus rounding O(ε/h), ~1e-9 relative.
          const h = x[i]! * 1e-6;
          const up = Float64Array.from(x);
          const down = Float64Array.from(x);
          up[i] = x[i]! + h;
          down[i] = x[i]! - h;
          const numeric = (f.evaluate(up) - f.evaluate(down)) / (2 * h);
          const scale = Math.max(Math.abs(numeric), (Math.abs(f.evaluate(x)) / x[i]!) * 1e-3, 1e-12);
          expect(Math.abs(g[i]! - numeric) / scale).toBeLessThan(1e-5);
        }
      }),
      { numRuns: 50 },
    );
  });

  it('writes the gradient into a given array', () => {
    const f = compiled('a * b', of(RATIO, 'a', 'b'));
    const out = new Float64Array(2);
    expect(f.gradient(Float64Array.of(3, 5), out)).toBe(out);
    expect([...out]).toEqual([5, 3]);
  });

  it('returns ±Infinity or NaN on division by zero, for the caller to report', () => {
    const f = compiled('a / (b - c)', of(RATIO, 'a', 'b', 'c'));
    expect(f.evaluate(Float64Array.of(1, 2, 2))).toBe(Infinity);
    expect(f.evaluate(Float64Array.of(0, 2, 2))).toBeNaN();
    expect(f.evaluateExact([1, 2, 2].map((v) => new Fraction(v)))).toBeNull();
  });
});

describe('exact evaluation', () => {
  it('gives (a - b)/2 as an exact fraction', () => {
    const f = compiled('(a - b)/2', of(LENGTH, 'a', 'b'));
    // (3.0003 − 3.0001)/2 = 0.0002/2 = 1/10000 exactly; in doubles it is 0.00009999999999998899.
    const exact = f.evaluateExact([new Fraction('3.0003'), new Fraction('3.0001')]);
    expect(exact?.equals(new Fraction(1, 10000))).toBe(true);
  });

  it('reads decimal constants exactly and keeps rational roots', () => {
    expect(compiled('a * 0.1', of(RATIO, 'a')).evaluateExact([new Fraction(3)])?.toFraction()).toBe('3/10');
    // √(9/4) = 3/2 and (8/27)^(−1/3) = 3/2: rational, so exact.
    expect(compiled('sqrt(a)', of(AREA, 'a')).evaluateExact([new Fraction(9, 4)])?.toFraction()).toBe('3/2');
    expect(compiled('a^(-1/3)', of(RATIO, 'a')).evaluateExact([new Fraction(8, 27)])?.toFraction()).toBe('3/2');
  });

  it('returns null when sqrt, pi or a fractional power makes it irrational', () => {
    expect(compiled('sqrt(a)', of(AREA, 'a')).evaluateExact([new Fraction(2)])).toBeNull();
    expect(compiled('pi * a', of(RATIO, 'a')).evaluateExact([new Fraction(1)])).toBeNull();
    expect(compiled('a^1.5', of(RATIO, 'a')).evaluateExact([new Fraction(2)])).toBeNull();
  });
});

describe('linearity', () => {
  const cases: [string, boolean][] = [
    ['a - b', true],
    ['(a - b)/2 + 3', true],
    ['pi/4 * a - 2*b', true],
    ['a * b', false],
    ['a / b', false],
    ['a^2', false],
    ['sqrt(a*a)', false],
    // Nonlinear-looking, but b cancels: settled by simplify after the numeric screen.
    ['a * b / b', true],
  ];
  it.each(cases)('%s is linear: %s', (text, linear) => {
    expect(compiled(text, of(RATIO, 'a', 'b')).linear).toBe(linear);
  });
});

describe('hyphenated names', () => {
  it('reads a hyphenated reading key as one name and a spare hyphen as minus', () => {
    const f = compiled('bore-depth-chamber', of(LENGTH, 'bore-depth', 'chamber'));
    expect(f.inputs).toEqual(['bore-depth', 'chamber']);
    expect(f.display).toBe('bore-depth − chamber');
    expect(f.evaluate(Float64Array.of(5, 2))).toBe(3);
  });

  it('reads a-b as a minus b unless a-b is itself a reading', () => {
    expect(compiled('a-b', of(LENGTH, 'a', 'b')).display).toBe('a − b');
    const withJoined = [...of(LENGTH, 'a', 'b'), ...of(VOLUME, 'a-b')];
    const joined = compiled('a-b', withJoined);
    expect(joined.inputs).toEqual(['a-b']);
    expect(joined.dimension).toEqual(VOLUME);
    expect(compiled('a - b', withJoined).inputs).toEqual(['a', 'b']);
  });

  it('takes the longest key and keeps numbers whole', () => {
    // 1e-3 stays a number although `e` is a reading; bore-depth wins over bore.
    const f = compiled('x-bore-depth+1e-3*e', of(LENGTH, 'x', 'bore', 'bore-depth', 'e'));
    expect(f.inputs).toEqual(['x', 'bore-depth', 'e']);
    expect(f.unused).toEqual(['bore']);
    expect(f.display).toBe('x − bore-depth + 0.001 × e');
    expect(f.evaluate(Float64Array.of(10, 3, 1000))).toBe(8);
  });

  it('names hyphenated keys in messages and positions', () => {
    expect(problems('bore-depth + (', of(LENGTH, 'bore-depth'))).toEqual([
      'could not read the formula: Unexpected end of expression (character 15)',
    ]);
    expect(problems('bore-depth ^ rotorHeight', of(LENGTH, 'bore-depth', 'rotorHeight'))).toEqual([
      'bore-depth ^ rotorHeight: the exponent must be a number, not a reading',
    ]);
  });

  it('accepts keys that are mathjs words', () => {
    expect(compiled('in * to + a_1', of(RATIO, 'in', 'to', 'a_1')).evaluate(Float64Array.of(2, 3, 4))).toBe(10);
  });
});

describe('the templates', () => {
  it.each(formulaTemplates.map((t) => [t.id, t] as const))('%s compiles to its result quantity', (_, template) => {
    const f = compiled(template.formula, templateInputs(template));
    expect(f.dimension).toEqual(quantityDimensions[template.result]);
    expect(f.unused).toEqual([]);
    expect(template.explanation.length).toBeGreaterThan(20);
  });

  // Geometry: a cylinder is π/4·d²·h. Bore 4.000 in, stroke 3.480 in:
  // swept = π/4 × 4.000² × 3.480 = 13.92π in³ = 43.7310 in³ = 43.7310 × 16.387064 = 716.622 cc.
  it('swept volume of a 4.000 in × 3.480 in cylinder is 716.622 cc', () => {
    const template = formulaTemplates.find((t) => t.id === 'swept-volume')!;
    const f = compiled(template.formula, templateInputs(template));
    expect(f.evaluate(Float64Array.of(4 * IN, 3.48 * IN)) / CC).toBeCloseTo(716.622, 3);
  });

  // Compression ratio, geometry. Bore 4.000 in, stroke 3.480 in, chamber 64.0 cc, gasket bore
  // 4.100 in × 0.040 in, piston 0.010 in below deck, dish 5.0 cc:
  //   swept  = 716.622 cc (above)
  //   gasket = π/4 × 4.100² × 0.040 = 0.1681π in³ = 0.528102 in³ = 8.65404 cc
  //   deck   = π/4 × 4.000² × 0.010 = 0.04π in³ = 0.125664 in³ = 2.05926 cc
  //   TDC    = 64 + 8.65404 + 2.05926 + 5 = 79.71330 cc; BDC = 79.71330 + 716.62220 = 796.33550 cc
  //   CR     = 796.33550 / 79.71330 = 9.989996
  it('compression ratio of a worked example is 9.989996', () => {
    const template = formulaTemplates.find((t) => t.id === 'compression-ratio')!;
    const f = compiled(template.formula, templateInputs(template));
    expect(f.inputs).toEqual(['bore', 'stroke', 'chamber', 'gasket-bore', 'gasket-thickness', 'deck-height', 'dish']);
    const x = Float64Array.of(4 * IN, 3.48 * IN, 64 * CC, 4.1 * IN, 0.04 * IN, 0.01 * IN, 5 * CC);
    expect(f.evaluate(x)).toBeCloseTo(9.989996, 5);
    expect(f.linear).toBe(false);
    // π stays in both halves, so there is no exact value.
    expect(f.evaluateExact([...x].map((v) => new Fraction(v)))).toBeNull();
    // ∂CR/∂stroke = (π/4·bore²)/TDC = (π × 4 in² = 12.5664 in² = 0.00810732 m²) / 79.7133e-6 m³ = 101.705 /m.
    expect(f.gradient(x)[1]).toBeCloseTo(101.705, 2);
  });

  // Geometry of the timing circle: open 12° BTDC, close 44° ABDC → duration 12 + 180 + 44 = 236°,
  // peak at 236/2 = 118° after opening, i.e. 118 − 12 = 106° ATDC.
  it('intake centreline of 12° BTDC / 44° ABDC is 106° ATDC, exactly', () => {
    const template = formulaTemplates.find((t) => t.id === 'intake-centreline')!;
    const halfTurn = template.constants.find((c) => c.key === 'half-turn')!;
    expect(halfTurn.fixed).toEqual({ value: '180', unit: 'deg' });
    const f = compiled(template.formula, templateInputs(template));
    expect(f.evaluateExact(['12', '44', '180'].map((v) => new Fraction(v)))?.equals(106)).toBe(true);
    expect(f.linear).toBe(true);
    expect([...f.gradient(Float64Array.of(12, 44, 180))]).toEqual([-0.5, 0.5, 0.5]);
  });

  it('deck height from the stack-up is block height less throw, rod and pin height', () => {
    const template = formulaTemplates.find((t) => t.id === 'deck-height-stack')!;
    const f = compiled(template.formula, templateInputs(template));
    // 9.025 − (1.740 + 5.700 + 1.575) = 9.025 − 9.015 = 0.010 in below deck.
    const exact = f.evaluateExact(['9.025', '1.740', '5.700', '1.575'].map((v) => new Fraction(v)));
    expect(exact?.equals(new Fraction('0.010'))).toBe(true);
  });
});

describe('no code generation', () => {
  it('never uses eval or new Function (the CSP forbids both)', () => {
    const source = readFileSync(new URL('../../../shared/measure/formula.ts', import.meta.url), 'utf8');
    expect(source).not.toMatch(/\beval\s*\(|new\s+Function\s*\(/);
  });
});
