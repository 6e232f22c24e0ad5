/**
 * Measurement functions written as plain arithmetic over named readings: "bore - piston",
 * "(swept + chamber) / chamber". The text is parsed by mathjs, checked for dimensions, and
 * compiled to a tree of small closures so a Monte Carlo can run it a million times; the
 * sensitivity coefficients ∂f/∂xᵢ (JCGM 100:2008 5.1.3) come from symbolic differentiation.
 *
 * What a formula may contain: decimal numbers (1e-3 too), reading names, `pi` or `π`,
 * + - * / ^ (and × · ÷ −), unary minus and plus, parentheses and `sqrt(…)`. An exponent must be
 * a constant. Implicit multiplication ("2 bore", "2(a + b)") is refused: mathjs's precedence for
 * it is surprising ("a / b c" is a/(b·c) but "1/2 b" is (1/2)·b), and the working should show
 * every operator.
 *
 * Hyphenated names: reading keys may contain '-', which is also minus. Reading left to right, at
 * each name the longest reading key that starts there is taken, provided the next character is
 * not a letter, digit or '_'; a '-' that is not inside a reading key is minus. So with readings
 * `bore-depth` and `chamber`, "bore-depth-chamber" is bore-depth − chamber, and with readings `a`
 * and `b` (no `a-b`), "a-b" is a − b. Put spaces round a minus when in doubt.
 *
 * No eval and no new Function: the browser's CSP forbids both, and closures are fast enough.
 * Values are in SI-coherent base units (`quantities.ts`): the result is too.
 */
import Fraction from 'fraction.js';
import {
  addDependencies,
  create,
  derivativeDependencies,
  divideDependencies,
  multiplyDependencies,
  parseDependencies,
  powDependencies,
  simplifyDependencies,
  sqrtDependencies,
  subtractDependencies,
  unaryMinusDependencies,
  unaryPlusDependencies,
  type ConstantNode,
  type FactoryFunctionMap,
  type FunctionNode,
  type MathNode,
  type OperatorNode,
  type ParenthesisNode,
  type SymbolNode,
} from 'mathjs/number';
import {
  describeDimension,
  divideDimensions,
  fractionFromNumber,
  multiplyDimensions,
  powerDimension,
  sameDimension,
  type Dimension,
} from './quantities';

// The number-only build with just these factories keeps the browser bundle near 50 kB gzipped
// (the full mathjs is about 100 kB). The arithmetic factories are there because `simplify`
// folds constants by calling them. The typings declare each `…Dependencies` export as possibly
// undefined (they come from a Record), though every one is defined at runtime.
const math = create({
  parseDependencies,
  derivativeDependencies,
  simplifyDependencies,
  addDependencies,
  subtractDependencies,
  multiplyDependencies,
  divideDependencies,
  powDependencies,
  sqrtDependencies,
  unaryMinusDependencies,
  unaryPlusDependencies,
} as FactoryFunctionMap);

/** Longest formula accepted, in characters. */
export const FORMULA_MAX_LENGTH = 500;

/** The shape of a reading key (and of a named constant's name). */
export const FORMULA_NAME_PATTERN = /^[A-Za-z][A-Za-z0-9_-]{0,39}$/;

/** A reading or named constant the formula may use, with the dimension of its value. */
export interface FormulaInput {
  name: string;
  dimension: Dimension;
}

/** Why a formula was refused, in words a builder can act on. */
export type FormulaProblem = { message: string };

/** A checked, compiled measurement function. */
export interface CompiledFormula {
  /** The formula as given. */
  readonly text: string;
  /** The inputs the formula uses, in the order of the FormulaInput list; `x[i]` is `inputs[i]`. */
  readonly inputs: readonly string[];
  /** Inputs that were offered but not used, in list order: the caller decides if that is wrong. */
  readonly unused: readonly string[];
  /** Dimension of the result. */
  readonly dimension: Dimension;
  /**
   * Every first derivative is a constant, so every second derivative is identically zero and
   * the GUM's first-order propagation is exact. False when unsure (see `isLinear`).
   */
  readonly linear: boolean;
  /** f(x) in doubles; ±Infinity or NaN on division by zero, for the caller to report. */
  evaluate(x: Float64Array): number;
  /** f(x) in rationals; null when sqrt, pi or a fractional power makes it irrational, or on ÷0. */
  evaluateExact(x: readonly Fraction[]): Fraction | null;
  /** ∂f/∂xᵢ at x, one per input; written into `out` when given, to spare a Monte Carlo the garbage. */
  gradient(x: Float64Array, out?: Float64Array): Float64Array;
  /** The formula for the working, with × ÷ − √ π and superscript powers. */
  readonly display: string;
}

/** The result of `compileFormula`: the formula, or everything wrong with it. */
export type CompileResult = { ok: true; formula: CompiledFormula } | { ok: false; problems: FormulaProblem[] };

type Num = (x: Float64Array) => number;
type Exact = (x: readonly Fraction[]) => Fraction | null;

/**
 * A compiled subtree. `value` is set when it uses no input, so parents can fold it; `slot` when
 * it is one input, so parents can read x[slot] without a call.
 */
interface Built {
  num: Num;
  exact: Exact;
  slot?: number;
  value?: number;
  exactValue?: Fraction | null;
}

const DIMENSIONLESS: Dimension = [0, 0, 0, 0, 0];

// Names that mean something in a formula; a reading called this would be ambiguous.
const RESERVED_NAMES = new Set(['pi', 'sqrt']);

// Placeholders start with '$', which mathjs accepts in names and a formula may not contain, so
// they can never clash with a builder's text or a mathjs built-in (e, i, mod, in, to…).
const PLACEHOLDER = /\$[0-9]+/g;
const placeholderFor = (index: number): string => `$${index}`;

const NUMBER_LITERAL = /(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?/y;
const NAME_CHAR = /[A-Za-z0-9_]/;
const PLAIN_NAME = /[A-Za-z_][A-Za-z0-9_]*/y;

// Typeset operators a builder may paste from the working; each is one UTF-16 unit, so
// positions do not move.
const TYPESET: Readonly<Record<string, string>> = { '×': '*', '·': '*', '÷': '/', '−': '-' };
// ',' is let through so that sqrt(a, b) gets a message about sqrt, not about a comma.
const ALLOWED_PUNCTUATION = new Set([' ', '+', '-', '*', '/', '^', '(', ')', '.', ',', 'π']);
const REFUSED_CHARACTERS: Readonly<Record<string, string>> = {
  '=': 'a formula is a value, not an assignment',
  '[': 'matrices are not allowed',
  ']': 'matrices are not allowed',
  '{': 'objects are not allowed',
  '}': 'objects are not allowed',
  '"': 'text in quotes is not allowed',
  "'": 'text in quotes is not allowed',
  '<': 'comparisons are not allowed',
  '>': 'comparisons are not allowed',
  '?': 'conditionals are not allowed',
  ':': 'conditionals and ranges are not allowed',
  '!': 'factorials are not allowed',
  '%': 'percent and modulo are not allowed; divide by 100 instead',
  ';': 'a formula is one expression',
  '&': 'logical operators are not allowed',
  '|': 'logical operators are not allowed',
  '$': 'reading names are letters, digits, _ and -',
};

const NODE_KINDS: Readonly<Record<string, string>> = {
  AccessorNode: 'a dot may only be a decimal point',
  ArrayNode: 'matrices are not allowed',
  AssignmentNode: 'a formula is a value, not an assignment',
  BlockNode: 'a formula is one expression',
  ConditionalNode: 'conditionals are not allowed',
  FunctionAssignmentNode: 'defining functions is not allowed',
  IndexNode: 'indexing is not allowed',
  ObjectNode: 'objects are not allowed',
  RangeNode: 'ranges are not allowed',
  RelationalNode: 'comparisons are not allowed',
};

/** One substituted name: where it is in the text mathjs sees and in the builder's text. */
interface Substitution {
  at: number;
  length: number;
  originalAt: number;
  originalLength: number;
}

interface Prepared {
  text: string;
  substitutions: Substitution[];
  problems: string[];
}

/**
 * Replaces every input name with a placeholder by the hyphen rule in the module comment, turns
 * typeset operators into ASCII, and refuses characters mathjs would read as something other
 * than arithmetic. Numbers are skipped whole so "1e-3" stays a number even with a reading `e`.
 */
function prepare(text: string, names: readonly string[]): Prepared {
  const byLength = names.map((name, index) => ({ name, index })).sort((a, b) => b.name.length - a.name.length);
  const out: string[] = [];
  const substitutions: Substitution[] = [];
  const problems: string[] = [];
  const refused = new Set<string>();
  let length = 0;
  const emit = (piece: string) => {
    out.push(piece);
    length += piece.length;
  };
  let i = 0;
  while (i < text.length) {
    const c = text[i]!;
    if (/\d/.test(c) || (c === '.' && /\d/.test(text[i + 1] ?? ''))) {
      NUMBER_LITERAL.lastIndex = i;
      const literal = NUMBER_LITERAL.exec(text)![0];
      if (literal === '0' && /^[xXbBoO][0-9A-Za-z]/.test(text.slice(i + 1, i + 3))) {
        const word = /^0[0-9A-Za-z.]*/.exec(text.slice(i))![0];
        problems.push(`${word}: write numbers in decimal`);
      }
      emit(literal);
      i += literal.length;
      continue;
    }
    if (/[A-Za-z_]/.test(c)) {
      const match = byLength.find(
        ({ name }) => text.startsWith(name, i) && !NAME_CHAR.test(text[i + name.length] ?? ''),
      );
      if (match) {
        const placeholder = placeholderFor(match.index);
        substitutions.push({ at: length, length: placeholder.length, originalAt: i, originalLength: match.name.length });
        emit(placeholder);
        i += match.name.length;
      } else {
        PLAIN_NAME.lastIndex = i;
        const word = PLAIN_NAME.exec(text)![0];
        emit(word);
        i += word.length;
      }
      continue;
    }
    const plain = /\s/.test(c) ? ' ' : (TYPESET[c] ?? c);
    if (!ALLOWED_PUNCTUATION.has(plain) && !refused.has(c)) {
      refused.add(c);
      const why = REFUSED_CHARACTERS[c] ?? 'use numbers, reading names, + - * / ^, parentheses, sqrt() and pi';
      problems.push(`"${c}" (character ${i + 1}) is not allowed: ${why}`);
    }
    emit(plain);
    i += 1;
  }
  return { text: out.join(''), substitutions, problems };
}

/** Maps a 0-based position in the substituted text back to the builder's text. */
function originalPosition(at: number, substitutions: readonly Substitution[]): number {
  let shift = 0;
  for (const s of substitutions) {
    if (at < s.at) break;
    if (at < s.at + s.length) return s.originalAt;
    shift += s.originalLength - s.length;
  }
  return at + shift;
}

const isConstant = (n: MathNode): n is ConstantNode => n.type === 'ConstantNode';
const isSymbol = (n: MathNode): n is SymbolNode => n.type === 'SymbolNode';
const isOperator = (n: MathNode): n is OperatorNode => n.type === 'OperatorNode';
const isFunction = (n: MathNode): n is FunctionNode => n.type === 'FunctionNode';
const isParenthesis = (n: MathNode): n is ParenthesisNode => n.type === 'ParenthesisNode';
const isPi = (name: string) => name === 'pi' || name === 'π';

function placeholderIndex(name: string): number | null {
  return /^\$[0-9]+$/.test(name) ? Number(name.slice(1)) : null;
}

function usesAnyInput(node: MathNode): boolean {
  return node.filter((n) => isSymbol(n) && placeholderIndex(n.name) !== null).length > 0;
}

// ---------------------------------------------------------------------------------------------
// Checking: everything allowed, names known, dimensions consistent.

interface CheckContext {
  names: readonly string[];
  dimensions: readonly Dimension[];
  problems: string[];
}

function restoreNames(text: string, names: readonly string[]): string {
  return text.replace(PLACEHOLDER, (p) => names[Number(p.slice(1))] ?? p);
}

function sourceOf(node: MathNode, ctx: CheckContext): string {
  return restoreNames(node.toString(), ctx.names);
}

/** Walks the tree, records every problem, and returns the dimension (null once unknowable). */
function check(node: MathNode, ctx: CheckContext): Dimension | null {
  if (isParenthesis(node)) return check(node.content, ctx);
  if (isConstant(node)) {
    if (typeof node.value !== 'number') ctx.problems.push(`${sourceOf(node, ctx)} is not a number`);
    else if (!Number.isFinite(node.value)) ctx.problems.push(`${sourceOf(node, ctx)} is too large a number`);
    return DIMENSIONLESS;
  }
  if (isSymbol(node)) {
    const index = placeholderIndex(node.name);
    if (index !== null) return ctx.dimensions[index] ?? null;
    if (isPi(node.name)) return DIMENSIONLESS;
    const known = ctx.names.length > 0 ? ` (${ctx.names.join(', ')})` : '';
    ctx.problems.push(`"${node.name}" is not one of the readings or constants${known}`);
    return null;
  }
  if (isFunction(node)) return checkFunction(node, ctx);
  if (isOperator(node)) return checkOperator(node, ctx);
  ctx.problems.push(`${sourceOf(node, ctx)}: ${NODE_KINDS[node.type] ?? 'this is not arithmetic'}`);
  return null;
}

function checkFunction(node: FunctionNode, ctx: CheckContext): Dimension | null {
  const dims = node.args.map((arg) => check(arg, ctx));
  const fn = node.fn as MathNode;
  const name = isSymbol(fn) ? fn.name : null;
  if (name === null || placeholderIndex(name) !== null) {
    ctx.problems.push(`${sourceOf(node, ctx)}: write * to multiply (a reading is not a function)`);
    return null;
  }
  if (name !== 'sqrt') {
    ctx.problems.push(`${sourceOf(node, ctx)}: ${name}() is not allowed; the only function is sqrt()`);
    return null;
  }
  if (dims.length !== 1) {
    ctx.problems.push(`${sourceOf(node, ctx)}: sqrt takes one argument`);
    return null;
  }
  const d = dims[0];
  if (!d) return null;
  const root = powerDimension(d, 0.5);
  if (!root.every(Number.isInteger)) {
    ctx.problems.push(
      `${sourceOf(node, ctx)}: the square root of ${describeDimension(d)} would be ${describeDimension(root)}, not a whole power of the base units`,
    );
    return null;
  }
  return root;
}

function checkOperator(node: OperatorNode, ctx: CheckContext): Dimension | null {
  const b = node.args[1];
  const dims = node.args.map((arg) => check(arg, ctx));
  if (node.implicit) {
    ctx.problems.push(`${sourceOf(node, ctx)}: write * between the factors (implicit multiplication is not accepted)`);
    return null;
  }
  const [da, db] = dims;
  switch (node.fn) {
    case 'unaryMinus':
    case 'unaryPlus':
      return da ?? null;
    case 'add':
    case 'subtract':
      if (!da || !db) return null;
      if (!sameDimension(da, db)) {
        const verb = node.fn === 'add' ? 'added' : 'subtracted';
        ctx.problems.push(
          `${sourceOf(node, ctx)}: ${describeDimension(da)} and ${describeDimension(db)} cannot be ${verb}`,
        );
        return null;
      }
      return da;
    case 'multiply':
      return da && db ? multiplyDimensions(da, db) : null;
    case 'divide':
      return da && db ? divideDimensions(da, db) : null;
    case 'pow':
      return checkPower(node, b!, da ?? null, ctx);
    default:
      ctx.problems.push(
        `${sourceOf(node, ctx)}: the operator "${node.op}" is not allowed; use + - * / ^, parentheses and sqrt()`,
      );
      return null;
  }
}

function checkPower(node: MathNode, exponent: MathNode, d: Dimension | null, ctx: CheckContext): Dimension | null {
  if (usesAnyInput(exponent)) {
    ctx.problems.push(`${sourceOf(node, ctx)}: the exponent must be a number, not a reading`);
    return null;
  }
  if (!d) return null;
  if (d.every((e) => e === 0)) return DIMENSIONLESS;
  // The exponent has no inputs, so building it folds it to a value and its exact value; it
  // throws only on a piece already reported (an unknown name).
  let p: Fraction | null | undefined;
  try {
    p = build(exponent, new Map()).exactValue;
  } catch {
    return null;
  }
  if (!p) {
    ctx.problems.push(
      `${sourceOf(node, ctx)}: ${describeDimension(d)} can only be raised to an exact number (no pi or roots in the exponent)`,
    );
    return null;
  }
  // Exponents multiplied exactly: 3 × 0.1 in doubles is not 0.3, and the test is "whole".
  const exponents = d.map((e) => new Fraction(e).mul(p));
  // `+ 0` turns −0 into 0, as quantities.ts does, so results compare equal under Object.is.
  const [l = 0, m = 0, t = 0, k = 0, a = 0] = exponents.map((e) => e.valueOf() + 0);
  const result: Dimension = [l, m, t, k, a];
  if (exponents.some((e) => e.d !== 1n)) {
    ctx.problems.push(
      `${sourceOf(node, ctx)}: ${describeDimension(d)} to the power ${p.toFraction()} would be ${describeDimension(result)}, not a whole power of the base units`,
    );
    return null;
  }
  return result;
}

// ---------------------------------------------------------------------------------------------
// Exact arithmetic helpers.

function bitLength(v: bigint): number {
  return v === 0n ? 0 : v.toString(2).length;
}

/** The k-th root of v ≥ 0 when it is an integer, else null (Newton's method on bigints). */
function exactIntegerRoot(v: bigint, k: bigint): bigint | null {
  if (v < 2n) return v;
  let x = 1n << BigInt(Math.ceil(bitLength(v) / Number(k)));
  for (;;) {
    const y = ((k - 1n) * x + v / x ** (k - 1n)) / k;
    if (y >= x) break;
    x = y;
  }
  return x ** k === v ? x : null;
}

// Guards against a formula like (1.000001)^100000 turning one Monte Carlo draw into megabytes.
const MAX_EXACT_BITS = 100_000;

/** base^p exactly, or null when irrational, complex, too large, or 0 to a negative power. */
function exactPower(base: Fraction, p: Fraction): Fraction | null {
  const num = p.s * p.n;
  if (p.d > 64n) return null;
  let root = base;
  if (p.d !== 1n) {
    // Like Math.pow, a negative base with a fractional exponent has no real value here.
    if (base.s < 0n) return null;
    const n = exactIntegerRoot(base.n, p.d);
    const d = exactIntegerRoot(base.d, p.d);
    if (n === null || d === null) return null;
    root = new Fraction(n, d);
  }
  const magnitude = num < 0n ? -num : num;
  if ((bitLength(root.n) + bitLength(root.d)) * Number(magnitude) > MAX_EXACT_BITS) return null;
  if (root.n === 0n && num < 0n) return null;
  return root.pow(num);
}

function exactOp(op: (u: Fraction, v: Fraction) => Fraction | null, a: Exact, b: Exact): Exact {
  return (x) => {
    const u = a(x);
    if (u === null) return null;
    const v = b(x);
    return v === null ? null : op(u, v);
  };
}

// ---------------------------------------------------------------------------------------------
// Building closures. Subtrees without inputs are folded to constants, and the identities that
// the chain rule leaves behind (x·1, x + 0, 0·x, x^1) are dropped, so unsimplified derivatives
// cost about as much as the formula.

class Unsupported extends Error {}

function constant(value: number, exactValue: Fraction | null): Built {
  return { num: () => value, exact: () => exactValue, value, exactValue };
}

function fold(built: Built): Built {
  const value = built.num(new Float64Array(0));
  let exactValue: Fraction | null;
  try {
    exactValue = built.exact([]);
  } catch {
    exactValue = null;
  }
  return constant(value, exactValue);
}

const isValue = (b: Built, v: number) => b.value === v;

/** Compiles a checked tree (or a derivative of one); `slots` maps placeholder index → x index. */
function build(node: MathNode, slots: ReadonlyMap<number, number>): Built {
  if (isParenthesis(node)) return build(node.content, slots);
  if (isConstant(node)) {
    if (typeof node.value !== 'number') throw new Unsupported(node.type);
    return constant(node.value, Number.isFinite(node.value) ? fractionFromNumber(node.value) : null);
  }
  if (isSymbol(node)) {
    if (isPi(node.name)) return constant(Math.PI, null);
    const index = placeholderIndex(node.name);
    const slot = index === null ? undefined : slots.get(index);
    if (slot === undefined) throw new Unsupported(node.name);
    return { num: (x) => x[slot]!, exact: (x) => x[slot]!, slot };
  }
  if (isFunction(node)) {
    const fn = node.fn as MathNode;
    if (!isSymbol(fn) || fn.name !== 'sqrt' || node.args.length !== 1) throw new Unsupported('function');
    const a = build(node.args[0]!, slots);
    const half = new Fraction(1, 2);
    const an = a.num;
    const ae = a.exact;
    const built: Built = { num: (x) => Math.sqrt(an(x)), exact: (x) => { const u = ae(x); return u && exactPower(u, half); } };
    return a.value !== undefined ? fold(built) : built;
  }
  if (!isOperator(node)) throw new Unsupported(node.type);
  const args = node.args.map((arg) => build(arg, slots));
  const [a, b] = args;
  let built: Built;
  switch (node.fn) {
    case 'unaryPlus':
      return a!;
    case 'unaryMinus': {
      const an = a!.num;
      const ae = a!.exact;
      built = { num: (x) => -an(x), exact: (x) => { const u = ae(x); return u && u.neg(); } };
      break;
    }
    case 'add':
      if (isValue(a!, 0)) return b!;
      if (isValue(b!, 0)) return a!;
      built = arithmetic('+', a!, b!);
      break;
    case 'subtract':
      if (isValue(b!, 0)) return a!;
      if (isValue(a!, 0)) {
        const bn = b!.num;
        const be = b!.exact;
        built = { num: (x) => -bn(x), exact: (x) => { const v = be(x); return v && v.neg(); } };
        break;
      }
      built = arithmetic('-', a!, b!);
      break;
    case 'multiply':
      if (isValue(a!, 0) || isValue(b!, 0)) return constant(0, new Fraction(0));
      if (isValue(a!, 1)) return b!;
      if (isValue(b!, 1)) return a!;
      built = arithmetic('*', a!, b!);
      break;
    case 'divide':
      if (isValue(b!, 1)) return a!;
      built = arithmetic('/', a!, b!);
      break;
    case 'pow':
      if (b!.value === undefined) throw new Unsupported('variable exponent');
      if (b!.value === 1) return a!;
      built = power(a!, b!.value, b!.exactValue ?? null);
      break;
    default:
      throw new Unsupported(node.fn);
  }
  return args.every((arg) => arg.value !== undefined) ? fold(built) : built;
}

type Operator = '+' | '-' | '*' | '/';

const exactOps: Readonly<Record<Operator, (u: Fraction, v: Fraction) => Fraction | null>> = {
  '+': (u, v) => u.add(v),
  '-': (u, v) => u.sub(v),
  '*': (u, v) => u.mul(v),
  // fraction.js throws on ÷0; null says "no exact value" without an exception per draw.
  '/': (u, v) => (v.n === 0n ? null : u.div(v)),
};

/** Closure makers for one operator, by operand shape: f = subtree, s = input x[i], c = constant. */
interface Kernels {
  ff: (a: Num, b: Num) => Num;
  fs: (a: Num, j: number) => Num;
  sf: (i: number, b: Num) => Num;
  ss: (i: number, j: number) => Num;
  fc: (a: Num, d: number) => Num;
  cf: (c: number, b: Num) => Num;
  sc: (i: number, d: number) => Num;
  cs: (c: number, j: number) => Num;
}

// One closure literal per operator and shape. A generic `op(a(x), b(x))` would add a call that
// sees every operator (megamorphic), and reading inputs in place saves a call per leaf: together
// about half a Monte Carlo's time.
const kernels: Readonly<Record<Operator, Kernels>> = {
  '+': {
    ff: (a, b) => (x) => a(x) + b(x),
    fs: (a, j) => (x) => a(x) + x[j]!,
    sf: (i, b) => (x) => x[i]! + b(x),
    ss: (i, j) => (x) => x[i]! + x[j]!,
    fc: (a, d) => (x) => a(x) + d,
    cf: (c, b) => (x) => c + b(x),
    sc: (i, d) => (x) => x[i]! + d,
    cs: (c, j) => (x) => c + x[j]!,
  },
  '-': {
    ff: (a, b) => (x) => a(x) - b(x),
    fs: (a, j) => (x) => a(x) - x[j]!,
    sf: (i, b) => (x) => x[i]! - b(x),
    ss: (i, j) => (x) => x[i]! - x[j]!,
    fc: (a, d) => (x) => a(x) - d,
    cf: (c, b) => (x) => c - b(x),
    sc: (i, d) => (x) => x[i]! - d,
    cs: (c, j) => (x) => c - x[j]!,
  },
  '*': {
    ff: (a, b) => (x) => a(x) * b(x),
    fs: (a, j) => (x) => a(x) * x[j]!,
    sf: (i, b) => (x) => x[i]! * b(x),
    ss: (i, j) => (x) => x[i]! * x[j]!,
    fc: (a, d) => (x) => a(x) * d,
    cf: (c, b) => (x) => c * b(x),
    sc: (i, d) => (x) => x[i]! * d,
    cs: (c, j) => (x) => c * x[j]!,
  },
  '/': {
    ff: (a, b) => (x) => a(x) / b(x),
    fs: (a, j) => (x) => a(x) / x[j]!,
    sf: (i, b) => (x) => x[i]! / b(x),
    ss: (i, j) => (x) => x[i]! / x[j]!,
    fc: (a, d) => (x) => a(x) / d,
    cf: (c, b) => (x) => c / b(x),
    sc: (i, d) => (x) => x[i]! / d,
    cs: (c, j) => (x) => c / x[j]!,
  },
};

/** A binary operation on two built operands (at most one constant: both would be folded). */
function arithmetic(op: Operator, a: Built, b: Built): Built {
  const k = kernels[op];
  const exact = exactOp(exactOps[op], a.exact, b.exact);
  let num: Num;
  if (a.value !== undefined) num = b.slot !== undefined ? k.cs(a.value, b.slot) : k.cf(a.value, b.num);
  else if (b.value !== undefined) num = a.slot !== undefined ? k.sc(a.slot, b.value) : k.fc(a.num, b.value);
  else if (a.slot !== undefined) num = b.slot !== undefined ? k.ss(a.slot, b.slot) : k.sf(a.slot, b.num);
  else num = b.slot !== undefined ? k.fs(a.num, b.slot) : k.ff(a.num, b.num);
  return { num, exact };
}

function power(a: Built, p: number, exactP: Fraction | null): Built {
  const an = a.num;
  const ae = a.exact;
  const exact: Exact = exactP === null ? () => null : (x) => { const u = ae(x); return u && exactPower(u, exactP); };
  const i = a.slot;
  let num: Num;
  // Squares (bore²) are the common case, and a multiply is cheaper than Math.pow.
  if (p === 2) num = i !== undefined ? (x) => x[i]! * x[i]! : (x) => { const u = an(x); return u * u; };
  else if (p === 3) num = (x) => { const u = an(x); return u * u * u; };
  else if (p === 0.5) num = (x) => Math.sqrt(an(x));
  else if (p === -1) num = (x) => 1 / an(x);
  else num = (x) => Math.pow(an(x), p);
  return { num, exact };
}

// ---------------------------------------------------------------------------------------------
// Display for the working.

const SUPERSCRIPT: Readonly<Record<string, string>> = {
  '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹',
};

function integerExponent(node: MathNode): number | null {
  if (isConstant(node) && typeof node.value === 'number' && Number.isInteger(node.value)) return node.value;
  if (isOperator(node) && node.fn === 'unaryMinus') {
    const inner = integerExponent(node.args[0]!);
    return inner === null ? null : -inner;
  }
  return null;
}

/** Prints the tree as written (mathjs keeps the builder's parentheses) with typeset operators. */
function show(node: MathNode, names: readonly string[]): string {
  if (isParenthesis(node)) return `(${show(node.content, names)})`;
  if (isConstant(node)) return String(node.value);
  if (isSymbol(node)) {
    if (isPi(node.name)) return 'π';
    const index = placeholderIndex(node.name);
    return index === null ? node.name : (names[index] ?? node.name);
  }
  if (isFunction(node)) {
    const arg = node.args[0]!;
    const inner = show(arg, names);
    return isSymbol(arg) || isConstant(arg) || isParenthesis(arg) ? `√${inner}` : `√(${inner})`;
  }
  if (isOperator(node)) {
    const [a, b] = node.args.map((arg) => show(arg, names));
    switch (node.fn) {
      case 'unaryMinus':
        return `−${a}`;
      case 'unaryPlus':
        return `+${a}`;
      case 'add':
        return `${a} + ${b}`;
      case 'subtract':
        return `${a} − ${b}`;
      case 'multiply':
        return `${a} × ${b}`;
      case 'divide':
        return `${a} ÷ ${b}`;
      case 'pow': {
        // √a² would read as √(a²), so a root raised to a power keeps its own parentheses.
        const base = isFunction(node.args[0]!) ? `(${a})` : a;
        const n = integerExponent(node.args[1]!);
        if (n !== null) return base + [...String(n)].map((c) => SUPERSCRIPT[c] ?? c).join('');
        return `${base}^${isOperator(node.args[1]!) ? `(${b})` : b}`;
      }
    }
  }
  return restoreNames(node.toString(), names);
}

// ---------------------------------------------------------------------------------------------
// Sensitivities and linearity.

/** Central differences with a relative step: the fallback when a derivative cannot be compiled. */
function centralDifference(f: Num, slot: number): Num {
  return (x) => {
    const y = Float64Array.from(x);
    const xi = y[slot]!;
    // 1e-6 relative balances truncation (h²) against rounding (ε/h); zero gets an absolute step.
    const h = xi !== 0 ? Math.abs(xi) * 1e-6 : 1e-9;
    y[slot] = xi + h;
    const up = f(y);
    y[slot] = xi - h;
    const down = f(y);
    return (up - down) / (2 * h);
  };
}

interface Sensitivity {
  num: Num;
  /** The derivative tree, when differentiation and compilation worked. */
  node: MathNode | null;
  constant: boolean;
}

function sensitivities(tree: MathNode, f: Num, used: readonly number[], slots: ReadonlyMap<number, number>) {
  return used.map((index, slot): Sensitivity => {
    try {
      // Unsimplified: mathjs's simplify takes ~100 ms per derivative of a compression ratio,
      // and `build` folds the chain rule's leftovers anyway.
      const node = math.derivative(tree, placeholderFor(index), { simplify: false });
      const built = build(node, slots);
      return { num: built.num, node, constant: built.value !== undefined };
    } catch {
      return { num: centralDifference(f, slot), node: null, constant: false };
    }
  });
}

/**
 * Whether every first derivative is constant. Cheap first: derivatives that fold to constants
 * settle it. Otherwise the gradient at two points that differ says "not linear" for nearly every
 * formula; only when it does not (a·b/b) is mathjs's slower simplify asked to confirm. A
 * derivative that failed means "not linear": false only costs the caller a Monte Carlo.
 */
function isLinear(sens: readonly Sensitivity[], inputCount: number): boolean {
  if (sens.every((s) => s.constant)) return true;
  if (sens.some((s) => s.node === null)) return false;
  const p = new Float64Array(inputCount).map((_, i) => 1.37 + 0.61 * i);
  const q = new Float64Array(inputCount).map((_, i) => 2.91 - 0.17 * i);
  for (const s of sens) {
    const u = s.num(p);
    const v = s.num(q);
    if (!(Math.abs(u - v) <= 1e-9 * Math.max(Math.abs(u), Math.abs(v)))) return false;
  }
  try {
    return sens.every((s) => s.constant || !usesAnyInput(math.simplify(s.node!)));
  } catch {
    return false;
  }
}

// ---------------------------------------------------------------------------------------------

function checkInputs(inputs: readonly FormulaInput[]): string[] {
  const problems: string[] = [];
  const seen = new Set<string>();
  for (const { name, dimension } of inputs) {
    if (!FORMULA_NAME_PATTERN.test(name)) {
      problems.push(`"${name}" is not a valid reading name (a letter, then letters, digits, _ or -, at most 40)`);
    } else if (RESERVED_NAMES.has(name)) {
      problems.push(`a reading cannot be called "${name}": in a formula it means ${name === 'pi' ? 'π' : 'square root'}`);
    }
    if (seen.has(name)) problems.push(`"${name}" is listed twice`);
    seen.add(name);
    if (dimension.length !== 5 || !dimension.every(Number.isInteger)) {
      problems.push(`"${name}" has a dimension that is not five whole exponents`);
    }
  }
  return problems;
}

function refuse(messages: readonly string[]): { ok: false; problems: FormulaProblem[] } {
  return { ok: false, problems: messages.map((message) => ({ message })) };
}

/**
 * Parses, checks and compiles a measurement function. Every problem found is returned, each
 * naming the piece of the formula it is about, in the builder's own names.
 */
export function compileFormula(text: string, inputs: readonly FormulaInput[]): CompileResult {
  const inputProblems = checkInputs(inputs);
  if (inputProblems.length > 0) return refuse(inputProblems);
  if (text.trim() === '') return refuse(['the formula is empty']);
  if (text.length > FORMULA_MAX_LENGTH) {
    return refuse([`the formula is ${text.length} characters long; the limit is ${FORMULA_MAX_LENGTH}`]);
  }
  const names = inputs.map((input) => input.name);
  const prepared = prepare(text, names);
  if (prepared.problems.length > 0) return refuse(prepared.problems);

  let tree: MathNode;
  try {
    tree = math.parse(prepared.text);
  } catch (error) {
    const raw = error instanceof Error ? error.message : String(error);
    const message = restoreNames(raw, names).replace(
      /\(char (\d+)\)/,
      (_, at: string) => `(character ${originalPosition(Number(at) - 1, prepared.substitutions) + 1})`,
    );
    return refuse([`could not read the formula: ${message}`]);
  }

  const ctx: CheckContext = { names, dimensions: inputs.map((input) => input.dimension), problems: [] };
  const dimension = check(tree, ctx);
  if (ctx.problems.length > 0 || !dimension) return refuse([...new Set(ctx.problems)]);

  const usedSet = new Set(
    tree.filter((n) => isSymbol(n)).map((n) => placeholderIndex((n as SymbolNode).name)).filter((i) => i !== null),
  );
  const used = names.map((_, i) => i).filter((i) => usedSet.has(i));
  const slots = new Map(used.map((index, slot) => [index, slot]));
  const built = build(tree, slots);
  const f = built.num;
  const exact = built.exact;
  const sens = sensitivities(tree, f, used, slots);
  const partials = sens.map((s) => s.num);
  const count = used.length;

  const formula: CompiledFormula = {
    text,
    inputs: used.map((i) => names[i]!),
    unused: names.filter((_, i) => !usedSet.has(i)),
    dimension,
    linear: isLinear(sens, count),
    evaluate: f,
    evaluateExact(x) {
      try {
        return exact(x);
      } catch {
        return null;
      }
    },
    gradient(x, out = new Float64Array(count)) {
      for (let i = 0; i < count; i++) out[i] = partials[i]!(x);
      return out;
    },
    display: show(tree, names),
  };
  return { ok: true, formula };
}
