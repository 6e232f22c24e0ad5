import type { FieldErrors, Resolver } from 'react-hook-form';
import type { HeardFigures } from '@/features/clips/lib/heard';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { readingInputSchema, type Reading, type ReadingInput, type ReadingKind } from '@shared/readings/reading.schema';
import { TEMPERATURE_RANGE_C } from '@shared/measure/calc.schema';
import { quantityOf, type TemperatureScale } from '@shared/measure/quantities';
import type { ReadingUnit } from '@shared/measure/record-units';
import { normaliseReadingFigures } from '@shared/readings/reading-figures';

/** The reading form as typed: every length is text, so "0.5640" keeps its places. */
export interface ReadingFormValues {
  name: string;
  /** Instrument id as the select holds it; '' = none chosen yet. */
  instrumentId: string;
  /** Part id; '' = not tied to a part. */
  partId: string;
  kind: ReadingKind;
  /**
   * The unit of figures typed without one: the instrument's until the builder picks another of
   * its quantity (thou on an inch micrometer, lbf·in on a lbf·ft wrench); '' = no instrument yet.
   */
  unit: ReadingUnit | '';
  value: string;
  passes: string;
  stops: string;
  values: { text: string }[];
  /** The part's temperature as typed, in `temperatureScale`; sent in °C. Lengths only. */
  temperatureC: string;
  /** The scale the temperature box is in: the account's choice (°F in an inch shop). */
  temperatureScale: TemperatureScale;
  material: string;
  note: string;
  takenOn: string;
}

/** The day on the bench's own calendar (the form's default "taken on"), YYYY-MM-DD. */
export function localToday(now: Date = new Date()): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/**
 * What a kind of instrument gives: feeler blades are read by bracketing (the blade that enters
 * and the one that does not); micrometers, dials, depth gauges and the rest show one indication.
 */
export function defaultKindFor(instrument: Pick<Instrument, 'kind'> | undefined): ReadingKind {
  return instrument?.kind === 'feeler-blades' ? 'bracket' : 'direct';
}

/** Whether an instrument reads lengths (no instrument yet counts as one: the form starts as it always has). */
export function readsLength(instrument: Pick<Instrument, 'unit'> | undefined): boolean {
  return instrument === undefined || quantityOf(instrument.unit) === 'length';
}

/** The ways of reading an instrument offers: a feeler bracket only for one that reads lengths. */
export function kindsFor(instrument: Pick<Instrument, 'unit'> | undefined): readonly ReadingKind[] {
  return readsLength(instrument) ? ['direct', 'bracket', 'repeated'] : ['direct', 'repeated'];
}

/**
 * The unit the form shows after choosing `instrument`: the one already chosen when it is of the
 * instrument's quantity and was picked by hand, else the instrument's own.
 */
export function unitAfterChoosing(instrument: Pick<Instrument, 'unit'> | undefined, current: ReadingUnit | '', pickedByHand: boolean): ReadingUnit | '' {
  if (!instrument) return current;
  if (pickedByHand && current !== '' && quantityOf(current) === quantityOf(instrument.unit)) return current;
  return instrument.unit;
}

/** The instrument and part last used for a reading on one clip, as this browser keeps them. */
export interface ClipChoices {
  instrumentId: number;
  /** null = the reading was not tied to a part. */
  partId: number | null;
}

const choicesKey = (clipId: number) => `benchproof.reading-choices.clip.${clipId}`;

/** What this browser remembers for the clip; null when nothing (or storage is off or garbled). */
export function readClipChoices(clipId: number): ClipChoices | null {
  try {
    const raw = window.localStorage.getItem(choicesKey(clipId));
    if (!raw) return null;
    const parsed = JSON.parse(raw) as Partial<ClipChoices> | null;
    if (!parsed || !Number.isInteger(parsed.instrumentId)) return null;
    return { instrumentId: parsed.instrumentId!, partId: Number.isInteger(parsed.partId) ? parsed.partId! : null };
  } catch {
    return null;
  }
}

/** Remembers the instrument and part of a reading just saved on the clip. */
export function writeClipChoices(clipId: number, choices: ClipChoices): void {
  try {
    window.localStorage.setItem(choicesKey(clipId), JSON.stringify(choices));
  } catch {
    // Storage off or full: the form falls back to the clip's saved readings.
  }
}

/**
 * The instrument and part a new reading on a clip starts with: what was last used on this clip
 * (this browser's memory, else the clip's latest saved reading), kept only while that instrument
 * is still usable and that part still in the build; else the first instrument, and the build's
 * only part when it has exactly one.
 */
export function startingChoices(args: {
  clipId: number;
  instruments: readonly Pick<Instrument, 'id'>[];
  partIds: readonly number[];
  remembered: ClipChoices | null;
  readings: readonly Pick<Reading, 'id' | 'clipId' | 'instrumentId' | 'partId'>[];
}): { instrumentId: number | null; partId: number | null } {
  const { clipId, instruments, partIds, remembered, readings } = args;
  const latest = readings.filter((r) => r.clipId === clipId).reduce<(typeof readings)[number] | null>((a, r) => (a === null || r.id > a.id ? r : a), null);
  const last = remembered ?? (latest ? { instrumentId: latest.instrumentId, partId: latest.partId } : null);
  const usable = (id: number | undefined) => id !== undefined && instruments.some((i) => i.id === id);
  const instrumentId = last && usable(last.instrumentId) ? last.instrumentId : (instruments[0]?.id ?? null);
  const onlyPart = partIds.length === 1 ? partIds[0]! : null;
  const partId = last && (last.partId === null || partIds.includes(last.partId)) ? last.partId : onlyPart;
  return { instrumentId, partId };
}

/** A fresh form for a reading taken today with `instrument`, named `name` (the moment's label, say). */
export function blankReadingForm(instrument: Instrument | undefined, partId: number | null, name = '', temperatureScale: TemperatureScale = 'degC'): ReadingFormValues {
  return {
    name,
    instrumentId: instrument ? String(instrument.id) : '',
    partId: partId === null ? '' : String(partId),
    kind: defaultKindFor(instrument),
    unit: instrument ? instrument.unit : '',
    value: '',
    passes: '',
    stops: '',
    values: [{ text: '' }, { text: '' }, { text: '' }],
    temperatureC: '',
    temperatureScale,
    material: '',
    note: '',
    takenOn: localToday(),
  };
}

/**
 * The instrument a form filled in from what was heard starts with: `start` (the clip's last, or
 * the first) when it reads the heard figure's quantity, else the first that does; for a feeler
 * bracket, feeler blades when the register has them. `start` when none reads that quantity (the
 * form then says why the figure does not read).
 */
export function instrumentForHeard<I extends Pick<Instrument, 'id' | 'kind' | 'unit'>>(heard: Pick<HeardFigures, 'kind' | 'unit'>, instruments: readonly I[], start: I | undefined): I | undefined {
  const quantity = quantityOf(heard.unit);
  const reads = (i: I) => quantityOf(i.unit) === quantity;
  if (heard.kind === 'bracket') {
    const blades = (i: I) => i.kind === 'feeler-blades' && reads(i);
    if (start && blades(start)) return start;
    const any = instruments.find(blades);
    if (any) return any;
  }
  if (start && reads(start)) return start;
  return instruments.find(reads) ?? start;
}

/** A fresh form with what was heard in it: the way it was read and each figure as text with its unit ("564.2 thou"). */
export function withHeardFigures(values: ReadingFormValues, heard: HeardFigures): ReadingFormValues {
  if (heard.kind === 'bracket') return { ...values, kind: 'bracket', passes: heard.passes ?? '', stops: heard.stops ?? '' };
  return { ...values, kind: 'direct', value: heard.value ?? '' };
}

/** The figures the chosen kind uses, with their unit, as the API and `normaliseReadingFigures` take them. */
export function figuresOf(values: Pick<ReadingFormValues, 'kind' | 'value' | 'passes' | 'stops' | 'values'> & { unit?: ReadingUnit | '' }) {
  const unit = values.unit ? { unit: values.unit } : {};
  if (values.kind === 'direct') return { kind: values.kind, ...unit, value: values.value } as const;
  if (values.kind === 'bracket') return { kind: values.kind, ...unit, passes: values.passes, stops: values.stops } as const;
  return { kind: values.kind, ...unit, values: values.values.map((v) => v.text).filter((t) => t.trim() !== '') } as const;
}

/** A temperature box: '' = none; anything else must be a number (else it is sent as text and refused by name). */
/**
 * The temperature typed, in °C as the API takes it: °F is converted, t/°C = (t/°F − 32) × 5/9
 * (NIST SP 811 B.8), to a thousandth of a degree, finer than any bench thermometer reads.
 */
export function temperatureOf(text: string, scale: TemperatureScale = 'degC'): number | null | string {
  const trimmed = text.trim().replace(/^[−–]/, '-');
  if (!trimmed) return null;
  const n = Number(trimmed);
  if (!Number.isFinite(n)) return trimmed;
  return scale === 'degF' ? Math.round(((n - 32) * 5 * 1000) / 9) / 1000 : n;
}

/** The range the API takes, in the scale the box is in, for its messages. */
function temperatureRangeText(scale: TemperatureScale): string {
  if (scale === 'degC') return `${TEMPERATURE_RANGE_C.min} to ${TEMPERATURE_RANGE_C.max} °C`;
  const f = (c: number) => Math.round((c * 9) / 5 + 32);
  return `${f(TEMPERATURE_RANGE_C.min)} to ${f(TEMPERATURE_RANGE_C.max)} °F`;
}

/**
 * The body of POST /api/builds/:buildId/readings for what was typed at `momentId`. The part's
 * temperature and material go with lengths only (the form hides them for other quantities, so
 * whatever they held is not sent).
 */
export function toReadingInput(values: ReadingFormValues, momentId: number): ReadingInput {
  const length = values.unit === '' || quantityOf(values.unit) === 'length';
  return {
    momentId,
    instrumentId: Number(values.instrumentId),
    partId: values.partId ? Number(values.partId) : null,
    name: values.name,
    ...figuresOf(values),
    // A non-number is passed through so the schema names the field; the type only admits numbers.
    temperatureC: length ? (temperatureOf(values.temperatureC, values.temperatureScale) as number | null) : null,
    material: length ? values.material || null : null,
    note: values.note,
    takenOn: values.takenOn,
  };
}

/**
 * A field path of the API ("values.1") as the form names it ("values.3.text"): empty value
 * boxes are not sent, so the API's index counts only the filled ones.
 */
export function formPathOf(apiPath: string, values?: Pick<ReadingFormValues, 'values'>): string {
  if (apiPath === 'values') return 'values.root';
  const repeated = /^values\.(\d+)/.exec(apiPath);
  if (repeated) {
    const filled = (values?.values ?? []).flatMap((v, i) => (v.text.trim() === '' ? [] : [i]));
    return `values.${filled[Number(repeated[1])] ?? repeated[1]}.text`;
  }
  if (apiPath === 'momentId') return 'root.moment';
  return apiPath;
}

/** An issue on a path of the form; '' = about the whole reading. */
export interface FormIssue {
  path: string;
  message: string;
}

/**
 * Everything wrong with what was typed, by field: the server's own schema first, then the
 * figures against the instrument (unit, sign, bracket order), the same checks the server runs.
 */
export function readingFormIssues(values: ReadingFormValues, instruments: readonly Instrument[]): FormIssue[] {
  const issues: FormIssue[] = [];
  const seen = new Set<string>();
  const add = (path: string, message: string) => {
    if (seen.has(path)) return;
    seen.add(path);
    issues.push({ path, message });
  };
  if (!values.instrumentId) add('instrumentId', 'choose the instrument the reading was taken with');
  // momentId 1 stands in for the moment, which the form checks on its own.
  const parsed = readingInputSchema.safeParse(toReadingInput(values, 1));
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const path = issue.path.map(String).join('.');
      // The box may be in °F: say the range in its scale.
      const message = path === 'temperatureC' ? `enter a temperature from ${temperatureRangeText(values.temperatureScale)}, or leave it empty` : issue.message;
      add(formPathOf(path, values) || 'root', message);
    }
  }
  const instrument = instruments.find((i) => String(i.id) === values.instrumentId);
  if (instrument) {
    const figures = normaliseReadingFigures(figuresOf(values), instrument);
    if (!figures.ok) for (const problem of figures.problems) add(formPathOf(problem.path, values), problem.message);
  }
  return issues;
}

/** react-hook-form resolver over `readingFormIssues`; the instruments are read at validation time. */
export function readingFormResolver(instruments: () => readonly Instrument[]): Resolver<ReadingFormValues> {
  return (values) => {
    const issues = readingFormIssues(values, instruments());
    if (issues.length === 0) return { values, errors: {} };
    const errors: Record<string, unknown> = {};
    for (const issue of issues) {
      const path = issue.path.split('.');
      let node = errors;
      path.forEach((segment, index) => {
        if (index === path.length - 1) {
          node[segment] ??= { type: 'validate', message: issue.message };
        } else {
          node[segment] ??= /^\d+$/.test(path[index + 1] ?? '') ? [] : {};
          node = node[segment] as Record<string, unknown>;
        }
      });
    }
    return { values: {}, errors: errors as FieldErrors<ReadingFormValues> };
  };
}
