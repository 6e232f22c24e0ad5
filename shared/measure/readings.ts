/**
 * Turning one reading into an estimate (exact, in the reading's unit) and the uncertainty
 * components behind it, with the working written out for a person to follow.
 *
 * Components (JCGM 100:2008 4.2–4.3, F.2.2): the instrument's resolution (rectangular, ±δ/2),
 * a stated standard uncertainty, the zero check's own resolution, the spread of repeated readings
 * (Type A, n − 1 degrees of freedom), the span between feeler blades (rectangular), and what the
 * instrument brings: its calibration (normal, U/k), its maximum permissible error (rectangular,
 * MPE/√3) and its setting standard (normal, U/k), each shared by every reading taken with it.
 * A length measured away from 20 °C is corrected to 20 °C (ISO 1) with the part's and the
 * instrument's temperatures and expansions, and u(t), u(α) enter as components; or, when the
 * instrument sits at the part's temperature, with GUM H.1's θ, δθ and δα (`sameTemperature`).
 */
import type { BladeReading, BracketReading, CalcInstrument, DirectReading, Reading, RepeatedReading } from './calc.schema';
import type { Component } from './components';
import type { ExactDecimal } from './decimal';
import { Fraction, fractionOfDecimal } from './exact';
import { figureIsText, figureToDecimal, type Figure } from './figures';
import { decimalsForStep, formatUncertaintyIn, formatValue, plainNumber, withUnit } from './format-quantity';
import { factorNumber, quantityOf, unitTable, type AnyUnit, type QuantityKind } from './quantities';
import { lookupMaterial, materialExpansion, REFERENCE_TEMPERATURE_C, sameTemperatureSecondOrder, sameTemperatureSensitivities } from './thermal';
import { picometresPerUnit, type LengthUnit } from './units';

/** A reading reduced to what a result needs, plus how it was worked out. */
export interface EvaluatedReading {
  readonly key: string;
  readonly kind: Reading['kind'];
  readonly unit: AnyUnit;
  readonly quantity: QuantityKind;
  /** Best estimate in `unit`: exact, except after a thermal correction (rounded to 10⁻¹² of the unit). */
  readonly estimate: Fraction;
  /** The step to show the estimate at: its resolution, or finer for derived estimates. */
  readonly displayStep: Fraction;
  /** Every component behind this reading, instrument ones included (merged across readings later). */
  readonly components: readonly Component[];
  /** Standard uncertainty of this reading alone, in `unit` (its components in quadrature). */
  readonly standardUncertainty: number;
  /** Length readings only: the estimate in integer picometres, u in µm and the display step in pm. */
  readonly valuePm: bigint | null;
  readonly standardUncertaintyUm: number | null;
  readonly displayStepPm: bigint | null;
  /** Working, one line per step. */
  readonly steps: readonly string[];
  /** Notes the result should repeat as warnings. */
  readonly notes: readonly string[];
}

/**
 * Raised when a reading that should have passed the schema cannot be evaluated; it means the
 * caller skipped validation. `computeCalc` validates first, so it never escapes from there.
 */
export class UnvalidatedReadingError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UnvalidatedReadingError';
  }
}

const SQRT3 = Math.sqrt(3);

/** An expansion coefficient for the working: "11.5×10⁻⁶/K". */
const alphaText = (a: number) => `${plainNumber(a * 1e6)}×10⁻⁶/K`;

function decimalOf(figure: Figure, field: string): ExactDecimal {
  const decimal = figureToDecimal(figure);
  if (!decimal) throw new UnvalidatedReadingError(`${field} is not a decimal figure; validate with readingSchema first`);
  return decimal;
}

function exact(figure: Figure, field: string): Fraction {
  return fractionOfDecimal(decimalOf(figure, field));
}

/** One step of the last decimal place of a figure ("0.5640" → 0.0001). */
function lastPlace(figure: Figure, field: string): Fraction {
  return new Fraction(1n, 10n ** BigInt(decimalOf(figure, field).scale));
}

/** The figure as typed, with its unit ("0.5640 in"). */
function typed(figure: Figure, unit: AnyUnit): string {
  const text = typeof figure === 'string' ? figure.trim() : String(figure);
  return withUnit(text.replace(/^-/, '−'), unit);
}

function at(value: Fraction, unit: AnyUnit, step: Fraction): string {
  return formatValue(value, unit, decimalsForStep(step));
}

function uText(u: number, unit: AnyUnit): string {
  const own = formatUncertaintyIn(u, unit);
  if (quantityOf(unit) !== 'length' || unit === 'um') return own;
  return `${own} (${formatUncertaintyIn((u * factorNumber(unit)) / factorNumber('um'), 'um')})`;
}

function lengthCompat(unit: AnyUnit, estimate: Fraction, u: number, step: Fraction) {
  if (quantityOf(unit) !== 'length') return { valuePm: null, standardUncertaintyUm: null, displayStepPm: null };
  const perUnit = picometresPerUnit[unit as LengthUnit];
  const toPm = (f: Fraction) => {
    const scaled = f.mul(perUnit);
    return scaled.d === 1n ? scaled.s * scaled.n : BigInt(scaled.round(0).valueOf());
  };
  return {
    valuePm: toPm(estimate),
    standardUncertaintyUm: (u * factorNumber(unit)) / factorNumber('um'),
    displayStepPm: toPm(step) || 1n,
  };
}

interface Context {
  key: string;
  unit: AnyUnit;
  steps: string[];
  notes: string[];
  components: Component[];
}

function addComponent(ctx: Context, c: Omit<Component, 'effects'> & { effect?: number }): void {
  const effect = c.effect ?? factorNumber(ctx.unit);
  const { effect: _ignored, ...rest } = c;
  void _ignored;
  ctx.components.push({ ...rest, effects: [{ reading: ctx.key, effect }] });
}

function resolutionComponent(ctx: Context, resolution: Fraction, given: boolean, what = 'resolution') {
  const a = resolution.valueOf() / 2;
  const u = a / SQRT3;
  const shown = at(resolution, ctx.unit, resolution);
  ctx.steps.push(
    `${ctx.key}: ${what} ${shown}${given ? '' : ' (not given: taken as one step of the last decimal place as typed)'}, a rectangular distribution of half-width ${shown}/2: u = ${shown}/(2√3) = ${uText(u, ctx.unit)} (GUM F.2.2.1, 4.3.7).`,
  );
  addComponent(ctx, {
    id: `${ctx.key}:${what === 'resolution' ? 'resolution' : 'zero-resolution'}`,
    source: `${ctx.key}: ${what} ${shown}`,
    distribution: 'rectangular',
    standardUncertainty: u,
    halfWidth: a,
    divisor: SQRT3,
    degreesOfFreedom: Infinity,
    unit: ctx.unit,
  });
}

function statedComponent(ctx: Context, stated: Figure) {
  const u = exact(stated, 'uncertainty').valueOf();
  ctx.steps.push(`${ctx.key}: stated standard uncertainty ${uText(u, ctx.unit)}, normal (GUM 4.3.3).`);
  addComponent(ctx, {
    id: `${ctx.key}:stated`,
    source: `${ctx.key}: stated standard uncertainty`,
    distribution: 'normal',
    standardUncertainty: u,
    divisor: 1,
    degreesOfFreedom: Infinity,
    unit: ctx.unit,
  });
}

/** The instrument's shared components, in the instrument's units, entering this reading. */
function instrumentComponents(ctx: Context, name: string | undefined, instrument: CalcInstrument | undefined, scale: number) {
  if (!name || !instrument) return;
  const quantity = quantityOf(ctx.unit);
  const same = (unit: AnyUnit, what: string) => {
    if (quantityOf(unit) !== quantity) {
      throw new UnvalidatedReadingError(`${ctx.key}: instrument ${name}'s ${what} is in ${unit}, not a unit of ${quantity}`);
    }
  };
  const cal = instrument.calibration;
  const mpe = instrument.maxPermissibleError;
  if (cal) {
    same(cal.unit, 'calibration');
    const U = exact(cal.expandedUncertainty, 'calibration.expandedUncertainty').valueOf();
    const u = U / cal.coverageFactor;
    ctx.steps.push(
      `${ctx.key}: instrument ${name}, calibration U = ${uText(U, cal.unit)} with k = ${plainNumber(cal.coverageFactor)}: u = U/k = ${uText(u, cal.unit)}, normal (GUM 4.3.3), shared by every reading taken with ${name}.`,
    );
    ctx.components.push({
      id: `instrument:${name}:calibration`,
      source: `calibration of ${name} (U = ${uText(U, cal.unit)}, k = ${plainNumber(cal.coverageFactor)})`,
      distribution: 'normal',
      standardUncertainty: u,
      divisor: cal.coverageFactor,
      degreesOfFreedom: Infinity,
      unit: cal.unit,
      instrument: name,
      effects: [{ reading: ctx.key, effect: factorNumber(cal.unit) * scale }],
    });
    if (mpe) ctx.steps.push(`${ctx.key}: ${name}'s maximum permissible error is not used as well: its calibration states its error more closely.`);
  } else if (mpe) {
    same(mpe.unit, 'maximum permissible error');
    const a = exact(mpe.value, 'maxPermissibleError.value').valueOf();
    const u = a / SQRT3;
    ctx.steps.push(
      `${ctx.key}: instrument ${name}, maximum permissible error ±${uText(a, mpe.unit)}: rectangular, u = MPE/√3 = ${uText(u, mpe.unit)} (GUM 4.3.7), shared by every reading taken with ${name}.`,
    );
    ctx.components.push({
      id: `instrument:${name}:mpe`,
      source: `maximum permissible error of ${name} (±${uText(a, mpe.unit)})`,
      distribution: 'rectangular',
      standardUncertainty: u,
      halfWidth: a,
      divisor: SQRT3,
      degreesOfFreedom: Infinity,
      unit: mpe.unit,
      instrument: name,
      effects: [{ reading: ctx.key, effect: factorNumber(mpe.unit) * scale }],
    });
  }
  const standard = instrument.settingStandard;
  if (standard) {
    same(standard.unit, 'setting standard');
    const U = exact(standard.expandedUncertainty, 'settingStandard.expandedUncertainty').valueOf();
    const u = U / standard.coverageFactor;
    ctx.steps.push(`${ctx.key}: ${name}'s setting standard, U = ${uText(U, standard.unit)} with k = ${plainNumber(standard.coverageFactor)}: u = ${uText(u, standard.unit)}, shared.`);
    ctx.components.push({
      id: `instrument:${name}:setting-standard`,
      source: `setting standard of ${name} (U = ${uText(U, standard.unit)}, k = ${plainNumber(standard.coverageFactor)})`,
      distribution: 'normal',
      standardUncertainty: u,
      divisor: standard.coverageFactor,
      degreesOfFreedom: Infinity,
      unit: standard.unit,
      instrument: name,
      effects: [{ reading: ctx.key, effect: factorNumber(standard.unit) * scale }],
    });
  }
}

function zeroCheck(ctx: Context, value: Fraction, zeroOffset: Figure | undefined, zeroResolution: Figure | undefined, resolution: Fraction, step: Fraction): Fraction {
  if (zeroOffset === undefined) return value;
  const zero = exact(zeroOffset, 'zeroOffset');
  if (zero.n === 0n && zeroResolution === undefined) {
    ctx.steps.push(`${ctx.key}: zero check read ${typed(zeroOffset, ctx.unit)}; nothing to subtract.`);
  } else {
    ctx.steps.push(
      `${ctx.key}: zero check read ${typed(zeroOffset, ctx.unit)}; subtracted: ${at(value, ctx.unit, step)} − ${typed(zeroOffset, ctx.unit)} = ${at(value.sub(zero), ctx.unit, step)}.`,
    );
  }
  const zr = zeroResolution === undefined ? resolution : exact(zeroResolution, 'zeroResolution');
  resolutionComponent(ctx, zr, true, 'zero check resolution');
  return value.sub(zero);
}

/** Applies the correction to 20 °C; returns the corrected estimate and the factor the other components scale by. */
function thermal(
  ctx: Context,
  reading: DirectReading | RepeatedReading,
  value: Fraction,
  step: Fraction,
  instrumentName: string | undefined,
  instrument: CalcInstrument | undefined,
): { value: Fraction; scale: number } {
  if (reading.temperatureC === undefined) return { value, scale: 1 };
  if (quantityOf(ctx.unit) !== 'length') {
    ctx.steps.push(`${ctx.key}: taken at ${plainNumber(reading.temperatureC)} °C (kept with the reading; no correction applies to ${quantityOf(ctx.unit)}).`);
    return { value, scale: 1 };
  }
  const material = reading.material === undefined ? undefined : lookupMaterial(reading.material);
  const alpha = reading.expansionPerK ?? (material ? materialExpansion[material].expansionPerK : undefined);
  if (alpha === undefined) throw new UnvalidatedReadingError('temperatureC needs a material or expansionPerK; validate with readingSchema first');
  const source = reading.expansionPerK !== undefined ? 'as given' : `${material ? materialExpansion[material].label : ''}, typical handbook figure (Callister, Table B.6)`;
  if (reading.instrumentTemperature === 'same-as-part') return sameTemperature(ctx, reading, value, step, instrumentName, instrument, alpha, source);
  const t = reading.temperatureC;
  const ts = instrument?.temperatureC ?? REFERENCE_TEMPERATURE_C;
  const alphaS = instrument?.expansionPerK ?? materialExpansion.steel.expansionPerK;
  const dt = t - REFERENCE_TEMPERATURE_C;
  const dts = ts - REFERENCE_TEMPERATURE_C;
  const factor = (1 + alphaS * dts) / (1 + alpha * dt);
  // 10¹⁵·factor is a safe integer for the schema's ranges; the estimate is rounded once, to 10⁻¹² of its unit.
  const corrected = value.mul(new Fraction(BigInt(Math.round(factor * 1e15)), 10n ** 15n)).round(12);
  const instrumentText =
    instrument?.temperatureC !== undefined
      ? `${instrumentName ?? 'the instrument'} at ${plainNumber(ts)} °C with α_s = ${alphaText(alphaS)}${instrument.expansionPerK === undefined ? ' (carbon steel, typical handbook figure, Callister Table B.6)' : ''}`
      : 'the instrument taken to be at 20 °C (no temperature given for it)';
  ctx.steps.push(
    `${ctx.key}: part at ${plainNumber(t)} °C with α = ${alphaText(alpha)} (${source}), ${instrumentText}; corrected to 20 °C (ISO 1, GUM H.1): L20 = L·(1 + α_s(t_s − 20))/(1 + α(t − 20)) = ${at(value, ctx.unit, step)} × ${factor.toFixed(9)} = ${at(corrected, ctx.unit, step)}.`,
  );
  const L = corrected.valueOf() * factorNumber(ctx.unit); // base units (m)
  const thermalComponent = (id: string, source: string, u: number | undefined, unit: string, effect: number, shared: boolean) => {
    if (u === undefined || u === 0) return;
    ctx.components.push({
      id: shared && instrumentName ? `instrument:${instrumentName}:${id}` : `${ctx.key}:${id}`,
      source,
      distribution: 'normal',
      standardUncertainty: u,
      divisor: 1,
      degreesOfFreedom: Infinity,
      unit,
      ...(shared && instrumentName && { instrument: instrumentName }),
      effects: [{ reading: ctx.key, effect }],
    });
  };
  thermalComponent('temperature', `${ctx.key}: part temperature, u(t) = ${plainNumber(reading.temperatureUncertaintyC ?? 0)} K`, reading.temperatureUncertaintyC, 'K', (-L * alpha) / (1 + alpha * dt), false);
  thermalComponent('expansion', `${ctx.key}: part expansion coefficient, u(α) = ${alphaText(reading.expansionUncertaintyPerK ?? 0)}`, reading.expansionUncertaintyPerK, '1/K', (-L * dt) / (1 + alpha * dt), false);
  thermalComponent('instrument-temperature', `temperature of ${instrumentName ?? 'the instrument'}, u(t_s) = ${plainNumber(instrument?.temperatureUncertaintyC ?? 0)} K`, instrument?.temperatureUncertaintyC, 'K', (L * alphaS) / (1 + alphaS * dts), true);
  thermalComponent('instrument-expansion', `expansion coefficient of ${instrumentName ?? 'the instrument'}`, instrument?.expansionUncertaintyPerK, '1/K', (L * dts) / (1 + alphaS * dts), true);
  const listed = [reading.temperatureUncertaintyC, reading.expansionUncertaintyPerK, instrument?.temperatureUncertaintyC, instrument?.expansionUncertaintyPerK].some((u) => u !== undefined && u > 0);
  ctx.steps.push(
    listed
      ? `${ctx.key}: the uncertainties of the temperatures and expansion coefficients given enter the budget through ∂L20/∂t and ∂L20/∂α (GUM H.1.3).`
      : `${ctx.key}: no uncertainty was given for the temperatures or expansion coefficients, so none is included for them.`,
  );
  return { value: corrected, scale: factor };
}

/**
 * The correction to 20 °C with the instrument at the part's temperature, as GUM H.1 models a
 * comparison on one bench: the inputs are θ = t − 20 °C (u(θ) is the part's temperature
 * uncertainty), δθ = t − t_s = 0 with u(δθ), and δα = α − α_s with u(δα). The estimate is
 * L20 = L·(1 + α_sθ)/(1 + αθ); to first order the correction is −L(δα·θ + α_s·δθ) (H.1.2). The
 * budget is first-order (H.1.6); H.1.7's second-order terms are stated in the working.
 *
 * u(δα), unless given, is split into the part's u(α) (this reading's own line) and the instrument's
 * u(α_s), which stays one input shared by every reading taken with it (the same id as with its own
 * temperature), so a difference of two readings with one instrument still cancels it.
 */
function sameTemperature(
  ctx: Context,
  reading: DirectReading | RepeatedReading,
  value: Fraction,
  step: Fraction,
  instrumentName: string | undefined,
  instrument: CalcInstrument | undefined,
  alpha: number,
  alphaSource: string,
): { value: Fraction; scale: number } {
  const t = reading.temperatureC as number;
  const theta = t - REFERENCE_TEMPERATURE_C;
  const alphaS = instrument?.expansionPerK ?? materialExpansion.steel.expansionPerK;
  const deltaAlpha = alpha - alphaS;
  const factor = (1 + alphaS * theta) / (1 + alpha * theta);
  const corrected = value.mul(new Fraction(BigInt(Math.round(factor * 1e15)), 10n ** 15n)).round(12);
  const name = instrumentName ?? 'the instrument';
  const alphaSSource = instrument?.expansionPerK === undefined ? ' (carbon steel, typical handbook figure, Callister Table B.6)' : '';
  ctx.steps.push(
    `${ctx.key}: part at ${plainNumber(t)} °C with α = ${alphaText(alpha)} (${alphaSource}); ${name} sits at the part's temperature, α_s = ${alphaText(alphaS)}${alphaSSource}. GUM H.1's inputs: θ = t − 20 °C = ${plainNumber(theta)} K, δθ = t − t_s = 0 K, δα = α − α_s = ${alphaText(deltaAlpha)}.`,
    `${ctx.key}: corrected to 20 °C (ISO 1, GUM H.1): L20 = L·(1 + α_s·θ)/(1 + α·θ) = ${at(value, ctx.unit, step)} × ${factor.toFixed(9)} = ${at(corrected, ctx.unit, step)}; to first order the correction is −L(δα·θ + α_s·δθ) (GUM H.1.2).`,
  );
  if (instrument?.temperatureC !== undefined || instrument?.temperatureUncertaintyC !== undefined) {
    ctx.steps.push(`${ctx.key}: ${name}'s own temperature and its uncertainty are set aside for this reading: it is taken to be at the part's temperature.`);
  }

  const L = corrected.valueOf() * factorNumber(ctx.unit); // base units (m)
  const c = sameTemperatureSensitivities(L, alpha, alphaS, t);
  const uTheta = reading.temperatureUncertaintyC ?? 0;
  const uDeltaTheta = reading.temperatureDifferenceUncertaintyC ?? 0;
  const uAlpha = reading.expansionUncertaintyPerK ?? 0;
  const uAlphaS = instrument?.expansionUncertaintyPerK ?? 0;
  const givenDeltaAlpha = reading.expansionDifferenceUncertaintyPerK;
  const uDeltaAlpha = givenDeltaAlpha ?? Math.hypot(uAlpha, uAlphaS);
  const own = (id: string, source: string, u: number, unit: string, effect: number) => {
    if (!(u > 0)) return;
    ctx.components.push({ id: `${ctx.key}:${id}`, source, distribution: 'normal', standardUncertainty: u, divisor: 1, degreesOfFreedom: Infinity, unit, effects: [{ reading: ctx.key, effect }] });
  };
  own(
    'common-temperature',
    `${ctx.key}: temperature of the part and ${name} together, θ = ${plainNumber(theta)} K from 20 °C, u(θ) = ${plainNumber(uTheta)} K`,
    uTheta,
    'K',
    c.commonTemperature,
  );
  own('temperature-difference', `${ctx.key}: how far ${name}'s temperature may be from the part's, δθ, u(δθ) = ${plainNumber(uDeltaTheta)} K`, uDeltaTheta, 'K', c.temperatureDifference);
  own(
    'expansion-difference',
    givenDeltaAlpha !== undefined
      ? `${ctx.key}: part and ${name} expanding differently, δα = α − α_s, u(δα) = ${alphaText(givenDeltaAlpha)}`
      : `${ctx.key}: part and ${name} expanding differently, δα = α − α_s: the part's coefficient, u(α) = ${alphaText(uAlpha)}`,
    givenDeltaAlpha ?? uAlpha,
    '1/K',
    c.expansionDifference,
  );
  if (uAlphaS > 0) {
    // The instrument's α_s is one input whichever temperature its readings were taken at: the id and
    // the words are those of the instrument's own-temperature model, so the two merge.
    ctx.components.push({
      id: instrumentName ? `instrument:${instrumentName}:instrument-expansion` : `${ctx.key}:instrument-expansion`,
      source: `expansion coefficient of ${name}`,
      distribution: 'normal',
      standardUncertainty: uAlphaS,
      divisor: 1,
      degreesOfFreedom: Infinity,
      unit: '1/K',
      ...(instrumentName && { instrument: instrumentName }),
      effects: [{ reading: ctx.key, effect: givenDeltaAlpha !== undefined ? c.instrumentExpansionDifferenceHeld : c.instrumentExpansion }],
    });
  }

  const perUnit = factorNumber(ctx.unit);
  const inUnit = (x: number) => uText(Math.abs(x) / perUnit, ctx.unit);
  const lines: string[] = [];
  if (uTheta > 0) lines.push(`θ: c_θ = −L·δα = ${withUnit(plainNumber(c.commonTemperature / perUnit, 4), ctx.unit)}/K, contributes ${inUnit(c.commonTemperature * uTheta)}`);
  if (uDeltaTheta > 0) lines.push(`δθ: c_δθ = −L·α_s = ${withUnit(plainNumber(c.temperatureDifference / perUnit, 4), ctx.unit)}/K, contributes ${inUnit(c.temperatureDifference * uDeltaTheta)}`);
  if (uDeltaAlpha > 0) lines.push(`δα: c_δα = −L·θ, u(δα) = ${givenDeltaAlpha !== undefined ? `${alphaText(givenDeltaAlpha)} as given` : `√(u(α)² + u(α_s)²) = ${alphaText(uDeltaAlpha)}`}, contributes ${inUnit(c.expansionDifference * uDeltaAlpha)}`);
  ctx.steps.push(
    lines.length > 0
      ? `${ctx.key}: the temperature terms enter the budget with H.1.3's sensitivities (exact at δθ = 0): ${lines.join('; ')}.${givenDeltaAlpha === undefined && uAlphaS > 0 && instrumentName ? ` The share of u(δα) from ${name}'s coefficient is its own line, shared by every reading taken with ${name}.` : ''}`
      : `${ctx.key}: no uncertainty was given for the temperature, the difference between the part's and ${name}'s, or the expansion coefficients, so none is included for them.`,
  );
  if (uTheta > 0 && uDeltaTheta === 0) {
    ctx.steps.push(`${ctx.key}: no u(δθ) given: the part and ${name} are taken to be at exactly one temperature.`);
  }
  const second = sameTemperatureSecondOrder(L, { theta: uTheta, temperatureDifference: uDeltaTheta, expansionDifference: uDeltaAlpha, instrumentExpansion: uAlphaS });
  if (second > 0) {
    ctx.steps.push(
      `${ctx.key}: second-order terms (GUM H.1.7), left out of the budget as in H.1.6: L·√(u²(δα)·u²(θ) + u²(α_s)·u²(δθ)) = ${inUnit(second)}; added in quadrature they would raise this reading's u.`,
    );
  }
  return { value: corrected, scale: factor };
}

function finish(ctx: Context, kind: Reading['kind'], estimate: Fraction, step: Fraction): EvaluatedReading {
  const own = ctx.components.map((c) => c.standardUncertainty * Math.abs(c.effects[0]!.effect / factorNumber(ctx.unit)));
  const u = Math.hypot(...own);
  ctx.steps.push(`${ctx.key}: value ${at(estimate, ctx.unit, step)}, u = ${uText(u, ctx.unit)}.`);
  return {
    key: ctx.key,
    kind,
    unit: ctx.unit,
    quantity: quantityOf(ctx.unit),
    estimate,
    displayStep: step,
    components: ctx.components,
    standardUncertainty: u,
    ...lengthCompat(ctx.unit, estimate, u, step),
    steps: ctx.steps,
    notes: ctx.notes,
  };
}

function evaluateDirect(ctx: Context, reading: DirectReading, instrument: CalcInstrument | undefined): EvaluatedReading {
  const raw = exact(reading.value, 'value');
  const resolutionGiven = reading.resolution !== undefined;
  const resolution = resolutionGiven ? exact(reading.resolution as Figure, 'resolution') : lastPlace(reading.value, 'value');
  ctx.steps.push(`${ctx.key}: direct reading ${typed(reading.value, ctx.unit)}${figureIsText(reading.value) ? ' (as typed)' : ''}.`);
  return finish(ctx, 'direct', indicated(ctx, reading, raw, resolution, resolutionGiven, resolution, instrument), resolution);
}

/**
 * What an indicating instrument's estimate goes through, for a single or a repeated reading: the
 * zero check, the correction to 20 °C, then the resolution, a stated uncertainty and what the
 * instrument brings. Returns the corrected estimate.
 */
function indicated(
  ctx: Context,
  reading: DirectReading | RepeatedReading,
  estimate: Fraction,
  resolution: Fraction,
  resolutionGiven: boolean,
  step: Fraction,
  instrument: CalcInstrument | undefined,
): Fraction {
  const zeroed = zeroCheck(ctx, estimate, reading.zeroOffset, reading.zeroResolution, resolution, step);
  const corrected = thermal(ctx, reading, zeroed, step, reading.instrument, instrument);
  resolutionComponent(ctx, resolution, resolutionGiven);
  if (reading.uncertainty !== undefined) statedComponent(ctx, reading.uncertainty);
  instrumentComponents(ctx, reading.instrument, instrument, corrected.scale);
  // Own-unit components (the zero check's too) scale with the correction; instrument ones were scaled as made.
  scaleOwn(ctx, corrected.scale);
  return corrected.value;
}

/** Scales the reading's own-unit components by the thermal factor. */
function scaleOwn(ctx: Context, scale: number) {
  if (scale === 1) return;
  for (let i = 0; i < ctx.components.length; i += 1) {
    const c = ctx.components[i]!;
    if (c.unit !== ctx.unit || c.instrument) continue;
    ctx.components[i] = { ...c, effects: c.effects.map((e) => ({ ...e, effect: e.effect * scale })) };
  }
}

function evaluateBracket(ctx: Context, reading: BracketReading, instrument: CalcInstrument | undefined): EvaluatedReading {
  const passes = exact(reading.passes, 'passes');
  const stops = exact(reading.stops, 'stops');
  const bladeStep = [lastPlace(reading.passes, 'passes'), lastPlace(reading.stops, 'stops')].reduce((a, b) => (a.lt(b) ? a : b));
  const value = passes.add(stops).div(2);
  const half = stops.sub(passes).div(2);
  const step = half.lt(bladeStep) ? half : bladeStep;
  const a = half.valueOf();
  const feel = [
    reading.passesFeel ? `${typed(reading.passes, ctx.unit)} ${reading.passesFeel === 'drags' ? 'enters with a drag' : 'slides in'}` : `${typed(reading.passes, ctx.unit)} enters`,
    reading.stopsFeel === 'forced' ? `${typed(reading.stops, ctx.unit)} goes in only when forced` : `${typed(reading.stops, ctx.unit)} does not enter`,
  ];
  ctx.steps.push(
    `${ctx.key}: feeler blades: ${feel.join(', ')}; the gap lies between them.`,
    `${ctx.key}: estimate = midpoint (${typed(reading.passes, ctx.unit)} + ${typed(reading.stops, ctx.unit)})/2 = ${at(value, ctx.unit, step)}.`,
    `${ctx.key}: anywhere between the blades alike: rectangular, half-width a = ${at(half, ctx.unit, step)}, u = a/√3 = ${uText(a / SQRT3, ctx.unit)} (GUM 4.3.7); all of it lies within ±a.`,
  );
  if (reading.passesFeel === 'drags') {
    ctx.steps.push(`${ctx.key}: the drag says the gap is near the thinner blade; the bracket is kept whole, which is the cautious reading.`);
  }
  addComponent(ctx, {
    id: `${ctx.key}:bracket`,
    source: `${ctx.key}: between blades ${typed(reading.passes, ctx.unit)} and ${typed(reading.stops, ctx.unit)}`,
    distribution: 'rectangular',
    standardUncertainty: a / SQRT3,
    halfWidth: a,
    divisor: SQRT3,
    degreesOfFreedom: Infinity,
    unit: ctx.unit,
  });
  instrumentComponents(ctx, reading.instrument, instrument, 1);
  return finish(ctx, 'bracket', value, step);
}

/** Half the usual 0.001 in step between blades of a set: common practice (no published source). */
const DEFAULT_DRAG_SPREAD_IN = new Fraction(5n, 10000n);

function evaluateBlade(ctx: Context, reading: BladeReading, instrument: CalcInstrument | undefined): EvaluatedReading {
  const value = exact(reading.thickness, 'thickness');
  const spreadGiven = reading.spread !== undefined;
  const spread = spreadGiven
    ? exact(reading.spread as Figure, 'spread')
    : DEFAULT_DRAG_SPREAD_IN.mul(unitTable.in.factor.div(unitTable[ctx.unit].factor));
  const step = lastPlace(reading.thickness, 'thickness');
  const a = spread.valueOf();
  ctx.steps.push(
    `${ctx.key}: one blade, ${typed(reading.thickness, ctx.unit)}, enters with a light drag: the gap is about the blade's thickness.`,
    `${ctx.key}: spread ±${at(spread, ctx.unit, spread.lt(step) ? spread : step)}${spreadGiven ? '' : ' (not given: half the usual 0.001 in step between blades, common practice with no published source)'}, rectangular: u = a/√3 = ${uText(a / SQRT3, ctx.unit)} (GUM 4.3.7).`,
  );
  addComponent(ctx, {
    id: `${ctx.key}:drag`,
    source: `${ctx.key}: feel of one dragging blade`,
    distribution: 'rectangular',
    standardUncertainty: a / SQRT3,
    halfWidth: a,
    divisor: SQRT3,
    degreesOfFreedom: Infinity,
    unit: ctx.unit,
  });
  instrumentComponents(ctx, reading.instrument, instrument, 1);
  return finish(ctx, 'blade', value, step);
}

function evaluateRepeated(ctx: Context, reading: RepeatedReading, instrument: CalcInstrument | undefined): EvaluatedReading {
  const values = reading.values.map((v, i) => exact(v, `values.${i}`));
  const n = values.length;
  const resolutionGiven = reading.resolution !== undefined;
  const resolution = resolutionGiven
    ? exact(reading.resolution as Figure, 'resolution')
    : reading.values.map((v, i) => lastPlace(v, `values.${i}`)).reduce((a, b) => (a.lt(b) ? a : b));
  const sum = values.reduce((a, b) => a.add(b), new Fraction(0));
  const mean = sum.div(n);
  // Σ(x − x̄)² exactly, then one square root.
  const squares = values.reduce((acc, x) => acc.add(x.sub(mean).pow(2)), new Fraction(0));
  const s = Math.sqrt(squares.div(n - 1).valueOf());
  const uA = s / Math.sqrt(n);
  // A mean is conventionally stated one digit finer than the readings (common practice).
  const step = resolution.div(10);
  const shown = n <= 12 ? reading.values.map((v) => typed(v, ctx.unit)).join(', ') : `${n} values`;
  ctx.steps.push(
    `${ctx.key}: ${n} repeated readings (${shown}).`,
    `${ctx.key}: mean x̄ = Σx/n = ${at(mean, ctx.unit, step)}; experimental standard deviation s = ${uText(s, ctx.unit)} (GUM 4.2.2).`,
    `${ctx.key}: Type A uncertainty of the mean u_A = s/√n = s/√${n} = ${uText(uA, ctx.unit)} with ν = n − 1 = ${n - 1} degrees of freedom (GUM 4.2.3, G.3.3).`,
  );
  ctx.components.push({
    id: `${ctx.key}:type-a`,
    source: `${ctx.key}: spread of ${n} readings (Type A)`,
    distribution: 'student-t',
    standardUncertainty: uA,
    divisor: null,
    degreesOfFreedom: n - 1,
    unit: ctx.unit,
    effects: [{ reading: ctx.key, effect: factorNumber(ctx.unit) }],
  });
  if (n < 4) ctx.notes.push(`${ctx.key} rests on ${n} readings: with so few, the coverage interval is wide (GUM G.3, Table G.2).`);
  return finish(ctx, 'repeated', indicated(ctx, reading, mean, resolution, resolutionGiven, step, instrument), step);
}

/**
 * Evaluates one validated reading: its estimate, its components and the working. `instruments`
 * supplies what a named instrument brings.
 */
export function evaluateReading(key: string, reading: Reading, instruments: Readonly<Record<string, CalcInstrument>> = {}): EvaluatedReading {
  const ctx: Context = { key, unit: reading.unit, steps: [], notes: [], components: [] };
  const instrument = reading.instrument !== undefined && Object.hasOwn(instruments, reading.instrument) ? instruments[reading.instrument] : undefined;
  switch (reading.kind) {
    case 'direct':
      return evaluateDirect(ctx, reading, instrument);
    case 'bracket':
      return evaluateBracket(ctx, reading, instrument);
    case 'blade':
      return evaluateBlade(ctx, reading, instrument);
    case 'repeated':
      return evaluateRepeated(ctx, reading, instrument);
  }
}
