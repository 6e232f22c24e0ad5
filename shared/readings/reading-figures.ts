/**
 * From the texts a builder types to the figures we store, and from stored figures to the
 * engine's reading. The browser form and the server run the same checks, so a refusal reads the
 * same in both places and names the same field.
 */
import type { InstrumentKind } from '../instruments/instrument.schema';
import { readingSchema as engineReadingSchema, type CalcInstrument, type Reading as EngineReading } from '../measure/calc.schema';
import type { EngineInstrument } from '../measure/instrument-map';
import { formatNumber } from '../measure/format';
import { Fraction, fractionOfDecimal, fractionToExactText, fractionToFixed } from '../measure/exact';
import { picometresToExactText } from '../measure/length-text';
import { parseDecimalText } from '../measure/decimal';
import { convertExact, quantityOf, unitTable, type AnyUnit } from '../measure/quantities';
import { parseFigureText, typedUnitOfFigure, MAX_OTHER_DECIMALS, type EnteredFigure } from '../measure/quantity-text';
import { nonNegativeQuantities, type ReadingUnit } from '../measure/record-units';
import { decimalToPicometres, isLengthUnit, maxExactDecimals, picometresPerUnit, type LengthUnit } from '../measure/units';
import type { ReadingKind, ReadingWarning } from './reading.schema';
import { bracketOrderMessage, engineMessageInFormWords, missingFigureMessages, mixedUnitsMessage, notOfKindMessage, TOO_FEW_VALUES_MESSAGE } from './reading-words';

/** A unit's symbol as a refusal shows it. */
const symbolOf = (unit: AnyUnit) => unitTable[unit].symbol || 'no unit';

/** A reading's figures as stored: decimal text in `unit`, and the texts exactly as typed. */
export interface ReadingFigures {
  unit: ReadingUnit;
  value: string | null;
  passes: string | null;
  stops: string | null;
  values: string[] | null;
  entered: Record<string, string | string[]>;
}

/** The figures, or every problem found, each naming its field (`value`, `stops`, `values.2`). */
export type FiguresResult = { ok: true; figures: ReadingFigures } | { ok: false; problems: { path: string; message: string }[] };

/**
 * Kinds that show a deviation from a setting rather than a size, so a reading below zero is
 * real: the dial of a test indicator or a bore gauge set to a master reads either side of zero.
 */
export const deviationKinds: ReadonlySet<InstrumentKind> = new Set(['dial-test-indicator', 'dial-bore-gauge']);

type FigureField = 'value' | 'passes' | 'stops' | 'values';

const fieldsOfKind: Readonly<Record<ReadingKind, readonly FigureField[]>> = {
  direct: ['value'],
  bracket: ['passes', 'stops'],
  repeated: ['values'],
};

/** The unit typed in the text, if any (parsing it without a default unit succeeds). */
function typedUnitOf(text: string): AnyUnit | null {
  return typedUnitOfFigure(text);
}

/**
 * Texts as typed → decimal text in one unit. The reading's unit is the unit typed in the texts
 * (all must agree), else input.unit, else the instrument's. Refuses, naming the field: a unit
 * the engine cannot read, texts in different units, a negative length (except from a dial test
 * indicator or dial bore gauge, which show deviations), a feeler bracket whose "does not enter"
 * blade is not thicker than the one that enters, and anything the engine's own reading schema
 * refuses. Messages use the form's words; paths keep the API's field names.
 */
export function normaliseReadingFigures(
  input: { kind: ReadingKind; unit?: ReadingUnit; value?: string; passes?: string; stops?: string; values?: string[] },
  instrument: { unit: ReadingUnit; kind: InstrumentKind },
): FiguresResult {
  const problems: { path: string; message: string }[] = [];
  const texts: { path: string; field: FigureField; text: string }[] = [];
  for (const field of fieldsOfKind[input.kind]) {
    const sent = input[field];
    if (sent === undefined) {
      problems.push({ path: field, message: missingFigureMessages[field] });
    } else if (Array.isArray(sent)) {
      if (sent.length < 2) problems.push({ path: field, message: TOO_FEW_VALUES_MESSAGE });
      sent.forEach((text, i) => texts.push({ path: `${field}.${i}`, field, text }));
    } else {
      texts.push({ path: field, field, text: sent });
    }
  }
  for (const field of ['value', 'passes', 'stops', 'values'] as const) {
    if (!fieldsOfKind[input.kind].includes(field) && input[field] !== undefined) {
      problems.push({ path: field, message: notOfKindMessage(input.kind, field) });
    }
  }

  // What the instrument measures: every figure of its readings is of that quantity.
  const quantity = quantityOf(instrument.unit);
  if (input.kind === 'bracket' && quantity !== 'length') {
    problems.push({ path: 'kind', message: 'a feeler bracket measures a gap: this instrument does not read a length, so log one indication or repeated values' });
  }
  // First pass: which units were typed. Unreadable texts are reported here, once.
  const fallback: ReadingUnit = input.unit !== undefined && quantityOf(input.unit) === quantity ? input.unit : instrument.unit;
  if (input.unit !== undefined && quantityOf(input.unit) !== quantity) {
    problems.push({ path: 'unit', message: `${unitTable[input.unit].name} is not what this instrument reads: it reads ${quantity} (${symbolOf(instrument.unit)})` });
  }
  let typed: { unit: ReadingUnit; path: string } | null = null;
  const readable: typeof texts = [];
  for (const t of texts) {
    const parsed = parseFigureText(t.text, { defaultUnit: fallback, quantity });
    if (!parsed.ok) {
      problems.push({ path: t.path, message: parsed.message });
      continue;
    }
    const own = typedUnitOf(t.text) as ReadingUnit | null;
    if (own !== null) {
      if (typed === null) typed = { unit: own, path: t.path };
      else if (typed.unit !== own) {
        problems.push({ path: t.path, message: mixedUnitsMessage(input.kind, symbolOf(own), typed.path, symbolOf(typed.unit)) });
        continue;
      }
    }
    readable.push(t);
  }
  const unit: ReadingUnit = typed?.unit ?? fallback;

  // Second pass: every text read in the reading's unit (a text without a unit takes it).
  const lengths = new Map<string, EnteredFigure>();
  for (const t of readable) {
    const parsed = parseFigureText(t.text, { defaultUnit: unit, quantity });
    if (!parsed.ok) {
      problems.push({ path: t.path, message: parsed.message });
      continue;
    }
    const figure = parsed.figure;
    if (figure.value.s < 0n && figure.value.n !== 0n) {
      if (input.kind === 'bracket') {
        problems.push({ path: t.path, message: 'a feeler blade cannot be thinner than nothing; enter its thickness as marked' });
        continue;
      }
      if (quantity === 'length' && !deviationKinds.has(instrument.kind)) {
        problems.push({
          path: t.path,
          message: 'a length cannot be negative: enter it without the minus sign (only a dial test indicator or a dial bore gauge reads below zero)',
        });
        continue;
      }
      if (quantity !== 'length' && nonNegativeQuantities.has(quantity)) {
        problems.push({ path: t.path, message: `a ${quantity} cannot be negative: enter it without the minus sign` });
        continue;
      }
    }
    lengths.set(t.path, figure);
  }

  if (input.kind === 'bracket') {
    const passes = lengths.get('passes');
    const stops = lengths.get('stops');
    if (passes && stops && stops.value.lte(passes.value)) {
      problems.push({ path: 'stops', message: bracketOrderMessage(`${passes.text} ${symbolOf(unit)}`, `${stops.text} ${symbolOf(unit)}`) });
    }
  }
  if (problems.length) return { ok: false, problems };

  const textAt = (path: string) => lengths.get(path)!.text;
  const figures: ReadingFigures = {
    unit,
    value: input.kind === 'direct' ? textAt('value') : null,
    passes: input.kind === 'bracket' ? textAt('passes') : null,
    stops: input.kind === 'bracket' ? textAt('stops') : null,
    values: input.kind === 'repeated' ? (input.values ?? []).map((_, i) => textAt(`values.${i}`)) : null,
    entered: {},
  };
  for (const field of fieldsOfKind[input.kind]) figures.entered[field] = input[field] as string | string[];

  const engineProblems = engineReadingProblems(bareEngineReading(input.kind, figures));
  return engineProblems.length ? { ok: false, problems: engineProblems } : { ok: true, figures };
}

/** The engine's field names are ours except for a few; list positions stay as they are. */
function fieldPathOf(path: readonly PropertyKey[]): string {
  const [head, ...rest] = path.map(String);
  const ours: Record<string, string> = { resolution: 'instrumentId', uncertainty: 'instrumentId', zeroOffset: 'instrumentId' };
  return [ours[head ?? ''] ?? head ?? 'value', ...rest].join('.');
}

function bareEngineReading(kind: ReadingKind, f: Pick<ReadingFigures, 'unit' | 'value' | 'passes' | 'stops' | 'values'>): EngineReading {
  switch (kind) {
    case 'direct':
      return { kind, value: f.value ?? '', unit: f.unit };
    case 'bracket':
      // Only lengths come here: a bracket of another quantity is refused before.
      return { kind, passes: f.passes ?? '', stops: f.stops ?? '', unit: f.unit as LengthUnit };
    case 'repeated':
      return { kind, values: f.values ?? [], unit: f.unit };
  }
}

/** Exact picometres of stored decimal text in `unit` (NUMERIC text from the database). */
function pmOfText(text: string, unit: LengthUnit): bigint | null {
  const decimal = parseDecimalText(text.trim());
  return decimal ? decimalToPicometres(decimal, unit) : null;
}

/**
 * A step or offset (a difference: no °C/°F offset) moved into `unit`: exact when it can be, else
 * rounded (half away from zero) to the unit's finest exact place (lengths) or to 12 places, and
 * never to zero for a step that must be positive. Null across quantities or for unreadable text.
 */
function convertInto(
  text: string,
  from: AnyUnit,
  to: AnyUnit,
  opts: { positive?: boolean } = {},
): { text: string; exact: boolean; shownFrom: string; shownTo: string } | null {
  if (quantityOf(from) !== quantityOf(to)) return null;
  const shown = (t: string, u: AnyUnit) => `${t} ${symbolOf(u)}`;
  if (isLengthUnit(from) && isLengthUnit(to)) {
    const pm = pmOfText(text, from);
    if (pm === null) return null;
    const exactText = picometresToExactText(pm, to);
    const places = maxExactDecimals[to];
    let out = exactText ?? formatNumber(pm, to, places).replace('−', '-');
    if (opts.positive && pmOfText(out, to) === 0n) out = formatNumber(picometresPerUnit[to] / 10n ** BigInt(places), to, places);
    return { text: out, exact: exactText !== null, shownFrom: shown(text.trim(), from), shownTo: shown(out, to) };
  }
  const decimal = parseDecimalText(text.trim());
  if (!decimal) return null;
  const value = from === to ? fractionOfDecimal(decimal) : convertExact(fractionOfDecimal(decimal), from, to, { difference: true });
  const exactText = fractionToExactText(value);
  const fits = exactText !== null && (exactText.split('.')[1]?.length ?? 0) <= MAX_OTHER_DECIMALS;
  let out = fits ? exactText : fractionToFixed(value, MAX_OTHER_DECIMALS, { minus: '-' }).replace(/0+$/, '').replace(/\.$/, '');
  if (opts.positive && new Fraction(out).n === 0n) out = `0.${'0'.repeat(MAX_OTHER_DECIMALS - 1)}1`;
  return { text: out, exact: fits, shownFrom: shown(text.trim(), from), shownTo: shown(out, to) };
}

/** What the register holds of an instrument that the engine needs. */
export interface RegisterInstrument {
  id?: number;
  unit: ReadingUnit;
  kind: InstrumentKind;
  resolution: string;
  statedUncertainty: string | null;
  calibrationUncertainty?: string | null;
  calibrationCoverageFactor?: number | null;
  maxPermissibleError?: string | null;
  settingStandardUncertainty?: string | null;
  settingStandardCoverageFactor?: number | null;
}

/**
 * The engine's entry for a register instrument with a calibration, a maximum permissible error
 * or a setting standard, named `i<id>`; null when it has none of them (or no id). Every reading
 * taken with it names it, so its components are one input shared by those readings.
 */
export function engineInstrumentOf(instrument: RegisterInstrument): EngineInstrument | null {
  if (instrument.id === undefined) return null;
  const { unit } = instrument;
  const entry: CalcInstrument = {
    ...(instrument.calibrationUncertainty != null &&
      instrument.calibrationCoverageFactor != null && {
        calibration: { expandedUncertainty: instrument.calibrationUncertainty, coverageFactor: instrument.calibrationCoverageFactor, unit },
      }),
    ...(instrument.maxPermissibleError != null && { maxPermissibleError: { value: instrument.maxPermissibleError, unit } }),
    ...(instrument.settingStandardUncertainty != null &&
      instrument.settingStandardCoverageFactor != null && {
        settingStandard: { expandedUncertainty: instrument.settingStandardUncertainty, coverageFactor: instrument.settingStandardCoverageFactor, unit },
      }),
  };
  return Object.keys(entry).length ? { name: `i${instrument.id}`, entry } : null;
}

/**
 * The engine's own reading schema run over a built engine reading, its issues renamed to our
 * fields and told in the form's words: the instrument's figures (resolution, stated uncertainty)
 * and the day's zero offset come from the instrument, so their issues name `instrumentId`.
 */
export function engineReadingProblems(engine: EngineReading): { path: string; message: string }[] {
  const result = engineReadingSchema.safeParse(engine);
  if (result.success) return [];
  const bracket = engine.kind === 'bracket' ? { passes: String(engine.passes), stops: String(engine.stops), unit: symbolOf(engine.unit) } : undefined;
  return result.error.issues.map((issue) => ({
    path: fieldPathOf(issue.path),
    message: engineMessageInFormWords(issue.path.map(String).join('.'), issue.message, bracket),
  }));
}

/**
 * The engine's reading for stored figures: resolution and stated uncertainty from the
 * instrument (converted exactly into the reading's unit where possible, else rounded to the
 * unit's finest exact place with a 'resolution-converted' warning), the day's zero offset
 * (converted likewise). A bracket takes none of them: the blades' marked sizes are the figures.
 */
export function toEngineReading(
  stored: ReadingFigures & { kind: ReadingKind; temperatureC: number | null; material: string | null },
  instrument: RegisterInstrument,
  zero: { offset: string; unit: ReadingUnit } | null,
): { engine: EngineReading; warnings: ReadingWarning[]; instrument: EngineInstrument | null } {
  const shared = engineInstrumentOf(instrument);
  const withInstrument = (engine: EngineReading): EngineReading => (shared ? { ...engine, instrument: shared.name } : engine);
  const warnings: ReadingWarning[] = [];
  const unit = stored.unit;
  const take = (what: string, text: string, from: AnyUnit, positive = false): string | undefined => {
    const c = convertInto(text, from, unit, { positive });
    if (!c) return undefined;
    if (!c.exact) {
      warnings.push({
        code: 'resolution-converted',
        message: `The ${what} ${c.shownFrom} has no exact value in ${symbolOf(unit)} (this reading's unit); it was rounded to ${c.shownTo}.`,
      });
    }
    return c.text;
  };

  if (stored.kind === 'bracket' && isLengthUnit(unit)) {
    return { engine: withInstrument({ kind: 'bracket', passes: stored.passes ?? '', stops: stored.stops ?? '', unit }), warnings, instrument: shared };
  }
  const resolution = take("instrument's resolution", instrument.resolution, instrument.unit, true);
  const uncertainty =
    instrument.statedUncertainty === null ? undefined : take("instrument's stated uncertainty", instrument.statedUncertainty, instrument.unit);
  const zeroOffset = zero === null ? undefined : take('zero offset', zero.offset, zero.unit);
  const extras = {
    ...(resolution !== undefined && { resolution }),
    ...(uncertainty !== undefined && { uncertainty }),
    ...(zeroOffset !== undefined && { zeroOffset }),
  };
  // The temperature goes with every kind that can be corrected, repeated readings included.
  const thermal = isLengthUnit(unit)
    ? {
        ...(stored.temperatureC !== null && stored.material !== null && { temperatureC: stored.temperatureC }),
        ...(stored.material !== null && { material: stored.material }),
      }
    : {};
  if (stored.kind === 'direct') {
    return { engine: withInstrument({ kind: 'direct', value: stored.value ?? '', unit, ...extras, ...thermal }), warnings, instrument: shared };
  }
  return { engine: withInstrument({ kind: 'repeated', values: stored.values ?? [], unit, ...extras, ...thermal }), warnings, instrument: shared };
}
