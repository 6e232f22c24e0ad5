/**
 * Turning one reading into a value (integer picometres) and a standard uncertainty (µm), with
 * the working written out for a person to follow.
 */
import type { BracketReading, DirectReading, Reading, RepeatedReading } from './calc.schema';
import { decimalFromNumber, divideRounded } from './decimal';
import { displayDecimals, formatLength, formatNumber, formatUncertainty, symbolFor } from './format';
import { lengthNumberToPicometres } from './length-field';
import { correctToReference, lookupMaterial, materialExpansion, referenceCorrectionFactor } from './thermal';
import {
  combineInQuadrature,
  rectangularStandardUncertainty,
  resolutionStandardUncertainty,
  typeAUncertaintyOfMeanPm,
} from './uncertainty';
import { lastPlacePicometres, type LengthUnit, picometresToMicrometres } from './units';

/** A reading reduced to what a clearance needs, plus how it was worked out. */
export interface EvaluatedReading {
  readonly key: string;
  readonly kind: Reading['kind'];
  readonly unit: LengthUnit;
  /** Best estimate, integer picometres (corrected to 20 °C when a temperature was given). */
  readonly valuePm: bigint;
  /** Standard uncertainty, µm. */
  readonly standardUncertaintyUm: number;
  /** The step to show the estimate at (format.ts rule): its resolution, or finer for derived estimates. */
  readonly displayStepPm: bigint;
  /** Working, one line per step. */
  readonly steps: readonly string[];
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

function pmOf(value: number, unit: LengthUnit, field: string): bigint {
  const pm = lengthNumberToPicometres(value, unit);
  if (pm === null) throw new UnvalidatedReadingError(`${field} is not an exact length in ${unit}; validate with readingSchema first`);
  return pm;
}

function lastPlaceOf(value: number, unit: LengthUnit): bigint {
  const decimal = decimalFromNumber(value);
  const step = decimal ? lastPlacePicometres(decimal, unit) : null;
  if (step === null) throw new UnvalidatedReadingError(`${value} is not an exact length in ${unit}`);
  return step;
}

/** "0.5642 in" at a given step, and the same in µm. */
function both(pm: bigint, unit: LengthUnit, stepPm: bigint): string {
  const own = formatLength(pm, unit, stepPm);
  if (unit === 'um') return own;
  return `${own} (${formatLength(pm, 'um', stepPm)})`;
}

function uText(um: number, unit: LengthUnit): string {
  const own = formatUncertainty(um, unit);
  return unit === 'um' ? own : `${own} (${formatUncertainty(um, 'um')})`;
}

function numberText(value: number, unit: LengthUnit): string {
  const pm = pmOf(value, unit, 'value');
  const text = formatNumber(pm, unit, displayDecimals(lastPlaceOf(value, unit), unit));
  return `${text} ${symbolFor(unit, text)}`;
}

function evaluateDirect(key: string, reading: DirectReading): EvaluatedReading {
  const { unit } = reading;
  const steps: string[] = [];
  const rawPm = pmOf(reading.value, unit, 'value');
  const resolutionGiven = reading.resolution !== undefined;
  const resolutionPm = resolutionGiven ? pmOf(reading.resolution as number, unit, 'resolution') : lastPlaceOf(reading.value, unit);
  const resolutionText = formatLength(resolutionPm, unit, resolutionPm);
  steps.push(
    `${key}: direct reading ${formatLength(rawPm, unit, resolutionPm)}, resolution ${resolutionText}${
      resolutionGiven ? '' : ' (not given: taken as one step of the last decimal place entered)'
    }.`,
  );

  let valuePm = rawPm;
  if (reading.zeroOffset !== undefined && reading.zeroOffset !== 0) {
    const zeroPm = pmOf(reading.zeroOffset, unit, 'zeroOffset');
    valuePm = rawPm - zeroPm;
    steps.push(
      `${key}: zero check read ${numberText(reading.zeroOffset, unit)}; subtracted: ${formatLength(rawPm, unit, resolutionPm)} − ${numberText(
        reading.zeroOffset,
        unit,
      )} = ${formatLength(valuePm, unit, resolutionPm)}.`,
    );
  }

  const resolutionUm = picometresToMicrometres(resolutionPm);
  const uResolution = resolutionStandardUncertainty(resolutionUm);
  steps.push(
    `${key}: resolution as a rectangular distribution of half-width ${resolutionText}/2: u_res = ${resolutionText}/(2√3) = ${uText(
      uResolution,
      unit,
    )} (GUM F.2.2.1, 4.3.7).`,
  );
  let u = uResolution;
  if (reading.uncertainty !== undefined) {
    const stated = picometresToMicrometres(pmOf(reading.uncertainty, unit, 'uncertainty'));
    u = combineInQuadrature([uResolution, stated]);
    steps.push(
      `${key}: stated standard uncertainty ${uText(stated, unit)} combined in quadrature: u = √(u_res² + u_stated²) = ${uText(u, unit)} (GUM eq. 10).`,
    );
  }

  if (reading.temperatureC !== undefined) {
    const materialName = reading.material === undefined ? undefined : lookupMaterial(reading.material);
    const alpha = reading.expansionPerK ?? (materialName ? materialExpansion[materialName].expansionPerK : undefined);
    if (alpha === undefined) {
      throw new UnvalidatedReadingError('temperatureC needs a material or expansionPerK; validate with readingSchema first');
    }
    const source =
      reading.expansionPerK !== undefined
        ? 'as given'
        : `${materialName ? materialExpansion[materialName].label : ''}, typical handbook figure (Callister, Table B.6)`;
    const factor = referenceCorrectionFactor(alpha, reading.temperatureC);
    const before = valuePm;
    valuePm = correctToReference(before, alpha, reading.temperatureC);
    u *= Math.abs(factor);
    const alphaText = `${Number((alpha * 1e6).toPrecision(6))}×10⁻⁶/K`;
    steps.push(
      `${key}: measured at ${reading.temperatureC} °C; corrected to 20 °C (ISO 1) with α = ${alphaText} (${source}): L20 = L_t / (1 + α(t − 20)) = ${both(
        before,
        unit,
        resolutionPm,
      )} / ${(1 / factor).toFixed(9)} = ${both(valuePm, unit, resolutionPm)}. Uncertainty of α and t not included.`,
    );
  }

  steps.push(`${key}: value ${both(valuePm, unit, resolutionPm)}, u = ${uText(u, unit)}.`);
  return { key, kind: 'direct', unit, valuePm, standardUncertaintyUm: u, displayStepPm: resolutionPm, steps };
}

function evaluateBracket(key: string, reading: BracketReading): EvaluatedReading {
  const { unit } = reading;
  const passesPm = pmOf(reading.passes, unit, 'passes');
  const stopsPm = pmOf(reading.stops, unit, 'stops');
  const bladeStepPm = [lastPlaceOf(reading.passes, unit), lastPlaceOf(reading.stops, unit)].reduce((a, b) => (a < b ? a : b));
  const valuePm = divideRounded(passesPm + stopsPm, 2n, 'half-even');
  const widthPm = stopsPm - passesPm; // the half-width is widthPm/2; kept whole to stay exact
  const halfWidthUm = picometresToMicrometres(widthPm) / 2;
  const u = rectangularStandardUncertainty(halfWidthUm);
  // The midpoint needs one step finer than the blades to be stated at all (0.0035 between 0.003 and 0.004).
  const displayStepPm = widthPm / 2n < bladeStepPm ? widthPm / 2n || 1n : bladeStepPm;
  const passesText = numberText(reading.passes, unit);
  const stopsText = numberText(reading.stops, unit);
  const halfText = formatLength(widthPm / 2n, unit, displayStepPm);
  return {
    key,
    kind: 'bracket',
    unit,
    valuePm,
    standardUncertaintyUm: u,
    displayStepPm,
    steps: [
      `${key}: feeler blades: ${passesText} enters, ${stopsText} does not; the gap lies between them.`,
      `${key}: estimate = midpoint (${passesText} + ${stopsText})/2 = ${both(valuePm, unit, displayStepPm)}.`,
      `${key}: rectangular distribution of half-width a = (${stopsText} − ${passesText})/2 = ${halfText}: u = a/√3 = ${uText(u, unit)} (GUM 4.3.7).`,
    ],
  };
}

function evaluateRepeated(key: string, reading: RepeatedReading): EvaluatedReading {
  const { unit } = reading;
  const valuesPm = reading.values.map((value, index) => pmOf(value, unit, `values.${index}`));
  const n = valuesPm.length;
  const resolutionGiven = reading.resolution !== undefined;
  const resolutionPm = resolutionGiven
    ? pmOf(reading.resolution as number, unit, 'resolution')
    : reading.values.map((value) => lastPlaceOf(value, unit)).reduce((a, b) => (a < b ? a : b));
  const sum = valuesPm.reduce((a, b) => a + b, 0n);
  const meanPm = divideRounded(sum, BigInt(n), 'half-even');
  // The offset shifts every value alike, so the spread (and u_A) is that of the values as read.
  const { sPm, uPm } = typeAUncertaintyOfMeanPm(valuesPm);
  const uA = uPm / 1e6;
  const sUm = sPm / 1e6;
  const uResolution = resolutionStandardUncertainty(picometresToMicrometres(resolutionPm));
  const uReadings = combineInQuadrature([uA, uResolution]);
  // A mean is conventionally stated one digit finer than the readings (common practice).
  const displayStepPm = resolutionPm >= 10n ? resolutionPm / 10n : 1n;
  const resolutionText = formatLength(resolutionPm, unit, resolutionPm);
  const shown = reading.values.length <= 12 ? reading.values.map((v) => numberText(v, unit)).join(', ') : `${n} values`;
  const steps = [
    `${key}: ${n} repeated readings (${shown}), resolution ${resolutionText}${
      resolutionGiven ? '' : ' (not given: taken as the finest last decimal place entered)'
    }.`,
    `${key}: mean x̄ = Σx/n = ${both(meanPm, unit, displayStepPm)}; experimental standard deviation s = ${uText(sUm, unit)} (GUM 4.2.2).`,
  ];
  let valuePm = meanPm;
  if (reading.zeroOffset !== undefined && reading.zeroOffset !== 0) {
    const zeroPm = pmOf(reading.zeroOffset, unit, 'zeroOffset');
    valuePm = meanPm - zeroPm;
    steps.push(
      `${key}: zero check read ${numberText(reading.zeroOffset, unit)}; subtracted from the mean: ${formatLength(meanPm, unit, displayStepPm)} − ${numberText(
        reading.zeroOffset,
        unit,
      )} = ${both(valuePm, unit, displayStepPm)}.`,
    );
  }
  steps.push(
    `${key}: Type A uncertainty of the mean u_A = s/√n = s/√${n} = ${uText(uA, unit)} (GUM 4.2.3).`,
    `${key}: resolution u_res = ${resolutionText}/(2√3) = ${uText(uResolution, unit)} (GUM F.2.2.1); u = √(u_A² + u_res²) = ${uText(uReadings, unit)}.`,
  );
  let u = uReadings;
  if (reading.uncertainty !== undefined) {
    const stated = picometresToMicrometres(pmOf(reading.uncertainty, unit, 'uncertainty'));
    u = combineInQuadrature([uA, uResolution, stated]);
    steps.push(
      `${key}: stated standard uncertainty ${uText(stated, unit)} combined in quadrature: u = √(u_A² + u_res² + u_stated²) = ${uText(u, unit)} (GUM eq. 10).`,
    );
  }
  return { key, kind: 'repeated', unit, valuePm, standardUncertaintyUm: u, displayStepPm, steps };
}

/** Evaluates one validated reading: its estimate, its standard uncertainty and the working. */
export function evaluateReading(key: string, reading: Reading): EvaluatedReading {
  switch (reading.kind) {
    case 'direct':
      return evaluateDirect(key, reading);
    case 'bracket':
      return evaluateBracket(key, reading);
    case 'repeated':
      return evaluateRepeated(key, reading);
  }
}
