/**
 * The calculator: readings → result → uncertainty budget → coverage interval → verdict, with the
 * working. `computeCalc` is the public API's engine and runs unchanged in the browser (in a
 * worker for big Monte Carlo runs) and on the server.
 *
 * The model is either a signed sum of readings (`terms`) or a formula over them. Every reading
 * brings its components (readings.ts); a component shared by several readings (one instrument's
 * calibration) is one input quantity whose sensitivity is the sum of theirs, so a difference
 * cancels it and a sum adds it (GUM 5.2.2 eq. 13 with r = 1). The combined standard uncertainty
 * is the GUM's (eq. 10 over those inputs); ν_eff is Welch–Satterthwaite's (G.4.1). The coverage
 * interval is the GUM's (k from Student's t for ν_eff) when every input is normal and the model
 * linear; otherwise an adaptive, seeded Monte Carlo run (JCGM 101:2008 7.9) gives it, and the GUM
 * interval stands only when it agrees within the numerical tolerance (JCGM 101:2008 8.2).
 */
import { ZodError } from 'zod';
import {
  calcRequestSchema,
  DEFAULT_COVERAGE_PROBABILITY,
  type BudgetLine,
  type CalcRequest,
  type CalcResponse,
  type CalcSpec,
} from './calc.schema';
import type { Component } from './components';
import { coverageFactorFor, impliedCoverageProbability, monteCarlo, numericalTolerance, probabilityWithin, welchSatterthwaite } from './coverage';
import { Fraction, fractionOfDecimal, fractionOfDouble, fractionToExactText, fractionToFixed } from './exact';
import { figureToDecimal, type Figure } from './figures';
import { compileFormula, type CompiledFormula } from './formula';
import { formatCoverageFactor, formatUncertaintyIn, formatValue, plainNumber, uncertaintyDecimals, withUnit } from './format-quantity';
import { evaluateReading, type EvaluatedReading } from './readings';
import { decisionRuleText, DEFAULT_DECISION_RULE, type DecisionRule, type Verdict, verdictWords, rejectWords } from './spec';
import {
  defaultUnitFor,
  dimensionOf,
  factorNumber,
  fromBase,
  quantityOf,
  quantityOfDimension,
  describeDimension,
  toBase,
  type AnyUnit,
  type QuantityKind,
} from './quantities';
import { picometresPerUnit, type LengthUnit } from './units';

/** The outcome of judging a coverage interval against a band. */
export interface IntervalJudgement {
  readonly verdict: Verdict;
  readonly words: string;
  readonly rule: DecisionRule;
  readonly ruleText: string;
  /** Where the decision changes for this interval, in the result's unit (for a band picture). */
  readonly limits: { acceptMin?: number; acceptMax?: number; rejectBelow?: number; rejectAbove?: number };
}

/** Everything the calculator worked out, for a page to draw (the API sends a subset). */
export interface CalcEvaluation {
  readonly readings: ReadonlyMap<string, EvaluatedReading>;
  readonly quantity: QuantityKind;
  /** The unit of the result: resultUnit, else the spec's, else the model's natural one. */
  readonly unit: AnyUnit;
  /** The result in `unit`: exact for sums, differences, means and unit changes. */
  readonly value: Fraction;
  readonly valueIsExact: boolean;
  readonly standardUncertainty: number;
  readonly expandedUncertainty: number;
  readonly coverageFactor: number;
  readonly coverageProbability: number;
  /** Infinity when infinite. */
  readonly effectiveDegreesOfFreedom: number;
  readonly method: 'gum' | 'monte-carlo';
  readonly trials: number | null;
  readonly interval: readonly [number, number];
  readonly budget: readonly BudgetLine[];
  readonly judgement: IntervalJudgement | null;
  readonly preferredJudgement: IntervalJudgement | null;
  readonly rejectJudgement: (IntervalJudgement & { side: 'upper' | 'lower' }) | null;
  readonly probabilityOfConformance: number | null;
  /** Spec limits in `unit`, exactly as converted (for figures other code derives from them). */
  readonly bandExact: { min?: Fraction; max?: Fraction; preferredMin?: Fraction; preferredMax?: Fraction; reject?: Fraction } | null;
  /** Spec limits in `unit`, for a band picture. */
  readonly band: { min?: number; max?: number; preferredMin?: number; preferredMax?: number; reject?: number } | null;
  /** Decimal places the value is shown at (GUM 7.2.6: the last digit of U at two significant digits). */
  readonly valueDecimals: number;
  readonly warnings: readonly string[];
  readonly steps: readonly string[];
  /** Length results only: the value in picometres, u and U in µm, U in pm. */
  readonly valuePm: bigint | null;
  readonly standardUncertaintyUm: number | null;
  readonly expandedUncertaintyUm: number | null;
  readonly expandedPm: bigint | null;
}

/**
 * Validates a request body. Throws the ZodError (a typed validation error whose issues name the
 * fields) on bad input; never throws anything else.
 */
export function parseCalcRequest(input: unknown): CalcRequest {
  const result = calcRequestSchema.safeParse(input);
  if (!result.success) throw result.error;
  return result.data;
}

function refuse(path: (string | number)[], message: string): never {
  throw new ZodError([{ code: 'custom', path, message, input: undefined }]);
}

function exactFigure(figure: Figure): Fraction {
  const decimal = figureToDecimal(figure);
  if (!decimal) refuse([], 'a figure is not a decimal number');
  return fractionOfDecimal(decimal);
}

/** FNV-1a over the request text: the same request always draws the same Monte Carlo trials. */
function seedOf(text: string): number {
  let hash = 0x811c9dc5;
  for (let i = 0; i < text.length; i += 1) {
    hash ^= text.charCodeAt(i);
    hash = Math.imul(hash, 0x01000193) >>> 0;
  }
  return hash;
}

interface Model {
  /** Input names, in the order of x. */
  names: string[];
  /** Base-unit estimates. */
  x: Float64Array;
  exactX: Fraction[];
  evaluate: (x: Float64Array) => number;
  evaluateExact: (x: readonly Fraction[]) => Fraction | null;
  gradient: (x: Float64Array) => Float64Array;
  linear: boolean;
  quantity: QuantityKind;
  /** Natural unit of the result when none is asked for. */
  naturalUnit: AnyUnit;
  /** For temperatures: is the result a difference (no offset in conversions)? */
  difference: boolean;
  /** The model written out for the working. */
  expression: string;
  numbers: string;
  isClearance: boolean;
  formula: CompiledFormula | null;
}

function buildModel(request: CalcRequest, readings: ReadonlyMap<string, EvaluatedReading>): Model {
  const constants = request.constants ?? {};
  const names = [...readings.keys(), ...Object.keys(constants)];
  const exactX: Fraction[] = [];
  const units: AnyUnit[] = [];
  for (const [, r] of readings) {
    exactX.push(toBase(r.estimate, r.unit));
    units.push(r.unit);
  }
  for (const [, c] of Object.entries(constants)) {
    exactX.push(toBase(exactFigure(c.value), c.unit));
    units.push(c.unit);
  }
  const x = Float64Array.from(exactX, (f) => f.valueOf());

  if (request.terms) {
    const terms = request.terms;
    const index = terms.map((t) => names.indexOf(t.reading));
    const signs = terms.map((t) => t.sign);
    const first = readings.get(terms[0]!.reading)!;
    terms.forEach((t, i) => {
      const r = readings.get(t.reading)!;
      if (r.quantity !== first.quantity) {
        refuse(['terms', i, 'reading'], `terms.${i}.reading "${t.reading}" is a ${r.quantity}, but "${first.key}" is a ${first.quantity}: a ${first.quantity} and a ${r.quantity} cannot be added`);
      }
    });
    let difference = false;
    if (first.quantity === 'temperature') {
      const net = signs.reduce((a, b) => a + b, 0);
      if (net !== 0 && net !== 1) refuse(['terms'], 'a signed sum of temperatures must be a temperature (signs add to 1) or a difference of temperatures (signs add to 0)');
      difference = net === 0;
    }
    const evaluate = (v: Float64Array) => {
      let y = 0;
      for (let i = 0; i < index.length; i += 1) y += signs[i]! * v[index[i]!]!;
      return y;
    };
    const grad = new Float64Array(names.length);
    index.forEach((j, i) => (grad[j] = signs[i]!));
    const expression = terms.map((t, i) => `${t.sign === 1 ? (i === 0 ? '' : '+ ') : '− '}${t.reading}`).join(' ');
    const numbers = terms
      .map((t, i) => {
        const r = readings.get(t.reading)!;
        return `${t.sign === 1 ? (i === 0 ? '' : '+ ') : '− '}${formatValue(r.estimate, r.unit, decimalsOfStep(r.displayStep))}`;
      })
      .join(' ');
    return {
      names,
      x,
      exactX,
      evaluate,
      evaluateExact: (v) => index.reduce((acc, j, i) => (signs[i] === 1 ? acc.add(v[j]!) : acc.sub(v[j]!)), new Fraction(0)),
      gradient: () => grad,
      linear: true,
      quantity: first.quantity,
      naturalUnit: first.unit,
      difference,
      expression,
      numbers,
      isClearance: first.quantity === 'length',
      formula: null,
    };
  }

  const text = request.formula as string;
  const compiled = compileFormula(
    text,
    names.map((name, i) => ({ name, dimension: dimensionOf(units[i]!) })),
  );
  if (!compiled.ok) refuse(['formula'], compiled.problems.map((p) => p.message).join('; '));
  const formula = compiled.formula;
  const quantity = quantityOfDimension(formula.dimension);
  if (!quantity) refuse(['formula'], `the formula gives ${describeDimension(formula.dimension)}, which is not a quantity the engine can judge (a length, volume, angle, torque, pressure, temperature, time, mass or ratio)`);
  let difference = false;
  if (quantity === 'temperature') {
    // Shift every temperature input by 1 K: an absolute temperature moves by 1, a difference by 0.
    const at = (v: Float64Array) => formula.evaluate(Float64Array.from(formula.inputs, (n) => v[names.indexOf(n)]!));
    const shifted = Float64Array.from(x);
    units.forEach((u, i) => {
      if (quantityOf(u) === 'temperature') shifted[i] = shifted[i]! + 1;
    });
    const moved = at(shifted) - at(x);
    if (Math.abs(moved - 1) < 1e-9) difference = false;
    else if (Math.abs(moved) < 1e-9) difference = true;
    else refuse(['formula'], 'a formula that gives a temperature must give a temperature or a difference of temperatures');
  }
  // The compiled formula reads only the inputs it uses, in their order: map them from the full list.
  const usedIndex = formula.inputs.map((n) => names.indexOf(n));
  const scratch = new Float64Array(usedIndex.length);
  const pick = (v: Float64Array) => {
    for (let i = 0; i < usedIndex.length; i += 1) scratch[i] = v[usedIndex[i]!]!;
    return scratch;
  };
  const sameQuantityInput = usedIndex.find((i) => quantityOf(units[i]!) === quantity);
  const naturalUnit = sameQuantityInput !== undefined ? units[sameQuantityInput]! : defaultUnitFor(quantity, 'metric');
  return {
    names,
    x,
    exactX,
    evaluate: (v) => formula.evaluate(pick(v)),
    evaluateExact: (v) => formula.evaluateExact(usedIndex.map((i) => v[i]!)),
    gradient: (v) => {
      const g = formula.gradient(pick(v));
      const full = new Float64Array(names.length);
      usedIndex.forEach((j, i) => (full[j] = g[i]!));
      return full;
    },
    linear: formula.linear,
    quantity,
    naturalUnit,
    difference,
    expression: formula.display,
    numbers: '',
    isClearance: false,
    formula,
  };
}

function decimalsOfStep(step: Fraction): number {
  const s = step.abs();
  if (s.n === 0n) return 12;
  for (let d = 0; d < 12; d += 1) if (new Fraction(1n, 10n ** BigInt(d)).lte(s)) return d;
  return 12;
}

/** Merges components by id: an instrument's component entering several readings becomes one input with several effects. */
function mergeComponents(readings: ReadonlyMap<string, EvaluatedReading>): Component[] {
  const byId = new Map<string, Component>();
  for (const [, r] of readings) {
    for (const c of r.components) {
      const seen = byId.get(c.id);
      if (!seen) byId.set(c.id, c);
      else {
        if (seen.unit !== c.unit || seen.standardUncertainty !== c.standardUncertainty) {
          refuse(['readings', r.key, 'instrument'], `${r.key} shares ${c.instrument ?? c.id} with readings of another kind; an instrument's readings must be of one quantity`);
        }
        byId.set(c.id, { ...seen, effects: [...seen.effects, ...c.effects] });
      }
    }
  }
  return [...byId.values()];
}

/** Judges a coverage interval against a band: ISO 14253-1 with the guard band of the interval itself. */
export function judgeInterval(
  value: Fraction,
  low: Fraction,
  high: Fraction,
  band: { min?: Fraction; max?: Fraction },
  rule: DecisionRule,
  words: Readonly<Record<Verdict, string>> = verdictWords,
): IntervalJudgement {
  const { min, max } = band;
  let verdict: Verdict;
  if (rule === 'simple') {
    verdict = (min === undefined || value.gte(min)) && (max === undefined || value.lte(max)) ? 'conforms' : 'does-not-conform';
  } else if ((min === undefined || low.gte(min)) && (max === undefined || high.lte(max))) verdict = 'conforms';
  else if ((min !== undefined && high.lte(min)) || (max !== undefined && low.gte(max))) verdict = 'does-not-conform';
  else verdict = 'undecided';
  const below = rule === 'simple' ? new Fraction(0) : value.sub(low);
  const above = rule === 'simple' ? new Fraction(0) : high.sub(value);
  return {
    verdict,
    words: words[verdict],
    rule,
    ruleText: decisionRuleText[rule],
    limits: {
      ...(min !== undefined && { acceptMin: min.add(below).valueOf(), rejectBelow: min.sub(above).valueOf() }),
      ...(max !== undefined && { acceptMax: max.sub(above).valueOf(), rejectAbove: max.add(below).valueOf() }),
    },
  };
}

const memo = new Map<string, CalcEvaluation>();
const MEMO_SIZE = 300;

/**
 * A non-normal component whose share of the variance reaches this, or a non-linear model, makes
 * the engine run Monte Carlo (and keep the GUM interval only if the run confirms it). Below it,
 * many small rectangular components add up to a near-normal result (GUM G.2.2, the central limit
 * theorem) and the GUM interval is used directly. Our threshold; no published source.
 */
export const MONTE_CARLO_SHARE = 0.25;

/** A counted coverage is reported no higher than this: a finite run cannot show 100 %. */
const COVERAGE_PROBABILITY_CAP = 0.9999;

/** Options for benchmarks and tests: a fixed number of Monte Carlo trials, run even where the GUM would do. */
export interface EvaluateOptions {
  readonly trials?: number;
  readonly forceMonteCarlo?: boolean;
}

/** Works out a validated request. Pure: the same request always gives the same evaluation. */
export function evaluateCalc(request: CalcRequest, options: EvaluateOptions = {}): CalcEvaluation {
  const requestText = JSON.stringify(request);
  const key = options.trials || options.forceMonteCarlo ? `${requestText}|${options.trials ?? ''}|${options.forceMonteCarlo ?? ''}` : requestText;
  const cached = memo.get(key);
  if (cached) return cached;
  const evaluation = evaluateUncached(request, options);
  if (memo.size >= MEMO_SIZE) memo.delete(memo.keys().next().value as string);
  memo.set(key, evaluation);
  return evaluation;
}

function evaluateUncached(request: CalcRequest, options: EvaluateOptions): CalcEvaluation {
  const instruments = request.instruments ?? {};
  // The seed is the model alone (readings, instruments, terms or formula, constants): the same result
  // judged against another spec, shown in another unit or at another probability draws the same trials.
  const modelOnly = { readings: request.readings, instruments: request.instruments, terms: request.terms, formula: request.formula, constants: request.constants };
  const modelText = JSON.stringify(modelOnly);
  const readings = new Map<string, EvaluatedReading>();
  for (const [key, reading] of Object.entries(request.readings)) readings.set(key, evaluateReading(key, reading, instruments));
  const model = buildModel(request, readings);
  const steps: string[] = [];
  const warnings: string[] = [];

  // Working for the readings in the model first, then any others (a diameter for a per-size figure).
  const usedNames = request.terms ? request.terms.map((t) => t.reading) : model.formula!.inputs.filter((n) => readings.has(n));
  const used = new Set(usedNames);
  for (const name of usedNames) steps.push(...readings.get(name)!.steps);
  for (const [key, r] of readings) if (!used.has(key)) steps.push(...r.steps);
  for (const name of usedNames) warnings.push(...readings.get(name)!.notes);

  // The result and its unit.
  const quantity = model.quantity;
  const unit: AnyUnit = request.resultUnit ?? (request.spec && quantityOf(request.spec.unit) === quantity ? request.spec.unit : model.naturalUnit);
  if (quantityOf(unit) !== quantity) {
    refuse([request.resultUnit ? 'resultUnit' : 'spec', ...(request.resultUnit ? [] : ['unit'])], `the result is a ${quantity}; ${unit} is a unit of ${quantityOf(unit)}`);
  }
  const conv = { difference: model.difference };
  const exactBase = model.evaluateExact(model.exactX);
  const yBase = model.evaluate(model.x);
  if (!Number.isFinite(yBase)) refuse([request.formula ? 'formula' : 'terms'], 'the result cannot be worked out from these readings (a division by zero, or a square root of a negative number)');
  const valueBase = exactBase ?? fractionOfDouble(yBase);
  const value = fromBase(valueBase, unit, conv);
  const perUnit = factorNumber(unit);
  const toUnit = (base: number) => fromBase(fractionOfDouble(base), unit, conv).valueOf();

  // Budget: sensitivities at the estimates, contributions in the result's unit.
  const components = mergeComponents(readings);
  const gradient = model.gradient(model.x);
  const indexOf = new Map(model.names.map((n, i) => [n, i]));
  const lines = components.map((c) => {
    let sBase = 0;
    for (const e of c.effects) sBase += e.effect * gradient[indexOf.get(e.reading)!]!;
    const sensitivity = sBase / perUnit;
    return { c, sensitivity, contribution: sensitivity * c.standardUncertainty };
  });
  const u = Math.hypot(...lines.map((l) => l.contribution));
  const nuEff = welchSatterthwaite(lines.map((l) => ({ contribution: l.contribution, dof: l.c.degreesOfFreedom })));
  const budget: BudgetLine[] = lines.map(({ c, sensitivity, contribution }) => ({
    reading: [...new Set(c.effects.map((e) => e.reading))].join(', '),
    source: c.source,
    distribution: c.distribution,
    standardUncertainty: c.standardUncertainty,
    inputUnit: c.unit,
    divisor: c.divisor,
    sensitivity,
    contribution,
    degreesOfFreedom: Number.isFinite(c.degreesOfFreedom) ? c.degreesOfFreedom : null,
    share: u > 0 ? (contribution * contribution) / (u * u) : 0,
    instrument: c.instrument ?? null,
  }));

  const show = (v: Fraction | number, decimals: number) => {
    const own = formatValue(v, unit, decimals);
    if (quantity !== 'length' || unit === 'um') return own;
    const um = typeof v === 'number' ? (v * perUnit) / 1e-6 : v.mul(fromBase(toBase(new Fraction(1), unit), 'um')).valueOf();
    return `${own} (${formatValue(um, 'um', Math.max(0, decimals - 3))})`;
  };
  const showU = (x: number) => {
    const own = formatUncertaintyIn(x, unit);
    return quantity !== 'length' || unit === 'um' ? own : `${own} (${formatUncertaintyIn((x * perUnit) / 1e-6, 'um')})`;
  };

  const resultWord = model.isClearance ? 'Clearance' : 'Result';
  const firstDecimals = Math.max(...usedNames.map((n) => decimalsOfStep(readings.get(n)!.displayStep)), 0);
  if (request.terms) {
    steps.push(
      request.terms.length > 12
        ? `${resultWord} = signed sum of ${request.terms.length} terms = ${show(value, firstDecimals)}.`
        : `${resultWord} = ${model.expression} = ${model.numbers} = ${show(value, firstDecimals)}.`,
    );
  } else {
    steps.push(
      `${resultWord} = ${model.expression} = ${show(value, Math.max(firstDecimals, 3))}${model.formula?.linear ? '' : ' (the model is not linear)'}${exactBase ? '' : ''}.`,
    );
    if (Object.keys(request.constants ?? {}).length) {
      steps.push(
        `Constants, exact: ${Object.entries(request.constants ?? {})
          .map(([n, c]) => `${n} = ${withUnit(String(c.value), c.unit)}`)
          .join(', ')}.`,
      );
    }
  }
  const shared = budget.filter((b) => b.instrument && b.reading.includes(','));
  const listed = lines.length > 8 ? `the ${lines.length} components' (c·u)²` : lines.map((l) => `(${formatUncertaintyIn(Math.abs(l.contribution), unit)})²`).join(' + ');
  steps.push(
    `Combined standard uncertainty, each input's standard uncertainty times its sensitivity (GUM eq. 10${shared.length ? '; a component shared by readings taken with one instrument enters once, with the sum of their sensitivities: eq. 13 with r = 1, GUM 5.2.2 and F.1.2.3' : ''}): u_c = √(${listed}) = ${showU(u)}.`,
  );
  for (const s of shared) {
    steps.push(
      `${s.source} is shared by ${s.reading}: its sensitivities add to ${plainNumber(s.sensitivity, 4)}${Math.abs(s.sensitivity) < 1e-12 ? ', so it cancels in the difference' : ''}.`,
    );
  }
  steps.push(
    Number.isFinite(nuEff)
      ? `Effective degrees of freedom (Welch–Satterthwaite, GUM G.4.1 eq. G.2b): ν_eff = u_c⁴ / Σ (c_i u_i)⁴/ν_i = ${plainNumber(nuEff, 4)}.`
      : 'Effective degrees of freedom: infinite (every component is a Type B evaluation with no stated degrees of freedom, GUM G.4.1).',
  );

  // Coverage.
  let method: 'gum' | 'monte-carlo' = 'gum';
  let trials: number | null = null;
  let k: number;
  let p: number;
  let low: number;
  let high: number;
  let mcWithin: number | null = null;
  const y = value.valueOf();
  const specBand = request.spec ? bandOf(request.spec, unit, conv) : null;
  // A linear model is y = y₀ + Σ c_j δ_j exactly, so its trials need only each component's draw
  // times its sensitivity; other models are evaluated at every trial's inputs.
  const mcIndex = new Map(model.names.map((n, i) => [n, i]));
  const mcEstimates = model.linear ? [yBase] : Array.from(model.x);
  const mcModel = model.linear ? (v: Float64Array) => v[0]! : model.evaluate;
  const mcComponents = components.map((c, j) => ({
    distribution: c.distribution,
    standardUncertainty: c.standardUncertainty,
    ...(c.halfWidth !== undefined && { halfWidth: c.halfWidth }),
    degreesOfFreedom: c.degreesOfFreedom,
    effects: model.linear
      ? [{ index: 0, effect: lines[j]!.sensitivity * perUnit }]
      : c.effects.map((e) => ({ index: mcIndex.get(e.reading)!, effect: e.effect })),
  }));
  const baseOf = (v: number) => toBase(fractionOfDouble(v), unit, conv).valueOf();
  const bandInBase = (band: { min?: Fraction; max?: Fraction }) => ({
    ...(band.min !== undefined && { min: toBase(band.min, unit, conv).valueOf() }),
    ...(band.max !== undefined && { max: toBase(band.max, unit, conv).valueOf() }),
  });
  const nonNormal = lines.some((l) => l.c.distribution !== 'normal' && u > 0 && (l.contribution * l.contribution) / (u * u) >= MONTE_CARLO_SHARE);
  if (request.coverageFactor !== undefined) {
    k = request.coverageFactor;
    low = y - k * u;
    high = y + k * u;
    if (u > 0 && (nonNormal || !model.linear)) {
      // The interval y ± k·u_c as chosen; how much it covers, and how much lies within the spec,
      // are counted over the same trials (same seed) of the result's own distribution.
      const count = (band: { min?: number; max?: number }) =>
        monteCarlo({
          estimates: mcEstimates,
          components: mcComponents,
          model: mcModel,
          probability: 0.95,
          seed: seedOf(modelText),
          tolerance: numericalTolerance(u * perUnit),
          band,
        });
      const mc = count({ min: baseOf(low), max: baseOf(high) });
      trials = mc.trials;
      p = Math.min(COVERAGE_PROBABILITY_CAP, mc.probabilityWithin ?? impliedCoverageProbability(k, nuEff));
      if (specBand) mcWithin = count(bandInBase(specBand)).probabilityWithin;
      steps.push(
        `Expanded uncertainty U = k·u_c with k = ${plainNumber(k)} as chosen (GUM 6.2.1): U = ${showU(k * u)}. The result is not near-normal, so what that interval covers was counted by Monte Carlo (JCGM 101:2008, ${mc.trials.toLocaleString('en-US')} trials): ${plainNumber(p * 100, 4)} %.`,
      );
    } else {
      p = impliedCoverageProbability(k, nuEff);
      steps.push(
        `Expanded uncertainty U = k·u_c with k = ${plainNumber(k)} as chosen (GUM 6.2.1): U = ${showU(k * u)}; for a t-distribution with ν_eff = ${Number.isFinite(nuEff) ? plainNumber(nuEff, 3) : '∞'} that is a coverage probability of about ${(p * 100).toFixed(1)} % (GUM G.3).`,
      );
    }
  } else {
    p = request.coverageProbability ?? DEFAULT_COVERAGE_PROBABILITY;
    const kT = coverageFactorFor(p, nuEff);
    const gumLow = y - kT * u;
    const gumHigh = y + kT * u;
    const pText = `${plainNumber(p * 100, 4)} %`;
    steps.push(
      `GUM interval: k = t_${plainNumber((1 + p) / 2, 4)}(${Number.isFinite(nuEff) ? Math.floor(nuEff) : '∞'}) = ${kT.toFixed(3)} for ${pText} (GUM G.3.2, G.4.1, ν_eff truncated to a whole number), U = k·u_c = ${showU(kT * u)}.`,
    );
    if (u > 0 && (nonNormal || !model.linear || options.forceMonteCarlo)) {
      const deltaBase = numericalTolerance(u * perUnit);
      const bandBase = specBand ? bandInBase(specBand) : undefined;
      const mc = monteCarlo({
        estimates: mcEstimates,
        components: mcComponents,
        model: mcModel,
        probability: p,
        seed: seedOf(modelText),
        tolerance: options.trials ? 0 : deltaBase,
        ...(options.trials && { maxTrials: options.trials, batchSize: Math.min(options.trials, 100_000) }),
        ...(bandBase && { band: bandBase }),
      });
      trials = mc.trials;
      const mcLow = toUnit(mc.low);
      const mcHigh = toUnit(mc.high);
      const delta = deltaBase / perUnit;
      const agrees = Math.abs(gumLow - mcLow) <= delta && Math.abs(gumHigh - mcHigh) <= delta;
      const dp = uncertaintyDecimals(u) + 1;
      steps.push(
        `Monte Carlo (JCGM 101:2008 7.9, adaptive, seeded so it repeats): ${mc.trials.toLocaleString('en-US')} trials drawing every input from its own distribution; the ${pText} probabilistically symmetric coverage interval is [${show(mcLow, dp)}, ${show(mcHigh, dp)}]${mc.converged ? '' : ' (the run reached its trial limit before the interval settled)'}.`,
      );
      if (agrees) {
        low = gumLow;
        high = gumHigh;
        k = kT;
        steps.push(`The GUM interval agrees with it within the numerical tolerance δ = ${showU(delta)} (JCGM 101:2008 8.2), so the GUM interval stands.`);
      } else {
        method = 'monte-carlo';
        low = mcLow;
        high = mcHigh;
        mcWithin = mc.probabilityWithin;
        k = u > 0 ? Math.max(y - low, high - y) / u : 0;
        steps.push(
          `The GUM interval differs from it by more than δ = ${showU(delta)} (JCGM 101:2008 8.2): ${
            nonNormal ? 'a rectangular or few-reading component weighs too much for the normal approximation' : 'the model is not linear enough'
          }, so the Monte Carlo interval is used.`,
        );
        if (!mc.converged) warnings.push('The Monte Carlo run reached its trial limit before its interval settled to the numerical tolerance; the interval may move in its last digit.');
      }
    } else {
      low = gumLow;
      high = gumHigh;
      k = kT;
    }
  }
  // A chosen k gives U = k·u_c exactly (GUM 6.2.1); otherwise U is the larger side of the interval.
  const expanded = request.coverageFactor !== undefined ? request.coverageFactor * u : Math.max(y - low, high - y);
  // Monte Carlo ends carry sampling noise; call the interval asymmetric only beyond the numerical tolerance (JCGM 101 7.9.2).
  const asymmetric = Math.abs(y - low - (high - y)) > Math.max(numericalTolerance(u), 1e-12 * Math.max(1, Math.abs(y)));
  const vDecimals = uncertaintyDecimals(expanded);
  steps.push(
    asymmetric
      ? `Coverage interval [${show(low, vDecimals)}, ${show(high, vDecimals)}] around ${show(value, vDecimals)}: asymmetric, ${showU(y - low)} below and ${showU(high - y)} above; U (the larger side) = ${showU(expanded)}.`
      : `Coverage interval ${show(value, vDecimals)} ± ${showU(expanded)} = [${show(low, vDecimals)}, ${show(high, vDecimals)}], coverage probability ${plainNumber(p * 100, 4)} %.`,
  );

  // Conformity.
  let judgement: IntervalJudgement | null = null;
  let preferredJudgement: IntervalJudgement | null = null;
  let rejectJudgement: (IntervalJudgement & { side: 'upper' | 'lower' }) | null = null;
  let probabilityOfConformance: number | null = null;
  let band: CalcEvaluation['band'] = null;
  let bandExact: CalcEvaluation['bandExact'] = null;
  if (request.spec && specBand) {
    bandExact = { ...specBand };
    const spec = request.spec;
    const rule = spec.rule ?? DEFAULT_DECISION_RULE;
    const lowF = fractionOfDouble(low);
    const highF = fractionOfDouble(high);
    judgement = judgeInterval(value, lowF, highF, specBand, rule);
    const num = (f: Fraction | undefined) => (f === undefined ? undefined : f.valueOf());
    band = {
      ...(specBand.min !== undefined && { min: num(specBand.min) }),
      ...(specBand.max !== undefined && { max: num(specBand.max) }),
    };
    probabilityOfConformance =
      mcWithin !== null
        ? mcWithin
        : probabilityWithin({ ...(band.min !== undefined && { min: band.min }), ...(band.max !== undefined && { max: band.max }) }, y, u, nuEff);
    const limitText = (f: Fraction) => withUnit(fractionToExactText(f)?.replace('-', '−') ?? fractionToFixed(f, 8), unit);
    const bandText =
      specBand.min !== undefined && specBand.max !== undefined
        ? `${limitText(specBand.min)} to ${limitText(specBand.max)}`
        : specBand.min !== undefined
          ? `at least ${limitText(specBand.min)}`
          : `at most ${limitText(specBand.max!)}`;
    if (rule === 'guarded') {
      const width = specBand.min !== undefined && specBand.max !== undefined ? specBand.max.sub(specBand.min).valueOf() : null;
      const lim = judgement.limits;
      const fmt = (n: number) => show(n, vDecimals + 1);
      if (width !== null && high - low > width) {
        steps.push(
          `Spec ${bandText}, guarded rule: the coverage interval (${showU(high - low)} wide) is wider than the band (${withUnit(plainNumber(width, 6), unit)}), so no result measured this way can be shown within spec; out of spec when the whole interval lies outside a limit (value ≤ ${fmt(lim.rejectBelow!)} or ≥ ${fmt(lim.rejectAbove!)}); too close to call otherwise.`,
        );
      } else {
        const accept = [lim.acceptMin !== undefined ? `${fmt(lim.acceptMin)} ≤` : '', 'value', lim.acceptMax !== undefined ? `≤ ${fmt(lim.acceptMax)}` : ''].filter(Boolean).join(' ');
        const reject = [lim.rejectBelow !== undefined ? `value ≤ ${fmt(lim.rejectBelow)}` : '', lim.rejectAbove !== undefined ? `value ≥ ${fmt(lim.rejectAbove)}` : ''].filter(Boolean).join(' or ');
        steps.push(
          `Spec ${bandText}, guarded rule (ISO 14253-1): within spec when the whole coverage interval lies inside the limits (${accept}); out of spec when it lies wholly outside one (${reject}); too close to call between.`,
        );
      }
      if (width !== null && expanded > width / 4) {
        warnings.push(
          `This way of measuring is coarse for this band: U (${formatUncertaintyIn(expanded, unit)}) is more than a quarter of the tolerance (${withUnit(plainNumber(width, 6), unit)}); finer instruments or more readings would decide more parts (a 4:1 ratio is common practice, no published source).`,
        );
      }
    } else {
      steps.push(`Spec ${bandText}, simple rule: within spec when the value itself is inside the limits (inclusive); otherwise out of spec.`);
    }
    steps.push(`Probability of conformance (JCGM 106:2012 7.2): ${(probabilityOfConformance * 100).toFixed(probabilityOfConformance > 0.999 || probabilityOfConformance < 0.001 ? 2 : 1)} % that the true value lies within the band, from the ${mcWithin !== null ? 'Monte Carlo trials' : `t-distribution with ν_eff = ${Number.isFinite(nuEff) ? plainNumber(nuEff, 3) : '∞'}`}.`);

    if (spec.preferred) {
      const pMin = spec.preferred.min !== undefined ? exactIn(spec.preferred.min, spec.unit, unit, conv) : specBand.min;
      const pMax = spec.preferred.max !== undefined ? exactIn(spec.preferred.max, spec.unit, unit, conv) : specBand.max;
      preferredJudgement = judgeInterval(value, lowF, highF, { ...(pMin && { min: pMin }), ...(pMax && { max: pMax }) }, rule);
      band = { ...band, ...(pMin && { preferredMin: pMin.valueOf() }), ...(pMax && { preferredMax: pMax.valueOf() }) };
      bandExact = { ...bandExact, ...(pMin && { preferredMin: pMin }), ...(pMax && { preferredMax: pMax }) };
      steps.push(`Preferred band ${[pMin ? `from ${limitText(pMin)}` : '', pMax ? `to ${limitText(pMax)}` : ''].filter(Boolean).join(' ')}, same rule: ${preferredJudgement.words} (${preferredJudgement.verdict}).`);
    }
    if (spec.reject !== undefined) {
      const reject = exactIn(spec.reject, spec.unit, unit, conv);
      const side: 'upper' | 'lower' = specBand.max !== undefined && reject.gte(specBand.max) ? 'upper' : 'lower';
      const r = judgeInterval(value, lowF, highF, side === 'upper' ? { max: reject } : { min: reject }, rule, rejectWords);
      rejectJudgement = { ...r, side };
      band = { ...band, reject: reject.valueOf() };
      bandExact = { ...bandExact, reject };
      steps.push(`Reject limit ${limitText(reject)} (${side === 'upper' ? 'scrap at or above it' : 'scrap at or below it'}), same rule: ${r.words} (${r.verdict}).`);
    }
    steps.push(
      `Verdict: ${show(value, vDecimals)} with its ${plainNumber(p * 100, 4)} % interval [${show(low, vDecimals)}, ${show(high, vDecimals)}] (${method === 'monte-carlo' ? 'Monte Carlo' : 'GUM'}) is ${judgement.words} (${judgement.verdict}). ${judgement.ruleText}`,
    );
  } else {
    steps.push('No spec given, so no verdict.');
  }

  const isLength = quantity === 'length';
  const umPer = isLength ? perUnit / 1e-6 : 0;
  let valuePm: bigint | null = null;
  if (isLength) {
    const pm = value.mul(picometresPerUnit[unit as LengthUnit]);
    valuePm = pm.d === 1n ? pm.s * pm.n : BigInt(pm.round(0).toString());
  }
  return {
    readings,
    quantity,
    unit,
    value,
    valueIsExact: exactBase !== null,
    standardUncertainty: u,
    expandedUncertainty: expanded,
    coverageFactor: request.coverageFactor ?? (u > 0 ? expanded / u : k),
    coverageProbability: p,
    effectiveDegreesOfFreedom: nuEff,
    method,
    trials,
    interval: [low, high],
    budget,
    judgement,
    preferredJudgement,
    rejectJudgement,
    probabilityOfConformance,
    bandExact,
    band,
    valueDecimals: vDecimals,
    warnings,
    steps,
    valuePm,
    standardUncertaintyUm: isLength ? u * umPer : null,
    expandedUncertaintyUm: isLength ? expanded * umPer : null,
    expandedPm: isLength ? BigInt(Math.round(expanded * umPer * 1e6)) : null,
  };
}

function exactIn(figure: Figure, from: AnyUnit, to: AnyUnit, conv: { difference: boolean }): Fraction {
  return fromBase(toBase(exactFigure(figure), from, conv), to, conv);
}

function bandOf(spec: CalcSpec, unit: AnyUnit, conv: { difference: boolean }): { min?: Fraction; max?: Fraction } {
  if (quantityOf(spec.unit) !== quantityOf(unit)) refuse(['spec', 'unit'], `spec.unit ${spec.unit} is a unit of ${quantityOf(spec.unit)}, but the result is a ${quantityOf(unit)}`);
  return {
    ...(spec.min !== undefined && { min: exactIn(spec.min, spec.unit, unit, conv) }),
    ...(spec.max !== undefined && { max: exactIn(spec.max, spec.unit, unit, conv) }),
  };
}

/** The API's JSON shape for an evaluation. */
export function toCalcResponse(evaluation: CalcEvaluation): CalcResponse {
  const readings: CalcResponse['readings'] = {};
  for (const [key, reading] of evaluation.readings) {
    // Keys are validated (start with a letter), so none is "__proto__"; defineProperty keeps that true regardless.
    Object.defineProperty(readings, key, {
      value: {
        value_um: reading.valuePm === null ? null : Number(reading.valuePm) / 1e6,
        standardUncertainty_um: reading.standardUncertaintyUm,
        value: reading.estimate.valueOf(),
        unit: reading.unit,
        standardUncertainty: reading.standardUncertainty,
      },
      enumerable: true,
      writable: true,
      configurable: true,
    });
  }
  return {
    value_um: evaluation.valuePm === null ? null : Number(evaluation.valuePm) / 1e6,
    standardUncertainty_um: evaluation.standardUncertaintyUm,
    expandedUncertainty_um: evaluation.expandedUncertaintyUm,
    coverageFactor: evaluation.coverageFactor,
    verdict: evaluation.judgement?.verdict ?? null,
    readings,
    steps: [...evaluation.steps],
    value: evaluation.value.valueOf(),
    unit: evaluation.unit,
    quantity: evaluation.quantity,
    standardUncertainty: evaluation.standardUncertainty,
    expandedUncertainty: evaluation.expandedUncertainty,
    coverageProbability: evaluation.coverageProbability,
    effectiveDegreesOfFreedom: Number.isFinite(evaluation.effectiveDegreesOfFreedom) ? evaluation.effectiveDegreesOfFreedom : null,
    method: evaluation.method,
    trials: evaluation.trials,
    coverageInterval: [evaluation.interval[0], evaluation.interval[1]],
    probabilityOfConformance: evaluation.probabilityOfConformance,
    preferredVerdict: evaluation.preferredJudgement?.verdict ?? null,
    rejectVerdict: evaluation.rejectJudgement?.verdict ?? null,
    budget: evaluation.budget.map((line) => ({ ...line })),
    warnings: [...evaluation.warnings],
  };
}

/**
 * The public calculator: validates `input` against `calcRequestSchema` and returns the response.
 * Throws only a ZodError, naming the field, on bad input.
 */
export function computeCalc(input: unknown, options: EvaluateOptions = {}): CalcResponse {
  return toCalcResponse(evaluateCalc(parseCalcRequest(input), options));
}

/** The result as people read it (GUM 7.2.6): "0.0047 in ± 0.00010 in (95 %, GUM)". */
export function resultText(evaluation: CalcEvaluation): string {
  const d = evaluation.valueDecimals;
  const [low, high] = evaluation.interval;
  const y = evaluation.value.valueOf();
  const asym = Math.abs(y - low - (high - y)) > Math.max(numericalTolerance(evaluation.standardUncertainty), 1e-12 * Math.max(1, Math.abs(y)));
  const head = formatValue(evaluation.value, evaluation.unit, d);
  const p = `${plainNumber(evaluation.coverageProbability * 100, 4)} %`;
  return asym
    ? `${head}, ${p} interval ${formatValue(low, evaluation.unit, d)} to ${formatValue(high, evaluation.unit, d)}`
    : `${head} ± ${formatUncertaintyIn(evaluation.expandedUncertainty, evaluation.unit)} (${p}, k = ${formatCoverageFactor(evaluation.coverageFactor)})`;
}
